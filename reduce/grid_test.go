package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Simpson's rule is exact for a scale factor quadratic along the line, as
// the transverse Mercator's is to first order in its easting offset,
// k ≈ k0 (1 + x²/(2 k0² R²)) (Snyder 1987, USGS PP 1395, eq. 8-11 to first
// order [memory]); the mean of the two ends is not (NOAA Manual NOS NGS 5,
// which recommends the Simpson factor).
func TestSimpsonLineScaleFactor(t *testing.T) {
	const k0, r = 0.9996, meanRadius
	k := func(x float64) float64 { return k0 * (1 + x*x/(2*k0*k0*r*r)) }
	// a 40 km east-west line from 200 km to 240 km east of the central meridian
	x1, x2 := 200e3, 240e3
	exact := k0 * (1 + (x2*x2*x2-x1*x1*x1)/(3*(x2-x1))/(2*k0*k0*r*r)) // mean of k over [x1, x2]
	g, err := GridDistance(40000, ScaleFactors{A: k(x1), Mid: k((x1 + x2) / 2), B: k(x2)}, 0, r)
	require.NoError(t, err)
	assert.InDeltaf(t, exact, g.LineScale, 1e-15, "Simpson line scale factor")
	assert.InDeltaf(t, 40000*exact, g.GridDistance, 1e-6*mm, "grid distance (m)")
	endsMean := (k(x1) + k(x2)) / 2
	assert.Greaterf(t, math.Abs(endsMean-exact)*40000, 0.5*mm, "the mean of the end factors is off by over 0.5 mm on this line")
}

// Elevation factor R/(R + h): 1 m of height is 0.157 ppm (REFERENCES.md §3);
// combined factor = grid distance / horizontal ground distance = k_line × elevation factor.
func TestElevationAndCombinedFactor(t *testing.T) {
	g0, err := GridDistance(5000, ScaleFactors{A: 1, Mid: 1, B: 1}, 0, meanRadius)
	require.NoError(t, err)
	g1, err := GridDistance(5000, ScaleFactors{A: 1, Mid: 1, B: 1}, 1, meanRadius)
	require.NoError(t, err)
	assert.InDeltaf(t, -0.157, (g1.ElevationFactor-g0.ElevationFactor)/ppm, 0.001, "elevation factor per metre (ppm)")

	g, err := GridDistance(5000, ScaleFactors{A: 0.99962, Mid: 0.99965, B: 0.99970}, 1200, meanRadius)
	require.NoError(t, err)
	assert.InDeltaf(t, g.GridDistance/g.GroundDistance, g.CombinedFactor, 1e-15, "combined factor is grid/ground")
	assert.InDeltaf(t, g.LineScale*g.ElevationFactor, g.CombinedFactor, 1e-15, "combined factor is line × elevation")
	assert.InDeltaf(t, 5000*(meanRadius+1200)/meanRadius, g.GroundDistance, 1e-9, "ground distance at the mean height (m)")
}

func TestGridRejects(t *testing.T) {
	for _, c := range []struct {
		name string
		arc  float64
		k    ScaleFactors
		h, r float64
	}{
		{"zero scale factors", 100, ScaleFactors{}, 0, meanRadius},
		{"NaN arc", math.NaN(), ScaleFactors{A: 1, Mid: 1, B: 1}, 0, meanRadius},
		{"negative arc", -1, ScaleFactors{A: 1, Mid: 1, B: 1}, 0, meanRadius},
		{"NaN height", 100, ScaleFactors{A: 1, Mid: 1, B: 1}, math.NaN(), meanRadius},
		{"zero radius", 100, ScaleFactors{A: 1, Mid: 1, B: 1}, 0, 0},
	} {
		_, err := GridDistance(c.arc, c.k, c.h, c.r)
		var ie *InputError
		assert.Truef(t, errors.As(err, &ie), "%s: want *InputError, got %v", c.name, err)
	}
}

// sinc's series agrees with math.Sin(x)/x to the last bits below its
// switch, and is 1 at 0 (the limit).
func TestSinc(t *testing.T) {
	assert.Equal(t, 1.0, sinc(0))
	for _, x := range []float64{1e-12, 1e-8, -3e-6, 1e-5, 2e-4, -9.99e-4, 1e-3, 0.1, -1} {
		assert.InEpsilon(t, math.Sin(x)/x, sinc(x), 3e-16, "x = %g", x)
	}
}
