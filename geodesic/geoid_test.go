package geodesic

import (
	"encoding/binary"
	"os"
	"path/filepath"
	"testing"

	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func openGeoid(t testing.TB, grid string) *Geoid {
	t.Helper()
	g, err := OpenGeoid(grid)
	require.NoError(t, err)
	t.Cleanup(g.Close)
	return g
}

// PROJ's own interpolation of egm96_15.gtx, by cs2cs 9.1.1; see the header
// of ../testdata/geodesic/egm96_cs2cs.txt. Agreement to 1 mm (cs2cs printed
// 0.1 mm).
func TestGeoidAgainstCs2cs(t *testing.T) {
	g := openGeoid(t, "")
	assert.Equal(t, DefaultGeoidGrid, g.Grid())
	rows := readTable(t, "egm96_cs2cs.txt")
	pts := make([]s2.LatLng, len(rows))
	for i, r := range rows {
		pts[i] = s2.LatLngFromDegrees(r.float(t, 0), r.float(t, 1))
		n, err := g.Separation(pts[i])
		require.NoError(t, err)
		assert.InDeltaf(t, r.float(t, 2), n, 1*mm, "line %d N, metres", r.line)
	}
	bulk := make([]float64, len(pts))
	require.NoError(t, g.SeparationBulk(pts, bulk))
	for i, r := range rows {
		assert.InDeltaf(t, r.float(t, 2), bulk[i], 1*mm, "line %d N in bulk, metres", r.line)
	}
}

// NGA's published spline-interpolated values; 6 cm because PROJ
// interpolates the same grid bilinearly (header of egm96_nga.txt).
func TestGeoidAgainstNGA(t *testing.T) {
	g := openGeoid(t, DefaultGeoidGrid)
	for _, r := range readTable(t, "egm96_nga.txt") {
		n, err := g.Separation(s2.LatLngFromDegrees(r.float(t, 0), r.float(t, 1)))
		require.NoError(t, err)
		assert.InDeltaf(t, r.float(t, 2), n, 0.06, "line %d N, metres", r.line)
	}
}

// writeGTX writes a grid in NOAA's GTX layout: a big-endian header of
// south latitude, west longitude, latitude and longitude spacing (float64
// degrees), rows and columns (int32), then float32 values row by row from
// the south.
func writeGTX(t testing.TB, path string, south, west, step float64, rows, cols int, value func(lat, lon float64) float32) {
	t.Helper()
	f, err := os.Create(path)
	require.NoError(t, err)
	defer f.Close()
	for _, v := range []any{south, west, step, step, int32(rows), int32(cols)} {
		require.NoError(t, binary.Write(f, binary.BigEndian, v))
	}
	for i := range rows {
		for j := range cols {
			require.NoError(t, binary.Write(f, binary.BigEndian, value(south+float64(i)*step, west+float64(j)*step)))
		}
	}
}

// A user grid: a plane N = 20 + 2(φ − 10°) − 3(λ − 20°) metres over
// 10°..11°N, 20°..21°E, which bilinear interpolation reproduces exactly.
// The path has a space in it. A point off the grid is an error naming it.
func TestGeoidUserGrid(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "local geoid.gtx")
	plane := func(lat, lon float64) float64 { return 20 + 2*(lat-10) - 3*(lon-20) }
	// Node values are multiples of 0.25 m, exact in float32.
	writeGTX(t, path, 10, 20, 0.25, 5, 5, func(lat, lon float64) float32 { return float32(plane(lat, lon)) })
	g := openGeoid(t, path)
	for _, p := range [][2]float64{{10.1, 20.3}, {10.5, 20.5}, {10.99, 20.01}} {
		n, err := g.Separation(s2.LatLngFromDegrees(p[0], p[1]))
		require.NoError(t, err)
		assert.InDeltaf(t, plane(p[0], p[1]), n, 1e-5*mm, "plane at %v, metres", p)
	}
	_, err := g.Separation(s2.LatLngFromDegrees(12, 20.5))
	assert.ErrorContains(t, err, path)

	c, err := g.Clone()
	require.NoError(t, err)
	defer c.Close()
	n, err := c.Separation(s2.LatLngFromDegrees(10.5, 20.5))
	require.NoError(t, err)
	assert.InDelta(t, 19.5, n, 1e-5*mm, "clone, metres")
}

func TestGeoidMissingGrid(t *testing.T) {
	_, err := OpenGeoid("no_such_geoid_grid.gtx")
	assert.ErrorContains(t, err, `"no_such_geoid_grid.gtx"`)
	assert.ErrorContains(t, err, "proj-data")

	bad := filepath.Join(t.TempDir(), "garbage.gtx")
	require.NoError(t, os.WriteFile(bad, []byte("not a grid"), 0o644))
	_, err = OpenGeoid(bad)
	assert.ErrorContains(t, err, "cannot read it")
}
