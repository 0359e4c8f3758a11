package audit

import (
	"bufio"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// geocentricWGS84 is IOGP GN7-2's method 9602, closed form:
// X = (ν + h) cos φ cos λ, Y = (ν + h) cos φ sin λ, Z = ((1 − e²) ν + h) sin φ,
// ν = a / sqrt(1 − e² sin² φ), on WGS 84 (a 6 378 137 m, 1/f 298.257223563).
func geocentricWGS84(p s2.LatLng, h float64) r3.Vector {
	const a, invF = 6378137.0, 298.257223563
	f := 1 / invF
	e2 := f * (2 - f)
	sp, cp := math.Sincos(float64(p.Lat))
	sl, cl := math.Sincos(float64(p.Lng))
	nu := a / math.Sqrt(1-e2*sp*sp)
	return r3.Vector{X: (nu + h) * cp * cl, Y: (nu + h) * cp * sl, Z: ((1-e2)*nu + h) * sp}
}

func dms(t *testing.T, s string) s1.Angle {
	var deg float64
	for i, part := range strings.Split(s, ":") {
		v, err := strconv.ParseFloat(part, 64)
		require.NoError(t, err)
		deg += v / math.Pow(60, float64(i))
	}
	return s1.Angle(deg) * s1.Degree
}

// TestTopocentricGN72 checks the rotation to east, north, up against
// GN7-2's worked example (../../testdata/audit/gn7-2_topocentric.txt).
func TestTopocentricGN72(t *testing.T) {
	f, err := os.Open("../../testdata/audit/gn7-2_topocentric.txt")
	require.NoError(t, err)
	defer f.Close()
	var origin, point s2.LatLng
	var hO, hP float64
	var xyz, enu r3.Vector
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fl := strings.Fields(sc.Text())
		if len(fl) == 0 || strings.HasPrefix(fl[0], "#") {
			continue
		}
		num := func(i int) float64 {
			v, err := strconv.ParseFloat(fl[i], 64)
			require.NoError(t, err, sc.Text())
			return v
		}
		switch fl[0] {
		case "origin":
			origin, hO = s2.LatLng{Lat: dms(t, fl[1]), Lng: dms(t, fl[2])}, num(3)
		case "point":
			point, hP = s2.LatLng{Lat: dms(t, fl[1]), Lng: dms(t, fl[2])}, num(3)
			xyz = r3.Vector{X: num(4), Y: num(5), Z: num(6)}
		case "topocentric":
			enu = r3.Vector{X: num(1), Y: num(2), Z: num(3)}
		}
	}
	require.NoError(t, sc.Err())
	p := geocentricWGS84(point, hP)
	for _, c := range [...][2]float64{{p.X, xyz.X}, {p.Y, xyz.Y}, {p.Z, xyz.Z}} {
		require.InDelta(t, c[1], c[0], 1e-3, "GN7-2 geocentric of the point, m (the test's own 9602)")
	}
	got := Topocentric(origin, xyz.Sub(geocentricWGS84(origin, hO)))
	assert.InDelta(t, enu.X, got.X, 1e-3, "E, m")
	assert.InDelta(t, enu.Y, got.Y, 1e-3, "N, m")
	assert.InDelta(t, enu.Z, got.Z, 1e-3, "U, m")
}

// TestTopocentricCovariance: a rotation keeps the trace and turns an
// isotropic covariance into itself; the up variance of a covariance in
// Z alone at the pole is that of Z.
func TestTopocentricCovariance(t *testing.T) {
	o := s2.LatLngFromDegrees(50, 9)
	iso := DiagonalCovariance(2e-3, 2e-3, 2e-3)
	got := TopocentricCovariance(o, iso)
	for i := range 3 {
		for j := range 3 {
			assert.InDelta(t, iso[i][j], got[i][j], 1e-18)
		}
	}
	c := Covariance{{4e-6, 1e-6, 0}, {1e-6, 9e-6, 2e-6}, {0, 2e-6, 16e-6}}
	assert.InDelta(t, c.Trace(), TopocentricCovariance(o, c).Trace(), 1e-18)
	pole := TopocentricCovariance(s2.LatLngFromDegrees(90, 0), DiagonalCovariance(0, 0, 3e-3))
	assert.InDelta(t, 9e-6, pole[2][2], 1e-18)
}
