package drift

import (
	"bufio"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestTrendAgainstSciPy checks Theil–Sen's slope, intercept and Sen's
// interval, and the Mann–Kendall S over its tie-corrected √Var(S),
// against SciPy's theilslopes and kendalltau (testdata/drift/trend.txt,
// with the command and versions in its header).
func TestTrendAgainstSciPy(t *testing.T) {
	f, err := os.Open("../../testdata/drift/trend.txt")
	require.NoError(t, err)
	defer f.Close()
	sc := bufio.NewScanner(f)
	cases := 0
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") || strings.TrimSpace(line) == "" {
			continue
		}
		fs := strings.Fields(line)
		num := func(s string) float64 {
			v, err := strconv.ParseFloat(s, 64)
			require.NoError(t, err, line)
			return v
		}
		alpha, slope, icept, lower, upper, p := num(fs[1]), num(fs[2]), num(fs[3]), num(fs[4]), num(fs[5]), num(fs[6])
		var x, y []float64
		for i, s := range fs[7:] {
			x = append(x, float64(i+1))
			y = append(y, num(s))
		}
		ts := TheilSenLine(x, y, alpha)
		require.InDelta(t, slope, ts.Slope, 1e-12, fs[0])
		require.InDelta(t, icept, ts.Intercept, 1e-12, fs[0])
		require.InDelta(t, lower, ts.Lower, 1e-12, fs[0])
		require.InDelta(t, upper, ts.Upper, 1e-12, fs[0])
		mk := MannKendallTest(y)
		z0 := float64(mk.S) / math.Sqrt(mk.VarS)
		require.InDelta(t, p, math.Erfc(math.Abs(z0)/math.Sqrt2), 1e-9, fs[0])
		require.Less(t, p, mk.P, "%s: the continuity correction makes P larger", fs[0])
		cases++
	}
	require.Equal(t, 4, cases)
}

// TestMannKendallContinuity: 1, 2, 3, 4 has S = 6, Var(S) = 4·3·13/18
// and Z = (6 − 1)/√Var(S) = 1.69842 (Gilbert 1987 §16.4's formulas,
// worked by hand); P = erfc(Z/√2) = 0.08943 (the normal table).
func TestMannKendallContinuity(t *testing.T) {
	mk := MannKendallTest([]float64{1, 2, 3, 4})
	require.Equal(t, 6, mk.S)
	require.InDelta(t, 26.0/3, mk.VarS, 1e-12)
	require.InDelta(t, 1.69842, mk.Z, 1e-5)
	require.InDelta(t, 0.08943, mk.P, 1e-5)
	down := MannKendallTest([]float64{4, 3, 2, 1})
	require.InDelta(t, -1.69842, down.Z, 1e-5)
	require.Equal(t, 1.0, MannKendallTest([]float64{1, 2}).P)
}

// TestZTwoSided: z_{0.995} = 2.5758 and z_{0.975} = 1.9600 (the normal
// table).
func TestZTwoSided(t *testing.T) {
	require.InDelta(t, 2.5758, zTwoSided(0.01), 1e-4)
	require.InDelta(t, 1.9600, zTwoSided(0.05), 1e-4)
}
