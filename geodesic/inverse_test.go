package geodesic

import (
	"fmt"
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Vincenty (1975) Survey Review XXIII(176), test lines (a)–(e); values and
// their provenance in ../testdata/geodesic/vincenty1975.txt.
func TestInverseVincenty1975(t *testing.T) {
	ells := map[string]Ellipsoid{"bessel1841": Bessel1841, "international1924": International1924}
	for _, r := range readTable(t, "vincenty1975.txt") {
		name := r.fields[0]
		g, err := NewGeodesic(ells[r.fields[1]])
		require.NoError(t, err)
		a := s2.LatLngFromDegrees(r.dms(t, 2), 0)
		b := s2.LatLngFromDegrees(r.dms(t, 3), r.dms(t, 4))
		line, err := g.Inverse(a, b)
		require.NoError(t, err)
		azTol := 5e-5
		if name == "d" {
			azTol = 2e-3
		}
		assert.InDeltaf(t, r.float(t, 7), line.Distance, 1*mm, "line (%s) distance, metres", name)
		assert.InDeltaf(t, 0, angleDiff(line.Azimuth1.Degrees(), r.dms(t, 5))*3600, azTol, "line (%s) azimuth 1, arc-seconds", name)
		assert.InDeltaf(t, 0, angleDiff(line.Azimuth2.Degrees(), r.dms(t, 6))*3600, azTol, "line (%s) azimuth 2, arc-seconds", name)
	}
}

// GeodSolve (GeographicLib 2.1.2) inverse solutions; see the file headers.
func TestInverseGeodSolve(t *testing.T) {
	for _, tc := range []struct {
		file string
		ell  Ellipsoid
	}{{"geodsolve_wgs84.txt", WGS84}, {"geodsolve_grs80.txt", GRS80}} {
		g, err := NewGeodesic(tc.ell)
		require.NoError(t, err)
		rows := readTable(t, tc.file)
		require.Len(t, rows, 180, tc.file)
		for _, r := range rows {
			a := s2.LatLngFromDegrees(r.float(t, 0), r.float(t, 1))
			b := s2.LatLngFromDegrees(r.float(t, 2), r.float(t, 3))
			want := r.float(t, 6)
			line, err := g.Inverse(a, b)
			require.NoError(t, err)
			where := fmt.Sprintf("%s:%d (s12 %.0f m)", tc.file, r.line, want)
			assert.InDeltaf(t, want, line.Distance, 0.1*mm, "%s distance, metres", where)
			// s2.LatLng holds radians: degrees → radians → degrees moves a
			// point by up to an ulp, about 1.6 nm at latitude 75°, which turns
			// a 1 m line by 3e-4″. So through the public API the azimuth
			// tolerance is 1e-5″ plus what 3 nm of position allows.
			azTol := 1e-5 + 3e-9/want/arcsecond.Radians()
			assert.InDeltaf(t, 0, angleDiff(line.Azimuth1.Degrees(), r.float(t, 4))*3600, azTol, "%s azimuth 1, arc-seconds", where)
			assert.InDeltaf(t, 0, angleDiff(line.Azimuth2.Degrees(), r.float(t, 5))*3600, azTol, "%s azimuth 2, arc-seconds", where)

			// On the very degrees GeodSolve read, the routines agree to
			// 1e-5″ on every line, 1 m ones included.
			s12, azi1, azi2 := g.core.inverse(r.float(t, 0), r.float(t, 1), r.float(t, 2), r.float(t, 3))
			assert.InDeltaf(t, want, s12, 0.1*mm, "%s distance from degrees, metres", where)
			assert.InDeltaf(t, 0, angleDiff(azi1, r.float(t, 4))*3600, 1e-5, "%s azimuth 1 from degrees, arc-seconds", where)
			assert.InDeltaf(t, 0, angleDiff(azi2, r.float(t, 5))*3600, 1e-5, "%s azimuth 2 from degrees, arc-seconds", where)
		}
	}
}

// The direct problem inverts the inverse problem, and the midpoint is half
// way along: checked on the GeodSolve lines.
func TestDirectAndMidpointAgreeWithInverse(t *testing.T) {
	g, err := NewGeodesic(WGS84)
	require.NoError(t, err)
	for _, r := range readTable(t, "geodsolve_wgs84.txt") {
		a := s2.LatLngFromDegrees(r.float(t, 0), r.float(t, 1))
		b := s2.LatLngFromDegrees(r.float(t, 2), r.float(t, 3))
		line, err := g.Inverse(a, b)
		require.NoError(t, err)
		end, az2, err := g.Direct(a, line.Azimuth1, line.Distance)
		require.NoError(t, err)
		back, err := g.Inverse(end, b)
		require.NoError(t, err)
		assert.InDeltaf(t, 0, back.Distance, 15e-6*mm, "line %d: direct end point off by, metres (Karney 2013: 15 nm)", r.line)
		assert.InDeltaf(t, 0, angleDiff(az2.Degrees(), line.Azimuth2.Degrees())*3600, 1e-5, "line %d: direct azimuth 2, arc-seconds", r.line)

		mid, err := g.Midpoint(a, b)
		require.NoError(t, err)
		both, mid2, err := g.InverseMidpoint(a, b)
		require.NoError(t, err)
		assert.InDeltaf(t, line.Distance, both.Distance, 15e-6*mm, "line %d: InverseMidpoint distance, metres (Karney 2013: 15 nm)", r.line)
		assert.InDeltaf(t, 0, angleDiff(both.Azimuth1.Degrees(), line.Azimuth1.Degrees())*3600, 1e-6, "line %d: InverseMidpoint azimuth 1, arc-seconds", r.line)
		assert.InDeltaf(t, 0, angleDiff(both.Azimuth2.Degrees(), line.Azimuth2.Degrees())*3600, 1e-6, "line %d: InverseMidpoint azimuth 2, arc-seconds", r.line)
		if line.Distance < 19.9e6 {
			d, err := g.Inverse(mid, mid2)
			require.NoError(t, err)
			assert.InDeltaf(t, 0, d.Distance, 1e-6*mm, "line %d: InverseMidpoint midpoint, metres", r.line)
		}
		h1, err := g.Inverse(a, mid)
		require.NoError(t, err)
		h2, err := g.Inverse(mid, b)
		require.NoError(t, err)
		if line.Distance < 19.9e6 { // between near-antipodes the midpoint need not be unique
			assert.InDeltaf(t, line.Distance/2, h1.Distance, 1e-3*mm, "line %d: first half, metres", r.line)
			assert.InDeltaf(t, line.Distance/2, h2.Distance, 1e-3*mm, "line %d: second half, metres", r.line)
		}
	}
}

func TestInverseRejectsBadPoints(t *testing.T) {
	g, err := NewGeodesic(WGS84)
	require.NoError(t, err)
	ok := s2.LatLngFromDegrees(10, 10)
	for _, bad := range []s2.LatLng{
		s2.LatLngFromDegrees(91, 0),
		s2.LatLngFromDegrees(math.NaN(), 0),
		s2.LatLngFromDegrees(0, math.Inf(1)),
	} {
		_, err := g.Inverse(ok, bad)
		assert.Error(t, err, "%v", bad)
		_, err = g.Midpoint(bad, ok)
		assert.Error(t, err, "%v", bad)
		_, _, err = g.Direct(bad, 0, 10)
		assert.Error(t, err, "%v", bad)
	}
	_, _, err = g.Direct(ok, s1.Angle(math.NaN()), 10)
	assert.Error(t, err)
	_, err = NewGeodesic(Ellipsoid{})
	assert.Error(t, err, "zero ellipsoid")
}

func TestNormalizeAzimuth(t *testing.T) {
	for _, tc := range []struct{ in, want float64 }{
		{0, 0}, {-90, 270}, {360, 0}, {725, 5}, {-1e-30, 0},
	} {
		got := NormalizeAzimuth(s1.Angle(tc.in) * s1.Degree).Degrees()
		assert.InDeltaf(t, tc.want, got, 1e-12, "NormalizeAzimuth(%v°), degrees", tc.in)
		assert.Less(t, got, 360.0)
	}
	line := Line{Azimuth2: 10 * s1.Degree}
	assert.InDelta(t, 190, line.BackAzimuth().Degrees(), 1e-12, "back azimuth, degrees")
}
