package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// 2 mm + 2 ppm at 1500 m: 5.00 mm linear, 3.61 mm RSS (common practice;
// REFERENCES.md §6).
func TestDistanceSpec(t *testing.T) {
	lin := DistanceSpec{Constant: 2 * mm, PPM: 2, Rule: Linear, Level: OneSigma}
	v, err := lin.At(1500)
	require.NoError(t, err)
	assert.InDeltaf(t, 5.00*mm, v, 0.005*mm, "2 mm + 2 ppm linear at 1500 m (m)")
	rss := lin
	rss.Rule = RSS
	v, err = rss.At(1500)
	require.NoError(t, err)
	assert.InDeltaf(t, 3.61*mm, v, 0.005*mm, "2 mm + 2 ppm RSS at 1500 m (m)")

	// A 95 % figure is 1.96 σ (the normal distribution's two-sided 95 %
	// quantile, 1.959964).
	p95 := lin
	p95.Level = Percent95
	sg, err := p95.Sigma(1500)
	require.NoError(t, err)
	assert.InDeltaf(t, 5.00*mm/1.959964, sg, 1e-6*mm, "95 %% figure as one sigma (m)")
	assert.InDeltaf(t, 0.95, math.Erf(z95/math.Sqrt2), 1e-15, "z95 is the 95 %% quantile")

	var ie *InputError
	_, err = DistanceSpec{}.At(100)
	assert.True(t, errors.As(err, &ie), "the zero DistanceSpec is refused")
	_, err = DistanceSpec{Constant: math.NaN(), Rule: Linear, Level: OneSigma}.At(100)
	assert.True(t, errors.As(err, &ie), "NaN constant")
}

func TestDistanceUncertainty(t *testing.T) {
	spec := DistanceSpec{Constant: 1 * mm, PPM: 1.5, Rule: RSS, Level: OneSigma}
	b := Budget{Instrument: spec, CentringInstrument: 0.6 * mm, CentringTarget: 0.8 * mm, HeightA: 5 * mm, HeightB: 5 * mm}
	l := sphereLine{R: meanRadius, s: 2000, hA: 100, hB: 300}
	g, err := EllipsoidDistance(l.slope(), l.hA, l.hB, Section{Radius: l.R})
	require.NoError(t, err)
	u, err := DistanceUncertainty(b, g)
	require.NoError(t, err)
	inst, _ := spec.At(g.Slope)
	assert.InDeltaf(t, inst, u.Instrument, 1e-12, "instrument term (m)")
	assert.InDeltaf(t, 1.0*mm, u.Centring, 1e-12, "centring 0.6 and 0.8 mm (m)")
	// ∂c/∂Δh = −Δh/c: a 200 m rise over 2 km, 7.07 mm on the height
	// difference, gives 0.707 mm.
	assert.InDeltaf(t, 200/g.Chord*math.Hypot(5*mm, 5*mm), u.HeightDifference, 1e-9, "height-difference term (m)")
	// numerical check of the derivative through EllipsoidDistance
	g2, err := EllipsoidDistance(l.slope(), l.hA, l.hB+1*mm, Section{Radius: l.R})
	require.NoError(t, err)
	assert.InDeltaf(t, math.Abs(g2.Arc-g.Arc)/(1*mm), u.HeightDifference/math.Hypot(5*mm, 5*mm), 1e-3, "∂s/∂hB against the chain")
	want := math.Sqrt(u.Instrument*u.Instrument + u.Centring*u.Centring + u.HeightDifference*u.HeightDifference + u.MeanHeight*u.MeanHeight)
	assert.InDeltaf(t, want, u.Total, 1e-12, "total (m)")

	// zenith route: a 1″ zenith error on a 1 km sight inclined 10°
	gz, err := EllipsoidDistanceFromZenith(1000, 80*s1.Degree, 100, 0.13, meanRadius)
	require.NoError(t, err)
	uz, err := DistanceUncertainty(Budget{Instrument: spec, Zenith: s1.Degree / 3600}, gz)
	require.NoError(t, err)
	gz2, err := EllipsoidDistanceFromZenith(1000, 80*s1.Degree+s1.Degree/3600, 100, 0.13, meanRadius)
	require.NoError(t, err)
	assert.InDeltaf(t, math.Abs(gz2.Arc-gz.Arc), uz.Zenith, 0.01*mm, "zenith term against the chain (m)")
}
