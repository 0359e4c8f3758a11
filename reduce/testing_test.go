package reduce

import (
	"bufio"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestTwoSidedAlpha checks P(|w| > c) at the quantiles printed in tables
// of the standard normal distribution (Φ⁻¹(0.975) = 1.959964,
// Φ⁻¹(0.9995) = 3.290527; common practice, recalled from the tables).
func TestTwoSidedAlpha(t *testing.T) {
	assert.InDelta(t, 0.05, TwoSidedAlpha(1.959964), 1e-7, "c = 1.96")
	assert.InDelta(t, 0.001, TwoSidedAlpha(3.290527), 1e-9, "c = 3.29")
	assert.InDelta(t, 0.001, TwoSidedAlpha(DefaultCriticalValue), 1e-15, "the default critical value")
}

// TestSidakCritical checks the job-wide critical values against Python's
// inverse normal (testdata/reduce/sidak_python.txt, its command in its
// header).
func TestSidakCritical(t *testing.T) {
	f, err := os.Open("../testdata/reduce/sidak_python.txt")
	require.NoError(t, err)
	defer f.Close()
	sc := bufio.NewScanner(f)
	cases := 0
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		v := strings.Fields(line)
		require.Len(t, v, 3, line)
		alpha, err1 := strconv.ParseFloat(v[0], 64)
		n, err2 := strconv.Atoi(v[1])
		want, err3 := strconv.ParseFloat(v[2], 64)
		require.NoError(t, err1)
		require.NoError(t, err2)
		require.NoError(t, err3)
		got, err := SidakCritical(alpha, n)
		require.NoError(t, err)
		assert.InDeltaf(t, want, got, 1e-9, "Šidák α %g n %d", alpha, n)
		// By construction the n tests at c hold α for the job.
		assert.InDeltaf(t, alpha, 1-math.Pow(1-TwoSidedAlpha(got), float64(n)), 1e-9*alpha+1e-15, "job-wide α back, α %g n %d", alpha, n)
		cases++
	}
	require.NoError(t, sc.Err())
	require.GreaterOrEqual(t, cases, 5)

	for _, bad := range []struct {
		alpha float64
		n     int
	}{{0, 10}, {1, 10}, {math.NaN(), 10}, {0.05, 0}} {
		_, err := SidakCritical(bad.alpha, bad.n)
		var ie *InputError
		assert.ErrorAsf(t, err, &ie, "α %v n %d", bad.alpha, bad.n)
	}
}

// TestChiSquareQuantile checks against printed tables of the χ²
// distribution (e.g. NIST/SEMATECH e-Handbook of Statistical Methods,
// §1.3.6.7.4; values recalled from such tables, [memory]), and against
// the Wilson–Hilferty approximation for many degrees of freedom, whose
// relative error falls like 1/dof (Wilson & Hilferty 1931, PNAS 17:684).
func TestChiSquareQuantile(t *testing.T) {
	for _, c := range []struct {
		p    float64
		dof  int
		want float64
	}{
		{0.025, 10, 3.247}, {0.975, 10, 20.483},
		{0.025, 100, 74.222}, {0.975, 100, 129.561},
		{0.95, 1, 3.841}, {0.999, 1, 10.828},
	} {
		assert.InDeltaf(t, c.want, ChiSquareQuantile(c.p, c.dof), 0.0006, "χ²(%d; %g)", c.dof, c.p)
	}
	for _, dof := range []int{10000, 2000000} {
		for _, p := range []float64{0.025, 0.975} {
			z := math.Sqrt2 * math.Erfinv(2*p-1)
			n := float64(dof)
			wh := n * math.Pow(1-2/(9*n)+z*math.Sqrt(2/(9*n)), 3)
			assert.InEpsilonf(t, wh, ChiSquareQuantile(p, dof), 1e-7, "χ²(%d; %g) against Wilson–Hilferty", dof, p)
		}
	}
}

func TestGlobalTest(t *testing.T) {
	// 100 residuals whose squares sum to 100: the variance factor is 1.
	g, err := GlobalTest(100, 100, 0.05)
	require.NoError(t, err)
	assert.Equal(t, GlobalPass, g.Outcome)
	assert.Equal(t, 1.0, g.VarianceFactor)
	// Bounds from the χ² table above: 74.222/100 and 129.561/100.
	assert.InDelta(t, 0.74222, g.Lower, 6e-6, "lower bound")
	assert.InDelta(t, 1.29561, g.Upper, 6e-6, "upper bound")
	// σ understated by 30 %: w grows by 1/0.7, Σw² by 2.04.
	g, err = GlobalTest(100/(0.7*0.7), 100, 0.05)
	require.NoError(t, err)
	assert.Equal(t, GlobalTooLarge, g.Outcome)
	g, err = GlobalTest(60, 100, 0.05)
	require.NoError(t, err)
	assert.Equal(t, GlobalTooSmall, g.Outcome)

	for _, bad := range []struct {
		sum   float64
		n     int
		alpha float64
	}{{1, 0, 0.05}, {-1, 10, 0.05}, {math.Inf(1), 10, 0.05}, {math.NaN(), 10, 0.05}, {1, 10, 0}} {
		_, err := GlobalTest(bad.sum, bad.n, bad.alpha)
		var ie *InputError
		assert.ErrorAsf(t, err, &ie, "%+v", bad)
	}
}
