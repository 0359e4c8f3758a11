package audit

import (
	"strings"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// testVector is an invented 1.9 km vector between two marks at 50.1°N
// 8.6°E and 50.11°N 8.62°E (heights 120 and 135 m), with the control ends
// from GN7-2's closed form on WGS 84 (the test's geocentricWGS84).
func testVector() (VectorControl, r3.Vector) {
	a, b := s2.LatLngFromDegrees(50.1, 8.6), s2.LatLngFromDegrees(50.11, 8.62)
	xa, xb := geocentricWGS84(a, 120), geocentricWGS84(b, 135)
	c := VectorControl{Line: LineControl{Ellipsoid: 1800, Grid: 1799.3, LineScale: 0.9996, Radius: 6.38e6, HeightA: 120, HeightB: 135, HasHeights: true},
		A: a, B: b, StartECEF: xa, EndECEF: xb, End: b, EndHeight: 135, VectorEllipsoid: 1800, VectorGrid: 1799.3}
	return c, xb.Sub(xa)
}

func TestCheckVector(t *testing.T) {
	c, d := testVector()
	s := testSettings()
	cov := DiagonalCovariance(3*mm, 3*mm, 5*mm)
	for _, tc := range []struct {
		name   string
		delta  r3.Vector
		pass   bool
		cause  string
		height float64
	}{
		{"clean", d.Add(r3.Vector{X: 1 * mm, Y: -2 * mm, Z: 1 * mm}), true, "", 0},
		{"3 cm blunder", d.Add(Up(c.A).Cross(r3.Vector{Z: 1}).Normalize().Mul(30 * mm)), false, NoKnownCause, 0},
		{"antenna at the end", d.Add(Up(c.B).Mul(1.612)), false, "antenna height left in at the end mark (+1.612 m along its vertical): the vector is not mark to mark", 1.612},
		{"antenna at the start", d.Sub(Up(c.A).Mul(1.8)), false, "antenna height left in at the start mark (+1.800 m along its vertical): the vector is not mark to mark", 0},
		{"half a metre up is no antenna", d.Add(Up(c.B).Mul(0.5)), false, NoKnownCause, 0},
	} {
		got, err := CheckVector(Vector{Delta: tc.delta, Cov: cov}, c, s)
		require.NoError(t, err, tc.name)
		assert.Equal(t, tc.pass, got.Pass, tc.name)
		assert.Equal(t, tc.cause, got.Diagnosis.Cause, tc.name)
		if strings.HasPrefix(tc.cause, "antenna") {
			assert.Equal(t, StageAntenna, got.Diagnosis.Stage, tc.name)
		} else {
			assert.Empty(t, got.Diagnosis.Stage, tc.name)
		}
		if tc.height != 0 {
			assert.InDelta(t, tc.height, got.AntennaHeight, 1e-9, tc.name)
			assert.InDelta(t, tc.height, got.Misclosure.Z, 1*mm, "%s: up at A, m (B's vertical is 0.0003 rad off A's)", tc.name)
		}
	}
	// The 3 cm blunder was laid horizontally at A: 30 mm east-north, none up.
	got, err := CheckVector(Vector{Delta: d.Add(Up(c.A).Cross(r3.Vector{Z: 1}).Normalize().Mul(30 * mm)), Cov: cov}, c, s)
	require.NoError(t, err)
	assert.InDelta(t, 30*mm, got.Horizontal, 1e-9)
	assert.InDelta(t, 0, got.Misclosure.Z, 1e-9)
	assert.InDelta(t, 30*mm, got.Length, 1e-9)
	assert.InDelta(t, 30*mm/1800*1e6, got.PPM, 1e-6)
	assert.InDelta(t, 8.6*mm-30*mm, got.Margin, 1e-9, "5 mm + 2 ppm · 1.8 km = 8.6 mm")
	// σ in east, north, up of a covariance 3, 3, 5 mm in X, Y, Z: its
	// trace is kept.
	assert.InDelta(t, 9e-6+9e-6+25e-6, got.Sigma.Norm2(), 1e-15)
}
