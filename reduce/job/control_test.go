package job

import (
	"testing"

	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/obsfile"
)

func projector(t *testing.T, def string) *geodesic.Projector {
	t.Helper()
	crs, err := geodesic.OpenCRS(def)
	require.NoError(t, err)
	p, err := crs.NewProjector()
	require.NoError(t, err)
	t.Cleanup(p.Close)
	return p
}

// IOGP Guidance Note 7-2, British National Grid: E 577 274.99,
// N 69 740.50 is 50°30′N, 0°30′E [published; REFERENCES.md §3], to the
// 0.01 m of the printed grid coordinates (about 1e-7°).
func TestResolveGridToGeodetic(t *testing.T) {
	p := projector(t, "EPSG:27700")
	pts := []obsfile.Point{{ID: "GN7-2", Line: 2, Easting: 577274.99, Northing: 69740.50, HasGrid: true}}
	c, err := ResolveControl(pts, "pts.csv", p, Separations{})
	require.NoError(t, err)
	got := c["GN7-2"]
	assert.InDelta(t, 50.5, got.LatLng.Lat.Degrees(), 2e-7, "latitude, degrees")
	assert.InDelta(t, 0.5, got.LatLng.Lng.Degrees(), 2e-7, "longitude, degrees")
	assert.False(t, got.HasHeight())
}

func TestResolveHeights(t *testing.T) {
	p := projector(t, "EPSG:25832")
	geoid, err := geodesic.OpenGeoid("")
	require.NoError(t, err)
	defer geoid.Close()
	ll := s2.LatLngFromDegrees(52, 9)
	n, err := geoid.Separation(ll)
	require.NoError(t, err)
	pts := []obsfile.Point{
		{ID: "h", LatLng: ll, HasLatLng: true, EllipsoidHeight: 150, HasEllipsoidHeight: true},
		{ID: "H+Npoint", LatLng: ll, HasLatLng: true, Elevation: 100, HasElevation: true, GeoidSeparation: 44.5, HasGeoidSeparation: true},
		{ID: "H+Ngrid", LatLng: ll, HasLatLng: true, Elevation: 100, HasElevation: true},
		{ID: "none", LatLng: ll, HasLatLng: true},
	}
	c, err := ResolveControl(pts, "pts.csv", p, Separations{Grid: geoid})
	require.NoError(t, err)
	assert.Equal(t, HeightGiven, c["h"].HeightSource)
	assert.InDelta(t, 150-n, c["h"].Orthometric, 1e-9, "H = h − N, metres")
	assert.Equal(t, HeightFromPointN, c["H+Npoint"].HeightSource)
	assert.Equal(t, 144.5, c["H+Npoint"].Ellipsoidal)
	assert.Equal(t, HeightFromGeoidGrid, c["H+Ngrid"].HeightSource)
	assert.InDelta(t, 100+n, c["H+Ngrid"].Ellipsoidal, 1e-9, "h = H + N, metres")
	assert.False(t, c["none"].HasHeight())

	c, err = ResolveControl(pts[2:3], "pts.csv", p, Separations{Constant: 40, HasConstant: true})
	require.NoError(t, err)
	assert.Equal(t, HeightFromConstantN, c["H+Ngrid"].HeightSource)
	assert.Equal(t, 140.0, c["H+Ngrid"].Ellipsoidal)
}

func TestResolveRefusesDisagreeingPositions(t *testing.T) {
	p := projector(t, "EPSG:25832")
	ll := s2.LatLngFromDegrees(52, 9)
	g, err := p.Forward(ll)
	require.NoError(t, err)
	pts := []obsfile.Point{{ID: "X", Line: 7, LatLng: ll, HasLatLng: true, Easting: g.Easting + 0.002, Northing: g.Northing, HasGrid: true}}
	_, err = ResolveControl(pts, "pts.csv", p, Separations{})
	assert.ErrorContains(t, err, `pts.csv:7: point "X": lat/lon and easting/northing disagree by 0.0020 m`)
	pts[0].Easting = g.Easting + 0.0005
	_, err = ResolveControl(pts, "pts.csv", p, Separations{})
	assert.NoError(t, err)
}
