package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// An eye 1.83 m up on flat ground sees its horizon at about 4.83 km
// (sqrt(2Rh), R = 6371 km, no refraction; common practice), and a 2 m
// target 10 km away is hidden: 5.17 km beyond the horizon the Earth hides
// (5171 m)²/2R = 2.10 m of it. The line does not clear: exit 1.
func TestSightlineDirect(t *testing.T) {
	code, out, stderr := runCmd(t, "sightline", "-distance", "10000", "-eye-height", "1.83", "-target-height", "2", "-k", "0")
	require.Equal(t, exitFlagged, code, stderr)
	assert.Contains(t, out, "does NOT clear the surface")
	assert.Regexp(t, `horizon of the eye\s+48(2[5-9]|3[0-4])\.\d{4} m`, out, "about 4.83 km")
	assert.Regexp(t, `hidden by the Earth at the target\s+2\.(09|10|11)\d\d m of its 2\.0000 m`, out)
	assert.Contains(t, out, "licensed surveyor")

	// 0.0785 m per km² (common practice): 0.0785 m over 1 km at k = 0,
	// 0.0675 m at k = 0.14, both ends 1 m up: clear, exit 0
	code, out, stderr = runCmd(t, "sightline", "-distance", "1000", "-eye-height", "1", "-target-height", "1", "-k", "0")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "curvature and refraction over the line  0.0785 m")
	code, out, _ = runCmd(t, "sightline", "-distance", "1000", "-eye-height", "1", "-target-height", "1", "-k", "0.14")
	require.Equal(t, exitOK, code)
	assert.Contains(t, out, "curvature and refraction over the line  0.0675 m")
	// the lowest point of a level line is its middle, 1 − 0.0675/4 up
	assert.Contains(t, out, "lowest clearance                        0.9831 m at 500.0")
}

// A profile point within the minimum clearance is flagged, in the table,
// the CSV and the exit status; the plot files are written.
func TestSightlineProfileAndPlot(t *testing.T) {
	dir := t.TempDir()
	prof := filepath.Join(dir, "profile.csv")
	require.NoError(t, os.WriteFile(prof, []byte("# ground under the line\ndistance,height,what\n3000,5,field\n6000,12,wood\n9000,8.5,barn\n"), 0o644))
	args := []string{"sightline", "-distance", "12000", "-eye-height", "10", "-target-height", "12", "-profile", prof, "-min-clearance", "2"}
	code, out, stderr := runCmd(t, append(args, "-plot", filepath.Join(dir, "p.svg"))...)
	require.Equal(t, exitFlagged, code, stderr)
	assert.Contains(t, stderr, `warning: `+prof+`:2: unknown column "what" (column 3) is ignored`)
	assert.Equal(t, 2, strings.Count(out, "BELOW MINIMUM"), out)
	svg := readFile(t, filepath.Join(dir, "p.svg"))
	assert.Contains(t, svg, "<svg")
	assert.Contains(t, svg, "vertical scale exaggerated about ×")

	code, _, stderr = runCmd(t, append(args, "-plot", filepath.Join(dir, "p.html"))...)
	require.Equal(t, exitFlagged, code, stderr)
	page := readFile(t, filepath.Join(dir, "p.html"))
	assert.Contains(t, page, "<!DOCTYPE html>")
	assert.Contains(t, page, "The vertical scale is exaggerated about ×")
	assert.Contains(t, page, "BELOW MINIMUM")
	assert.NotContains(t, page, "<?xml", "the SVG stands inside the page")

	code, out, stderr = runCmd(t, append(args, "-csv")...)
	require.Equal(t, exitFlagged, code, stderr)
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	col := columns(recs[0])
	var below, samples int
	last := -1.0
	for _, r := range recs[1:] {
		d, err := strconv.ParseFloat(r[col["distance_m"]], 64)
		require.NoError(t, err)
		assert.GreaterOrEqual(t, d, last, "rows in order of distance")
		last = d
		if r[col["below_minimum"]] == "true" {
			below++
		}
		if r[col["kind"]] == "sample" {
			samples++
		}
	}
	assert.Equal(t, 2, below)
	assert.Equal(t, sightlineSamples+1, samples)
}

