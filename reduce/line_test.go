package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Exact fakes of the geodesic package's methods, so that NewLine is tested
// with numbers known in advance.

// fakeRadii is an ellipsoid reduced to its M and N at every latitude.
type fakeRadii struct{ m, n float64 }

func (f fakeRadii) RadiusInAzimuth(_, az s1.Angle) float64 { return EulerRadius(f.m, f.n, az) }

// fakeGeodesics works on a plane of latitude and longitude with
// metresPerDegree to the degree both ways: midpoints are arithmetic means
// and the direct problem moves straight.
type fakeGeodesics struct{ err error }

const metresPerDegree = 111e3

func (f fakeGeodesics) Midpoint(a, b s2.LatLng) (s2.LatLng, error) {
	return s2.LatLng{Lat: (a.Lat + b.Lat) / 2, Lng: (a.Lng + b.Lng) / 2}, f.err
}

func (f fakeGeodesics) Direct(a s2.LatLng, az s1.Angle, d float64) (s2.LatLng, s1.Angle, error) {
	s, c := math.Sincos(float64(az))
	return s2.LatLngFromDegrees(a.Lat.Degrees()+d*c/metresPerDegree, a.Lng.Degrees()+d*s/metresPerDegree), az, nil
}

// fakeScale is a transverse Mercator-like factor growing with longitude.
type fakeScale struct{}

func (fakeScale) PointScaleFactor(p s2.LatLng) (float64, error) {
	x := p.Lng.Degrees()
	return 0.9996 * (1 + x*x*1e-4), nil
}

type fakeGeoid struct{ n float64 }

func (f fakeGeoid) Separation(s2.LatLng) (float64, error) { return f.n, nil }

// M and N of GRS80 at 45° (computed from a and f; Moritz 1980).
var grs80At45 = fakeRadii{m: 6367381.8156, n: 6388838.2901}

func TestNewLine(t *testing.T) {
	a := s2.LatLngFromDegrees(45, 1)
	b := s2.LatLngFromDegrees(45.1, 1.2)
	inv := Inverse{Distance: 19000, Azimuth1: 30 * s1.Degree, Azimuth2: 30.2 * s1.Degree}
	l, err := NewLine(a, b, inv, GridPoint{1000, 2000}, GridPoint{4000, 6000}, grs80At45, fakeGeodesics{}, fakeScale{})
	require.NoError(t, err)
	assert.InDeltaf(t, 30.1, l.Azimuth.Degrees(), 1e-12, "mean azimuth (deg)")
	assert.InDeltaf(t, EulerRadius(grs80At45.m, grs80At45.n, 30.1*s1.Degree), l.Radius, 1e-6, "radius (m)")
	assert.InDeltaf(t, 5000, l.GridDistance, 1e-9, "grid distance 3-4-5 (m)")
	assert.InDeltaf(t, 0.9996*(1+1.1*1.1*1e-4), l.Scale.Mid, 1e-15, "scale at the midpoint")
	// curvature on the grid: (1/k) ∂ln k/∂n across the line (azimuth
	// 120.1°), with ln k = ln 0.9996 + ln(1 + x²·1e-4), x the longitude in
	// degrees, ∂x/∂n = sin 120.1° / 111 km
	x := 1.1
	want := 2 * x * 1e-4 / (1 + x*x*1e-4) * math.Sin(120.1*math.Pi/180) / metresPerDegree / l.Scale.Mid
	assert.InDeltaf(t, want, l.Scale.Curvature, 1e-6*want, "curvature on the grid (1/m)")

	// Azimuth2 given as a back azimuth gives the same line direction.
	back := inv
	back.Azimuth2 += 180 * s1.Degree
	l2, err := NewLine(a, b, back, GridPoint{}, GridPoint{}, grs80At45, fakeGeodesics{}, fakeScale{})
	require.NoError(t, err)
	assert.InDeltaf(t, l.Radius, l2.Radius, 1e-6, "radius with a back azimuth (m)")

	// A line across north: 359.9° and 0.1° average to 0, not 180.
	north := Inverse{Distance: 1000, Azimuth1: 359.9 * s1.Degree, Azimuth2: 0.1 * s1.Degree}
	l3, err := NewLine(a, b, north, GridPoint{}, GridPoint{}, grs80At45, fakeGeodesics{}, fakeScale{})
	require.NoError(t, err)
	assert.InDeltaf(t, 0, math.Sin(float64(l3.Azimuth)), 1e-12, "mean azimuth across north")
	assert.InDeltaf(t, grs80At45.m, l3.Radius, 1e-3, "radius of a north-south line is M (m)")

	boom := errors.New("no midpoint")
	_, err = NewLine(a, b, inv, GridPoint{}, GridPoint{}, grs80At45, fakeGeodesics{err: boom}, fakeScale{})
	assert.ErrorIs(t, err, boom)
	_, err = NewLine(a, b, Inverse{}, GridPoint{}, GridPoint{}, grs80At45, fakeGeodesics{}, fakeScale{})
	var ie *InputError
	assert.True(t, errors.As(err, &ie), "zero control distance")

	sep, err := SeparationFromGeoid(fakeGeoid{n: -31.609}, a)
	require.NoError(t, err)
	assert.Equal(t, Separation{N: -31.609, Source: SeparationGrid}, sep)
}
