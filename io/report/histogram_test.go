package report

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The bins tile the magnitudes without gap or overlap, each value falls
// in the bin whose edges hold it, and past the first 20.48 mm a bin is at
// most 1/1024 of its value wide.
func TestHistogramBins(t *testing.T) {
	for m := 0; m < histMag-1; m++ {
		lo, w := magnitudeEdges(m)
		next, _ := magnitudeEdges(m + 1)
		require.Equal(t, lo+w, next, "bin %d ends where bin %d starts", m, m+1)
		require.Equal(t, m, magnitudeBin(lo), "the lower edge of bin %d", m)
		require.Equal(t, m, magnitudeBin(math.Nextafter(lo+w, 0)), "just below the upper edge of bin %d", m)
		if lo >= 2*histSub {
			require.LessOrEqual(t, w/lo, 1.0/histSub, "relative width of bin %d", m)
		} else {
			require.Equal(t, 1.0, w, "bin %d is 0.01 mm wide below 20.48 mm", m)
		}
	}
	assert.Equal(t, histMag-1, magnitudeBin(1e30), "beyond the range: the last bin")
	assert.Equal(t, histMag-1, magnitudeBin(math.Inf(1)))
}

// exactMedianMAD sorts v: the median and median absolute deviation by
// their definitions.
func exactMedianMAD(v []float64) (float64, float64) {
	med := func(x []float64) float64 {
		s := append([]float64(nil), x...)
		sort.Float64s(s)
		n := len(s)
		return (s[(n-1)/2] + s[n/2]) / 2
	}
	m := med(v)
	d := make([]float64, len(v))
	for i, x := range v {
		d[i] = math.Abs(x - m)
	}
	return m, med(d)
}

// The median and MAD read from the histogram are those of the sorted
// residuals within the stated bound: 0.005 mm for the median and 0.01 mm
// for the MAD (each deviation off by half a bin of the value and half a
// bin of the median) below 20 mm; 0.05 % of the value beyond.
func TestHistogramMedianMAD(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 1))
	for _, c := range []struct {
		name       string
		n          int
		centre, sd float64 // mm
		blunders   []float64
		tolMedian  float64
		tolMAD     float64
	}{
		{"odd count, a few mm", 10001, 0.4, 2, nil, 0.005, 0.01},
		{"even count, a few mm", 10000, -0.7, 1.5, nil, 0.005, 0.01},
		{"with blunders of metres", 501, 0.2, 2, []float64{258980.95, -1500, 33.4}, 0.005, 0.01},
		{"a wrong constant of half a metre", 2001, 512.3, 3, nil, 512.3 * 0.0005, 0.01 + 2*520*0.0005},
		{"two values", 2, 1.234, 0, []float64{5.678}, 0.005, 0.01},
	} {
		var h residualHistogram
		var v []float64
		for range c.n - len(c.blunders) {
			x := c.centre + c.sd*rng.NormFloat64()
			v = append(v, x)
			h.add(x)
		}
		for _, b := range c.blunders {
			v = append(v, b)
			h.add(b)
		}
		wantMed, wantMAD := exactMedianMAD(v)
		med, mad := h.medianMAD()
		assert.InDeltaf(t, wantMed, med, c.tolMedian, "%s: median, mm", c.name)
		assert.InDeltaf(t, wantMAD, mad, c.tolMAD, "%s: MAD, mm", c.name)
	}
	var empty residualHistogram
	med, mad := empty.medianMAD()
	assert.Zero(t, med)
	assert.Zero(t, mad)
}

// 1.4826 is 1/Φ⁻¹(3/4), Φ⁻¹(p) = √2 erf⁻¹(2p − 1) (the normal quantile;
// a fact of the definition): 1/0.6744897... = 1.482602...
func TestMADToSigma(t *testing.T) {
	q := math.Sqrt2 * math.Erfinv(2*0.75-1)
	assert.InDelta(t, 0.6744897501960817, q, 1e-12, "Φ⁻¹(3/4), e.g. Abramowitz & Stegun table 26.5 [memory]")
	assert.InDelta(t, 1/q, madToSigma, 5e-5, "the MAD's consistency factor for the normal")

	// On normal residuals it estimates σ: its own standard error is
	// about 1.17σ/√n (Rousseeuw & Croux 1993: 37 % efficiency) [memory],
	// 0.4 % here; the test allows 2 %.
	rng := rand.New(rand.NewPCG(13, 2))
	var h residualHistogram
	for range 100000 {
		h.add(3 * rng.NormFloat64())
	}
	_, mad := h.medianMAD()
	assert.InDelta(t, 3, madToSigma*mad, 0.06, "robust σ of N(0, 3 mm), mm")
}