// With marks, the heights are the marks' above the geoid (or, without
// one, the ellipsoid) plus -hi and -ht, and the length is the geodesic
// between them.
func TestSightlineMarks(t *testing.T) {
	dir := predictJob(t, "from,to,instrument_height,target_height\n")
	// the flag wins over the job: heights read and written in metres
	code, out, stderr := runCmd(t, "sightline", "-config", filepath.Join(dir, "job.toml"), "-from", "A", "-to", "C", "-hi", "5", "-ht", "5", "-length-unit", "m")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "eye 333.0840 m")

	code, out, stderr = runCmd(t, "sightline", "-config", filepath.Join(dir, "job.toml"), "-from", "A", "-to", "C", "-hi", "5", "-ht", "5")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "line of sight A → C, heights above the ellipsoid: the job gives no geoid")
	// A is 328.0840 US ft (100 m) up, the eye 5 US ft above it
	assert.Contains(t, out, "eye 333.0840 us-ft")

	// With a geoid separation the clearance is above the geoid, as ground
	// and water heights are: A's h, read as 328.0840 m with -length-unit m,
	// is H = 298.0840 m for N = 30 m.
	code, out, stderr = runCmd(t, "sightline", "-config", filepath.Join(dir, "job.toml"), "-from", "A", "-to", "C", "-hi", "5", "-ht", "5",
		"-length-unit", "m", "-geoid-separation-m", "30")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "line of sight A → C, heights above the geoid (orthometric)")
	assert.Contains(t, out, "eye 303.0840 m")
}

func TestSightlineBadInput(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "profile.csv")
	require.NoError(t, os.WriteFile(bad, []byte("distance,height\n3000,5\n13000,2\n4000,abc\n"), 0o644))
	noCols := filepath.Join(dir, "nocols.csv")
	require.NoError(t, os.WriteFile(noCols, []byte("x,y\n1,2\n"), 0o644))
	jobDir := predictJob(t, "from,to,instrument_height,target_height\n")
	for _, tc := range []struct {
		args []string
		want []string
	}{
		{[]string{"sightline"}, []string{"give -from ID -to ID"}},
		{[]string{"sightline", "-distance", "1000", "-from", "A", "-to", "B"}, []string{"not both"}},
		{[]string{"sightline", "-distance", "1000", "-hi", "2"}, []string{"-hi and -ht go with -from and -to"}},
		{[]string{"sightline", "-distance", "-5", "-eye-height", "1"}, []string{"distance along the line -5"}},
		{[]string{"sightline", "-distance", "1000", "-eye-height", "NaN"}, []string{"eye height NaN"}},
		{[]string{"sightline", "-distance", "1000", "-k", "1.5"}, []string{"coefficient of refraction"}},
		{[]string{"sightline", "-distance", "12000", "-eye-height", "10", "-profile", bad},
			[]string{`profile.csv:3:1: distance "13000": want a distance from the eye along the line in m, 0..12000.0000`, `profile.csv:4:2: height "abc"`}},
		{[]string{"sightline", "-distance", "12000", "-profile", noCols}, []string{"nocols.csv:1: header: missing required column(s) distance, height; found x, y"}},
		{[]string{"sightline", "-distance", "12000", "-plot", filepath.Join(dir, "p.png")}, []string{`-plot`, "want a file ending in .svg or .html"}},
		{[]string{"sightline", "-config", filepath.Join(jobDir, "job.toml"), "-from", "A", "-to", "Z"}, []string{`-to: target "Z" is not in`}},
		{[]string{"sightline", "-config", filepath.Join(jobDir, "job.toml"), "-from", "A"}, []string{"give -from and -to together"}},
	} {
		code, _, stderr := runCmd(t, tc.args...)
		assert.Equal(t, exitFailed, code, "%v", tc.args)
		for _, w := range tc.want {
			assert.Contains(t, stderr, w, "%v", tc.args)
		}
	}
}
