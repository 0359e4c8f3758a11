package main

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/reduce/job"
)

// TestMain poisons every chunk of observations once its rows have
// reached the sink (job.PoisonRecycledChunks), so that the outputs these
// tests check would show a row's string kept longer.
func TestMain(m *testing.M) {
	job.PoisonRecycledChunks = true
	code := m.Run()
	if builtOnce.dir != "" {
		os.RemoveAll(builtOnce.dir)
	}
	os.Exit(code)
}

const mm = 1e-3

func runCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(args, &out, &errb)
	return code, out.String(), errb.String()
}

// The demo network's inverse: its grid distances are plane distances
// between its own grid coordinates, e.g. NB-PILLAR1 → SB-PILLAR1 is
// hypot(158.218, 643.224) = 662.3972 m.
func TestInverseOnDemoPoints(t *testing.T) {
	dir := t.TempDir()
	pts := filepath.Join(dir, "points.csv")
	require.NoError(t, os.WriteFile(pts, mustDemo(t, "demo/points.csv"), 0o644))
	lines := filepath.Join(dir, "lines.csv")
	require.NoError(t, os.WriteFile(lines, mustDemo(t, "demo/lines.csv"), 0o644))
	code, out, stderr := runCmd(t, "inverse", "-crs", demoCRS, "-points", pts, "-lines", lines, "-angle-unit", "dms")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "ETRS89 / UTM zone 32N")
	assert.Contains(t, out, "licensed surveyor")
	assert.Contains(t, out, "662.3972")
	rows := 0
	for _, line := range strings.Split(out, "\n") {
		if len(strings.Fields(line)) == 12 && strings.Contains(line, "′") {
			rows++
		}
	}
	assert.Equal(t, 9, rows, "one table row per demo line\n%s", out)
}

// A 20 km WGS 84 line from ../../testdata/geodesic/geodsolve_wgs84.txt
// (GeodSolve 2.1.2): s12 = 20000.0000 m, azi1 = −63.983716463997524°.
func TestInverseCSVAgainstGeodSolve(t *testing.T) {
	code, out, stderr := runCmd(t, "inverse", "-crs", "EPSG:32614",
		"-a", "66.445848116,-100.419110116", "-b", "66.523994116044705,-100.823270782800293", "-csv", "-geoid", "none")
	require.Equal(t, exitOK, code, stderr)
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	require.Len(t, recs, 2)
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	f := func(name string) float64 {
		v, err := strconv.ParseFloat(recs[1][col[name]], 64)
		require.NoError(t, err, name)
		return v
	}
	assert.InDelta(t, 20000.0, f("geodesic_m"), 0.1*mm, "geodesic, metres")
	assert.InDelta(t, 360-63.983716463997524, f("azimuth_deg"), 1e-5/3600, "azimuth, degrees")
	// Simpson's line scale factor times the geodesic equals the plane
	// distance between the projected ends to well under a millimetre at
	// 20 km (NOAA Manual NOS NGS 5; REFERENCES.md §3).
	assert.InDelta(t, f("grid_distance_m"), f("scaled_geodesic_m"), 0.3*mm, "grid distance, metres")
	assert.Empty(t, recs[1][col["combined_factor"]], "no heights given, no combined factor")
}

func TestInverseOverPointsFile(t *testing.T) {
	dir := t.TempDir()
	pts := filepath.Join(dir, "pts.csv")
	require.NoError(t, os.WriteFile(pts, []byte("id,lat,lon,ellipsoid_height\nA,52,9,100\nB,52.01,9.02,120\nC,52.02,9,90\n"), 0o644))
	code, out, stderr := runCmd(t, "inverse", "-crs", "EPSG:25832", "-points", pts, "-csv")
	require.Equal(t, exitOK, code, stderr)
	assert.Equal(t, 1+3, strings.Count(out, "\n"), "every pair of three points")

	code, out, stderr = runCmd(t, "inverse", "-crs", "EPSG:25832", "-points", pts, "-from", "A", "-to", "C", "-length-unit", "us-ft", "-angle-unit", "dms")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "lengths in us-ft")
	assert.Contains(t, out, "0°00′00.00″", "A → C runs due north")
}

func TestBadInvocationsExit2(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.csv")
	require.NoError(t, os.WriteFile(bad, []byte("id,lat,lon\nA,52,9\nB,95,9\n"), 0o644))
	for _, tc := range []struct {
		args []string
		want string
	}{
		{nil, "Usage"},
		{[]string{"nonsense"}, `unknown command "nonsense"`},
		{[]string{"inverse", "-a", "1,2", "-b", "1,3"}, "-crs is required"},
		{[]string{"inverse", "-crs", "EPSG:4326", "-a", "1,2", "-b", "1,3"}, "is geographic"},
		{[]string{"inverse", "-crs", "+proj=cass +lat_0=52 +lon_0=10 +ellps=bessel", "-a", "52,10", "-b", "52.1,10.1"}, "not conformal"},
		{[]string{"inverse", "-crs", "EPSG:25832", "-a", "1,2"}, "give -a and -b together"},
		{[]string{"inverse", "-crs", "EPSG:25832", "-points", bad}, "bad.csv:3:2: lat \"95\""},
		{[]string{"inverse", "-crs", "EPSG:25832", "-points", filepath.Join(dir, "missing.csv")}, "missing.csv"},
		{[]string{"inverse", "-crs", "EPSG:25832", "-a", "1,2", "-b", "1,3", "-geoid", "nope.gtx"}, `geoid grid "nope.gtx"`},
		{[]string{"inverse", "-crs", "EPSG:25832", "-a", "1,2", "-b", "1,3", "-length-unit", "ft"}, "ambiguous"},
	} {
		code, _, stderr := runCmd(t, tc.args...)
		assert.Equal(t, exitFailed, code, "%v", tc.args)
		assert.Contains(t, stderr, tc.want, "%v", tc.args)
	}
}

func TestDMS(t *testing.T) {
	for _, tc := range []struct {
		deg  float64
		dec  int
		want string
	}{
		{96 + 36/60.0 + 8.7996/3600, 2, "96°36′08.80″"},
		{59.99999999 / 3600, 2, "0°01′00.00″"},
		{359.9999999999, 2, "360°00′00.00″"},
		{-(0 + 30/60.0), 0, "-0°30′00″"},
	} {
		assert.Equal(t, tc.want, dms(s1.Angle(tc.deg)*s1.Degree, tc.dec), "%v°", tc.deg)
	}
}
