package geodesic

import (
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
)

// Radii of curvature of GRS 80.
//   - polar radius of curvature c = a²/b = 6 399 593.6259 m: Moritz (1980)
//     Geodetic Reference System 1980, derived constants [published; memory];
//   - M and N at 45°: 6 367 381.816 m and 6 388 838.290 m [memory of textbook
//     tables, e.g. Torge & Müller; recomputed from the defining constants];
//   - M = a(1 − e²) and N = a on the equator; M = N at the pole; Euler's
//     R_α is M at α = 0 and N at α = 90° (identities).
func TestRadiiGRS80(t *testing.T) {
	e := GRS80
	assert.InDelta(t, 6399593.6259, e.MeridianRadius(90*s1.Degree), 0.1*mm, "c = M(90°), metres")
	assert.InDelta(t, 6399593.6259, e.PrimeVerticalRadius(90*s1.Degree), 0.1*mm, "c = N(90°), metres")
	assert.InDelta(t, 6367381.816, e.MeridianRadius(45*s1.Degree), 1*mm, "M(45°), metres")
	assert.InDelta(t, 6388838.290, e.PrimeVerticalRadius(45*s1.Degree), 1*mm, "N(45°), metres")
	assert.InDelta(t, 6378137*(1-e.EccentricitySquared()), e.MeridianRadius(0), 1e-6*mm, "M(0), metres")
	assert.Equal(t, 6378137.0, e.PrimeVerticalRadius(0), "N(0)")
	for lat := -90.0; lat <= 90; lat += 7.5 {
		φ := s1.Angle(lat) * s1.Degree
		assert.InDeltaf(t, e.MeridianRadius(φ), e.RadiusInAzimuth(φ, 0), 1e-6*mm, "R(α=0) = M at %v°", lat)
		assert.InDeltaf(t, e.PrimeVerticalRadius(φ), e.RadiusInAzimuth(φ, 90*s1.Degree), 1e-6*mm, "R(α=90°) = N at %v°", lat)
		assert.InDeltaf(t, e.RadiusInAzimuth(φ, 30*s1.Degree), e.RadiusInAzimuth(φ, 210*s1.Degree), 1e-6*mm, "R symmetric at %v°", lat)
		// The mean of the normal curvatures over all azimuths is the mean
		// curvature (1/M + 1/N)/2 (Euler).
		var sum float64
		const n = 360
		for i := range n {
			sum += 1 / e.RadiusInAzimuth(φ, s1.Angle(i)*s1.Degree)
		}
		assert.InDeltaf(t, (1/e.MeridianRadius(φ)+1/e.PrimeVerticalRadius(φ))/2, sum/n, 1e-20, "mean curvature at %v°, 1/metres", lat)
		assert.InDeltaf(t, math.Sqrt(e.MeridianRadius(φ)*e.PrimeVerticalRadius(φ)), e.GaussianMeanRadius(φ), 1e-6*mm, "Gaussian radius at %v°", lat)
	}
}

func TestNewEllipsoid(t *testing.T) {
	for _, tc := range []struct{ a, invF float64 }{
		{0, 298}, {-1, 298}, {math.Inf(1), 298}, {math.NaN(), 298}, {6378137, 1}, {6378137, -3}, {6378137, math.NaN()},
	} {
		_, err := NewEllipsoid(tc.a, tc.invF)
		assert.Error(t, err, "a %v, 1/f %v", tc.a, tc.invF)
	}
	s, err := NewEllipsoid(6371000, 0)
	assert.NoError(t, err)
	assert.InDelta(t, 6371000.0, s.RadiusInAzimuth(33*s1.Degree, 71*s1.Degree), 1e-6*mm, "a sphere's radius is a, metres")
	assert.InDelta(t, 6356752.314140, GRS80.SemiMinorAxis(), 1e-6, "GRS 80 b, metres (Moritz 1980)")
	assert.InDelta(t, 6356752.314245, WGS84.SemiMinorAxis(), 1e-6, "WGS 84 b, metres (NIMA TR8350.2)")
	assert.False(t, Ellipsoid{}.Valid())
	assert.Contains(t, WGS84.String(), "298.257223563")
}
