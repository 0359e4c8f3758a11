package geodesic

import (
	"math"
	"strings"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func newProjector(t testing.TB, def string) *Projector {
	t.Helper()
	crs, err := OpenCRS(def)
	require.NoError(t, err, def)
	p, err := crs.NewProjector()
	require.NoError(t, err, def)
	t.Cleanup(p.Close)
	return p
}

// IOGP Guidance Note 7-2 worked examples; ../testdata/geodesic/gn7-2.txt.
func TestForwardGN72(t *testing.T) {
	for _, r := range readTable(t, "gn7-2.txt") {
		p := newProjector(t, r.fields[1])
		ll := s2.LatLngFromDegrees(r.dms(t, 2), r.dms(t, 3))
		g, err := p.Forward(ll)
		require.NoError(t, err)
		unit := p.CRS().MetresPerUnit()
		tol := r.float(t, 6)
		assert.InDeltaf(t, r.float(t, 4), g.Easting/unit, tol, "GN7-2 %s easting, %s", r.fields[0], p.CRS().Unit())
		assert.InDeltaf(t, r.float(t, 5), g.Northing/unit, tol, "GN7-2 %s northing, %s", r.fields[0], p.CRS().Unit())

		back, err := p.Inverse(g)
		require.NoError(t, err)
		assert.InDeltaf(t, ll.Lat.Degrees(), back.Lat.Degrees(), 1e-11, "GN7-2 %s inverse latitude, degrees", r.fields[0])
		assert.InDeltaf(t, ll.Lng.Degrees(), back.Lng.Degrees(), 1e-11, "GN7-2 %s inverse longitude, degrees", r.fields[0])
	}
}

// Snyder (1987) USGS PP 1395 examples; ../testdata/geodesic/snyder1987.txt.
func TestForwardAndScaleSnyder1987(t *testing.T) {
	for _, r := range readTable(t, "snyder1987.txt") {
		def := strings.Join(r.fields[slicesIndex(r.fields, "|")+1:], " ")
		p := newProjector(t, def)
		ll := s2.LatLngFromDegrees(r.dms(t, 1), r.dms(t, 2))
		g, err := p.Forward(ll)
		require.NoError(t, err)
		assert.InDeltaf(t, r.float(t, 3), g.Easting, 0.06, "Snyder %s x, metres", r.fields[0])
		assert.InDeltaf(t, r.float(t, 4), g.Northing, 0.06, "Snyder %s y, metres", r.fields[0])
		k, err := p.PointScaleFactor(ll)
		require.NoError(t, err)
		assert.InDeltaf(t, r.float(t, 5), k, 6e-8, "Snyder %s point scale factor", r.fields[0])
	}
}

func slicesIndex(s []string, v string) int {
	for i, x := range s {
		if x == v {
			return i
		}
	}
	return -1
}

// GeographicLib's exact transverse Mercator (TransverseMercatorProj 2.1.2)
// for UTM zone 33N: coordinates, convergence and scale;
// ../testdata/geodesic/tmerc_utm33_geographiclib.txt.
func TestUTMAgainstGeographicLib(t *testing.T) {
	p := newProjector(t, "EPSG:32633")
	for _, r := range readTable(t, "tmerc_utm33_geographiclib.txt") {
		ll := s2.LatLngFromDegrees(r.float(t, 0), r.float(t, 1))
		east, north := r.float(t, 2)+500000, r.float(t, 3)
		g, err := p.Forward(ll)
		require.NoError(t, err)
		assert.InDeltaf(t, east, g.Easting, 0.01*mm, "line %d easting, metres", r.line)
		assert.InDeltaf(t, north, g.Northing, 0.01*mm, "line %d northing, metres", r.line)
		f, err := p.Factors(ll)
		require.NoError(t, err)
		assert.InDeltaf(t, r.float(t, 5), f.ParallelScale, 1e-10, "line %d point scale factor", r.line)
		assert.InDeltaf(t, r.float(t, 5), f.MeridianScale, 1e-10, "line %d meridian scale", r.line)
		assert.InDeltaf(t, 0, (f.Convergence.Degrees()-r.float(t, 4))*3600, 1e-5, "line %d convergence, arc-seconds", r.line)
		k, err := p.PointScaleFactor(ll)
		require.NoError(t, err)
		assert.Equal(t, f.ParallelScale, k)
		for _, az := range []float64{0, 33, 90, 200} {
			assert.InDeltaf(t, k, f.ScaleInAzimuth(s1.Angle(az)*s1.Degree), 1e-10, "line %d scale in azimuth %v°", r.line, az)
		}
	}
}

// On a projection that is not conformal the scale of a short line depends on
// its azimuth. ScaleInAzimuth is checked against the definition: a 1 m
// geodesic (GeodSolve-checked Direct) projected with Forward, on
// Cassini–Soldner.
func TestScaleInAzimuthCassini(t *testing.T) {
	const def = "+proj=cass +lat_0=52 +lon_0=10 +x_0=0 +y_0=0 +ellps=bessel"
	p := newProjector(t, def)
	g, err := NewGeodesic(p.CRS().Ellipsoid())
	require.NoError(t, err)
	assert.False(t, p.CRS().Conformal())
	ll := s2.LatLngFromDegrees(51.3, 11.9) // about 130 km east of the central meridian
	_, err = p.PointScaleFactor(ll)
	assert.ErrorContains(t, err, "not a conformal projection")
	f, err := p.Factors(ll)
	require.NoError(t, err)
	for az := 0.0; az < 360; az += 30 {
		const step = 1.0 // metres
		a, _, err := g.Direct(ll, s1.Angle(az-180)*s1.Degree, step/2)
		require.NoError(t, err)
		b, _, err := g.Direct(ll, s1.Angle(az)*s1.Degree, step/2)
		require.NoError(t, err)
		ga, err := p.Forward(a)
		require.NoError(t, err)
		gb, err := p.Forward(b)
		require.NoError(t, err)
		want := math.Hypot(gb.Easting-ga.Easting, gb.Northing-ga.Northing) / step
		assert.InDeltaf(t, want, f.ScaleInAzimuth(s1.Angle(az)*s1.Degree), 2e-9, "Cassini scale in azimuth %v°", az)
	}
}

func TestBulkMatchesSingle(t *testing.T) {
	p := newProjector(t, "EPSG:27700")
	var lls []s2.LatLng
	for i := range 10000 {
		lls = append(lls, s2.LatLngFromDegrees(50+float64(i%97)*0.08, -6+float64(i%89)*0.09))
	}
	grid := make([]GridPoint, len(lls))
	require.NoError(t, p.ForwardBulk(lls, grid))
	back := make([]s2.LatLng, len(lls))
	require.NoError(t, p.InverseBulk(grid, back))
	for i, ll := range lls {
		one, err := p.Forward(ll)
		require.NoError(t, err)
		require.Equal(t, one, grid[i], "point %d", i)
		require.InDelta(t, ll.Lat.Degrees(), back[i].Lat.Degrees(), 1e-11, "point %d latitude, degrees", i)
		require.InDelta(t, ll.Lng.Degrees(), back[i].Lng.Degrees(), 1e-11, "point %d longitude, degrees", i)
	}
	assert.Error(t, p.ForwardBulk(lls, grid[:1]))
	bad := append([]s2.LatLng{}, lls[:5]...)
	bad[3] = s2.LatLngFromDegrees(95, 0)
	assert.ErrorContains(t, p.ForwardBulk(bad, grid[:5]), "point 3")
}

// IOGP Guidance Note 7-2, geographic/geocentric conversions (EPSG method
// 9602), WGS 84: 53°48′33.820″N, 2°07′46.380″E, h = 73.0 m →
// X 3 771 793.968, Y 140 253.342, Z 5 124 304.349 m [published, REFERENCES.md §8].
func TestGeocentricGN72(t *testing.T) {
	p := newProjector(t, "EPSG:32631")
	ll := s2.LatLngFromDegrees(53+48/60.0+33.820/3600, 2+7/60.0+46.380/3600)
	v, err := p.ToGeocentric(ll, 73)
	require.NoError(t, err)
	want := r3.Vector{X: 3771793.968, Y: 140253.342, Z: 5124304.349}
	assert.InDelta(t, want.X, v.X, 0.5*mm, "GN7-2 X, metres")
	assert.InDelta(t, want.Y, v.Y, 0.5*mm, "GN7-2 Y, metres")
	assert.InDelta(t, want.Z, v.Z, 0.5*mm, "GN7-2 Z, metres")
	back, h, err := p.FromGeocentric(v)
	require.NoError(t, err)
	assert.InDelta(t, 73, h, 1e-6*mm, "height round trip, metres")
	assert.InDelta(t, ll.Lat.Degrees(), back.Lat.Degrees(), 1e-12, "latitude round trip, degrees")
	assert.InDelta(t, ll.Lng.Degrees(), back.Lng.Degrees(), 1e-12, "longitude round trip, degrees")

	bulk := make([]r3.Vector, 2)
	require.NoError(t, p.ToGeocentricBulk([]s2.LatLng{ll, ll}, []float64{73, 73}, bulk))
	assert.Equal(t, v, bulk[1])
	_, err = p.ToGeocentric(ll, math.NaN())
	assert.Error(t, err)
}

// Bad positions are errors, never NaN.
func TestProjectorRejectsBadPoints(t *testing.T) {
	p := newProjector(t, "EPSG:32633")
	for _, bad := range []s2.LatLng{s2.LatLngFromDegrees(math.NaN(), 15), s2.LatLngFromDegrees(-91, 15)} {
		_, err := p.Forward(bad)
		assert.Error(t, err)
		_, err = p.Factors(bad)
		assert.Error(t, err)
	}
	_, err := p.Inverse(GridPoint{Easting: math.NaN(), Northing: 0})
	assert.Error(t, err)
}
