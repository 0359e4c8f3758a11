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

// fakeScale is a transverse Mercator-like factor growing with longitude.
type fakeScale struct{ err error }

func (f fakeScale) PointScaleFactor(p s2.LatLng) (float64, error) {
	x := p.Lng.Degrees()
	return 0.9996 * (1 + x*x*1e-4), f.err
}

type fakeGeoid struct{ n float64 }

func (f fakeGeoid) Separation(s2.LatLng) (float64, error) { return f.n, nil }

// M and N of GRS80 at 45° (computed from a and f; Moritz 1980).
var grs80At45 = fakeRadii{m: 6367381.8156, n: 6388838.2901}

// lineControl is a line's control geometry with the midpoint halfway in
// latitude and longitude, and a grid given by its ends and midpoint.
func lineControl(a, b s2.LatLng, inv Inverse, ga, gm, gb GridPoint) LineControl {
	mid := s2.LatLng{Lat: (a.Lat + b.Lat) / 2, Lng: (a.Lng + b.Lng) / 2}
	return LineControl{A: a, Mid: mid, B: b, GridA: ga, GridMid: gm, GridB: gb, Inverse: inv}
}

func TestNewLine(t *testing.T) {
	a := s2.LatLngFromDegrees(45, 1)
	b := s2.LatLngFromDegrees(45.1, 1.2)
	inv := Inverse{Distance: 19000, Azimuth1: 30 * s1.Degree, Azimuth2: 30.2 * s1.Degree}
	// the grid: A and B 5000 m apart (3-4-5), the midpoint 1 m to the right
	// of the chord's middle (the path turns left there), so the circle
	// through them has R = (c²/4 + s²)/(2s) with c = 5000, s = 1 (the
	// sagitta)
	ga, gb := GridPoint{1000, 2000}, GridPoint{4000, 6000}
	gm := GridPoint{2500 + 0.8, 4000 - 0.6}
	l, err := NewLine(lineControl(a, b, inv, ga, gm, gb), grs80At45, fakeScale{})
	require.NoError(t, err)
	assert.InDeltaf(t, 30.1, l.Azimuth.Degrees(), 1e-12, "mean azimuth (deg)")
	assert.InDeltaf(t, EulerRadius(grs80At45.m, grs80At45.n, 30.1*s1.Degree), l.Radius, 1e-6, "radius (m)")
	assert.InDeltaf(t, 5000, l.GridDistance, 1e-9, "grid distance 3-4-5 (m)")
	assert.InDeltaf(t, 0.9996*(1+1.1*1.1*1e-4), l.Scale.Mid, 1e-15, "scale at the midpoint")
	want := 2 / (2500.0*2500 + 1)
	assert.InDeltaf(t, want, l.Scale.Curvature, 1e-12*want, "curvature on the grid (1/m), turning left")
	assert.InDeltaf(t, -want, l.Reversed().Scale.Curvature, 1e-12*want, "curvature on the grid (1/m), reversed")
	straight, err := NewLine(lineControl(a, b, inv, ga, GridPoint{2500, 4000}, gb), grs80At45, fakeScale{})
	require.NoError(t, err)
	assert.Zero(t, straight.Scale.Curvature, "a straight image")

	// Azimuth2 given as a back azimuth gives the same line direction.
	back := inv
	back.Azimuth2 += 180 * s1.Degree
	l2, err := NewLine(lineControl(a, b, back, GridPoint{}, GridPoint{}, GridPoint{}), grs80At45, fakeScale{})
	require.NoError(t, err)
	assert.InDeltaf(t, l.Radius, l2.Radius, 1e-6, "radius with a back azimuth (m)")
	assert.Zero(t, l2.Scale.Curvature, "ends and midpoint in one place")

	// A line across north: 359.9° and 0.1° average to 0, not 180.
	north := Inverse{Distance: 1000, Azimuth1: 359.9 * s1.Degree, Azimuth2: 0.1 * s1.Degree}
	l3, err := NewLine(lineControl(a, b, north, GridPoint{}, GridPoint{}, GridPoint{}), grs80At45, fakeScale{})
	require.NoError(t, err)
	assert.InDeltaf(t, 0, math.Sin(float64(l3.Azimuth)), 1e-12, "mean azimuth across north")
	assert.InDeltaf(t, grs80At45.m, l3.Radius, 1e-3, "radius of a north-south line is M (m)")

	// Scale factors the caller knows are taken as given.
	known := lineControl(a, b, inv, ga, gm, gb)
	known.ScaleA, known.ScaleB = 0.9995, 1.0005
	l4, err := NewLine(known, grs80At45, fakeScale{})
	require.NoError(t, err)
	assert.Equal(t, ScaleFactors{A: 0.9995, Mid: l.Scale.Mid, B: 1.0005, Curvature: l.Scale.Curvature}, l4.Scale)

	boom := errors.New("no scale factor")
	_, err = NewLine(lineControl(a, b, inv, ga, gm, gb), grs80At45, fakeScale{err: boom})
	assert.ErrorIs(t, err, boom)
	_, err = NewLine(lineControl(a, b, Inverse{}, ga, gm, gb), grs80At45, fakeScale{})
	var ie *InputError
	assert.True(t, errors.As(err, &ie), "zero control distance")

	sep, err := SeparationFromGeoid(fakeGeoid{n: -31.609}, a)
	require.NoError(t, err)
	assert.Equal(t, Separation{N: -31.609, Source: SeparationGrid}, sep)
}
