package report

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// lines makes n lines from 100 m to 10 km whose residuals follow
// constant + scale·d plus noise of the given σ.
func fitLines(n int, constantMM, scalePPM, sigmaMM float64, seed uint64) []Line {
	rng := rand.New(rand.NewPCG(seed, 7))
	out := make([]Line, n)
	for i := range out {
		d := 100 + rng.Float64()*9900
		out[i] = Line{Geodesic: d, SigmaMM: sigmaMM, ResidualMM: constantMM + scalePPM*d/1000 + rng.NormFloat64()*sigmaMM}
	}
	return out
}

// A wrong prism constant (−30 mm) and a wrong ppm (+4 ppm) are found by
// the fit, to within 3σ of its own estimate; a few gross blunders do not
// bend it.
func TestFitFindsConstantAndScale(t *testing.T) {
	lines := fitLines(200, -30, 4, 2, 1)
	lines[3].ResidualMM += 500
	lines[77].ResidualMM -= 900
	lines[150].ResidualMM += 60
	f := FitResiduals(lines, 3.29)
	require.NotNil(t, f)
	assert.Equal(t, 197, f.N, "the three blunders are left out")
	assert.InDelta(t, -30, f.ConstantMM, 3*f.ConstantSigma)
	assert.InDelta(t, 4, f.ScalePPM, 3*f.ScaleSigma)
	assert.True(t, f.ConstantSignificant)
	assert.True(t, f.ScaleSignificant)
	assert.InDelta(t, 1, f.VarianceFactor, 0.3, "the noise is as its σ says")

	clean := FitResiduals(fitLines(50, 0, 0, 2, 2), 3.29)
	require.NotNil(t, clean)
	assert.False(t, clean.ConstantSignificant)
	assert.False(t, clean.ScaleSignificant)

	assert.Nil(t, FitResiduals(fitLines(2, 0, 0, 2, 3), 3.29), "two lines do not make a fit")
	same := fitLines(10, 0, 0, 2, 4)
	for i := range same {
		same[i].Geodesic = 500
	}
	assert.Nil(t, FitResiduals(same, 3.29), "lines of one length cannot separate constant from scale")
}

// Many blunders cost few rounds: 20 % of 100 000 lines off by metres.
func TestFitWithManyBlundersIsQuick(t *testing.T) {
	lines := fitLines(100000, 1, 0.5, 2, 5)
	for i := 0; i < len(lines); i += 5 {
		lines[i].ResidualMM += 1000 + float64(i%97)*50
	}
	f := FitResiduals(lines, 3.29)
	require.NotNil(t, f)
	assert.InDelta(t, 80000, f.N, 200)
	assert.InDelta(t, 1, f.ConstantMM, 3*f.ConstantSigma)
}
