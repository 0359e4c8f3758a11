package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/report"
)

// outputFiles are the demo's outputs, golden files all: the set and its manifest.
var outputFiles = append(slices.Clone(reduceFiles), "manifest.json")

func runDemoInto(t *testing.T, dir string, workers string) {
	t.Helper()
	code, _, stderr := runCmd(t, "demo", "-out", dir, "-quiet", "-workers", workers)
	require.Equal(t, exitFlagged, code, "the demo's blunders are flagged\n%s", stderr)
}

// The demo's outputs are golden files: `go test ./cmd/geored -run
// DemoGolden -update` rewrites them; review the diff.
func TestDemoGolden(t *testing.T) {
	dir := t.TempDir()
	runDemoInto(t, dir, "0")
	for _, name := range outputFiles {
		got, err := os.ReadFile(filepath.Join(dir, name))
		require.NoError(t, err)
		golden := filepath.Join("testdata", "demo", name+".golden")
		if *update {
			require.NoError(t, os.MkdirAll(filepath.Dir(golden), 0o755))
			require.NoError(t, os.WriteFile(golden, got, 0o644))
		}
		want, err := os.ReadFile(golden)
		require.NoError(t, err)
		assert.Equal(t, string(want), string(got), "%s differs from %s", name, golden)
	}
}

// The same inputs give byte-identical outputs whatever the number of
// workers.
func TestSameOutputsWithAnyWorkers(t *testing.T) {
	one, two, three := t.TempDir(), t.TempDir(), t.TempDir()
	runDemoInto(t, one, "1")
	runDemoInto(t, two, "2")
	runDemoInto(t, three, "3")
	for _, name := range outputFiles {
		a, err := os.ReadFile(filepath.Join(one, name))
		require.NoError(t, err)
		for _, d := range []string{two, three} {
			b, err := os.ReadFile(filepath.Join(d, name))
			require.NoError(t, err)
			assert.True(t, bytes.Equal(a, b), "%s differs between worker counts", name)
		}
	}
}

func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	require.NoError(t, err)
	return recs
}

// Counts add up: every row read is in reduced.csv or rejects.csv, and
// summary.json says read = reduced + rejected.
func TestDemoCountsAddUp(t *testing.T) {
	dir := t.TempDir()
	runDemoInto(t, dir, "2")
	var sum report.Summary
	b, err := os.ReadFile(filepath.Join(dir, "summary.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &sum))
	reduced := len(readCSV(t, filepath.Join(dir, "reduced.csv"))) - 1
	rejected := len(readCSV(t, filepath.Join(dir, "rejects.csv"))) - 1
	assert.Equal(t, sum.Counts.Read, sum.Counts.Reduced+sum.Counts.Rejected)
	assert.Equal(t, sum.Counts.Reduced, reduced)
	assert.Equal(t, sum.Counts.Rejected, rejected)
	assert.Equal(t, 38, sum.Counts.Read, "36 simulated observations and 2 bad rows")
	assert.Equal(t, 2, rejected)
	lines := 0
	for _, l := range sum.Lines {
		lines += l.Count
	}
	assert.Equal(t, reduced, lines, "every reduced observation is in one line")
	// The three blunders are flagged, on three lines.
	assert.Equal(t, 3, sum.Counts.FlaggedLines)
	assert.Equal(t, exitFlagged, sum.ExitStatus)
	require.NotNil(t, sum.Fit)
	assert.Less(t, abs(sum.Fit.ConstantMM), 3*sum.Fit.ConstantSigma+0.5, "no constant error was simulated")
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// buildBinary builds geored once for the end-to-end tests.
func buildBinary(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "geored")
	cmd := exec.Command("go", "build", "-o", bin, ".")
	out, err := cmd.CombinedOutput()
	require.NoError(t, err, string(out))
	return bin
}

func exitCode(t *testing.T, bin string, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	cmd := exec.Command(bin, args...)
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	if ee, ok := err.(*exec.ExitError); ok {
		return ee.ExitCode(), out.String(), errb.String()
	}
	require.NoError(t, err)
	return 0, out.String(), errb.String()
}

// writeJob writes the demo's job, points and the given observation rows
// into a folder and returns the job file.
func writeJob(t *testing.T, obs string, extra string) string {
	t.Helper()
	dir := t.TempDir()
	for _, name := range []string{"points.csv"} {
		require.NoError(t, os.WriteFile(filepath.Join(dir, name), mustDemo(t, "demo/"+name), 0o644))
	}
	require.NoError(t, os.WriteFile(filepath.Join(dir, "observations.csv"), []byte(obs), 0o644))
	job := "out = \"out\"\n" + extra + "\n" + string(mustDemo(t, "demo/job.toml"))
	path := filepath.Join(dir, "job.toml")
	require.NoError(t, os.WriteFile(path, []byte(job), 0o644))
	return path
}

// demoRows returns the header and the demo's observation rows that match.
func demoRows(t *testing.T, keep func(row string) bool) string {
	t.Helper()
	var b strings.Builder
	for i, line := range strings.Split(strings.TrimSpace(string(mustDemo(t, "demo/observations.csv"))), "\n") {
		if strings.HasPrefix(line, "#") {
			continue
		}
		if i == 1 || keep(line) {
			b.WriteString(line + "\n")
		}
	}
	return b.String()
}

// cleanDemoRows are the demo's observations of three lines that carry
// no blunder, with the header.
func cleanDemoRows(t *testing.T) string {
	t.Helper()
	return demoRows(t, func(r string) bool {
		for _, pair := range [][2]string{{"NB-PILLAR1", "NB-PILLAR2"}, {"SB-PILLAR1", "SB-PILLAR2"}, {"HILLTOP", "WATERTOWER"}} {
			if strings.Contains(r, ","+pair[0]+","+pair[1]+",") || strings.Contains(r, ","+pair[1]+","+pair[0]+",") {
				return true
			}
		}
		return false
	})
}

func TestReduceExitCodes(t *testing.T) {
	bin := buildBinary(t)
	clean := cleanDemoRows(t)
	job := writeJob(t, clean, "")
	code, stdout, stderr := exitCode(t, bin, "reduce", "-config", job, "-json")
	assert.Equal(t, 0, code, stderr)
	var m map[string]any
	require.NoError(t, json.Unmarshal([]byte(stdout), &m), stdout)
	assert.Equal(t, 1, strings.Count(stdout, "\n"), "-json is one line")
	assert.EqualValues(t, 12, m["read"])
	assert.EqualValues(t, 0, m["flagged"])
	for _, name := range outputFiles {
		assert.FileExists(t, filepath.Join(filepath.Dir(job), "out", name))
	}

	flagged := writeJob(t, string(mustDemo(t, "demo/observations.csv")), "")
	code, _, stderr = exitCode(t, bin, "reduce", "-config", flagged, "-quiet")
	assert.Equal(t, 1, code, stderr)

	code, _, stderr = exitCode(t, bin, "reduce", "-config", flagged, "-quiet", "-strict")
	assert.Equal(t, 2, code)
	assert.Contains(t, stderr, "exit status 2, failed: rows were rejected and -strict is set")

	// A missing required column stops before any work: no outputs.
	noZenith := writeJob(t, "from,to,slope_distance\nNB-PILLAR1,SB-PILLAR1,662.67\n", "")
	code, _, stderr = exitCode(t, bin, "reduce", "-config", noZenith, "-quiet")
	assert.Equal(t, 2, code)
	assert.Contains(t, stderr, "missing required column(s) zenith_angle")
	entries, _ := os.ReadDir(filepath.Join(filepath.Dir(noZenith), "out"))
	for _, e := range entries {
		assert.False(t, strings.HasSuffix(e.Name(), ".csv") || strings.HasSuffix(e.Name(), ".json"), "left %s", e.Name())
	}

	badConfig := writeJob(t, clean, "refraction = 0.2")
	code, _, stderr = exitCode(t, bin, "reduce", "-config", badConfig)
	assert.Equal(t, 2, code)
	assert.Contains(t, stderr, "unknown setting(s) refraction")

	// Flags win over the config file: a tolerance of 0.001 mm flags all.
	code, _, _ = exitCode(t, bin, "reduce", "-config", job, "-quiet", "-tolerance", "0.001mm+0ppm")
	assert.Equal(t, 1, code)

	code, _, stderr = exitCode(t, bin, "reduce", "-config", job, "-crs", "EPSG:4326")
	assert.Equal(t, 2, code)
	assert.Contains(t, stderr, "is geographic")
}

// A target without a height is reduced from its zenith angle and k (the
// zenith route, DESIGN §4); a station without one cannot be, and its rows
// are rejected with the reason.
func TestReduceZenithRouteForUnknownTargetHeight(t *testing.T) {
	bin := buildBinary(t)
	job := writeJob(t, string(mustDemo(t, "demo/observations.csv")), "")
	pts := strings.Replace(string(mustDemo(t, "demo/points.csv")), "WATERTOWER,508115.883,5757036.219,61.350", "WATERTOWER,508115.883,5757036.219,", 1)
	require.NotEqual(t, string(mustDemo(t, "demo/points.csv")), pts)
	require.NoError(t, os.WriteFile(filepath.Join(filepath.Dir(job), "points.csv"), []byte(pts), 0o644))
	code, _, stderr := exitCode(t, bin, "reduce", "-config", job, "-quiet")
	require.Equal(t, 1, code, stderr)
	out := filepath.Join(filepath.Dir(job), "out")
	reduced, col := readColumns(t, filepath.Join(out, "reduced.csv"))
	zenith := 0
	for _, r := range reduced[1:] {
		if r[col["to"]] == "WATERTOWER" {
			assert.Equal(t, "zenith", r[col["route"]], "row %s", r[col["line"]])
			zenith++
		} else {
			assert.Equal(t, "heights", r[col["route"]], "row %s", r[col["line"]])
		}
	}
	assert.Equal(t, 4, zenith, "two sets each from SB-PILLAR2 and HILLTOP")
	rejects := readCSV(t, filepath.Join(out, "rejects.csv"))
	stationRejects := 0
	for _, r := range rejects[1:] {
		if strings.Contains(r[3], `station "WATERTOWER" has no height`) {
			stationRejects++
		}
	}
	assert.Equal(t, 4, stationRejects)
}

// A target height booked 0.5 m high on the 594 m line from NB-PILLAR1 to
// NB-PILLAR2 (obs 9, 1.500 m booked as 2.000 m) is flagged by its zenith
// angle: reduced.csv shows the difference and the flag, the line carries
// "height" in lines.csv, the run exits 1 — while its distance alone moves
// by only Δh/S · 0.5 m (the marks differ by 0.3 m: 0.25 mm) and is not an
// outlier. A zenith angle of 0 on the same line is rejected with the
// file, line, column and what was expected.
//
// Expected w by hand, with the defaults σ_z = 5″ and σ_k = 0.1 and the
// demo's height_mm = 1: 594 · 2.4241e-5 = 14.40 mm, 0.1 · 594²/2R =
// 2.77 mm, 1.41 mm for the heights: σ = 14.73 mm, w = 500/14.73 = 34,
// give or take the simulated 1.5″ of zenith noise (4.3 mm, 0.3 in w).
func TestReduceFlagsWrongTargetHeight(t *testing.T) {
	bin := buildBinary(t)
	rows := demoRows(t, func(r string) bool {
		return strings.Contains(r, ",NB-PILLAR1,NB-PILLAR2,") || strings.Contains(r, ",NB-PILLAR2,NB-PILLAR1,")
	})
	const right = "9,NB-PILLAR1,NB-PILLAR2,593.9714,90.02221,1.576,1.500,"
	require.Contains(t, rows, right)
	planted := strings.Replace(rows, right, "9,NB-PILLAR1,NB-PILLAR2,593.9714,90.02221,1.576,2.000,", 1)
	zero := "99,NB-PILLAR1,NB-PILLAR2,593.9714,0.0000,1.576,1.500,9.3,1008.3,74,\n"

	job := writeJob(t, rows, "")
	code, _, stderr := exitCode(t, bin, "reduce", "-config", job, "-quiet")
	require.Equal(t, 0, code, "the line booked right is clean: %s", stderr)

	job = writeJob(t, planted+zero, "")
	code, _, stderr = exitCode(t, bin, "reduce", "-config", job, "-quiet")
	require.Equal(t, 1, code, stderr)
	out := filepath.Join(filepath.Dir(job), "out")
	reduced, col := readColumns(t, filepath.Join(out, "reduced.csv"))
	for _, name := range []string{"height_target_from_zenith_m", "height_target_difference_m", "height_w", "height_flagged"} {
		require.Containsf(t, col, name, "reduced.csv has %s", name)
	}
	flagged := 0
	for _, r := range reduced[1:] {
		diff, err := strconv.ParseFloat(r[col["height_target_difference_m"]], 64)
		require.NoError(t, err)
		if r[col["obs_id"]] == "9" {
			assert.Equal(t, "yes", r[col["height_flagged"]])
			assert.InDelta(t, 0.5, diff, 0.02, "difference of the planted row (m)")
			w, err := strconv.ParseFloat(r[col["height_w"]], 64)
			require.NoError(t, err)
			assert.InDelta(t, 34, w, 2, "w of the planted row")
			assert.Equal(t, "no", r[col["outlier"]], "the distance alone does not expose it")
			flagged++
			continue
		}
		assert.Equalf(t, "no", r[col["height_flagged"]], "obs %s", r[col["obs_id"]])
		assert.InDeltaf(t, 0, diff, 0.02, "difference of obs %s (m)", r[col["obs_id"]])
	}
	assert.Equal(t, 1, flagged)

	lines := readCSV(t, filepath.Join(out, "lines.csv"))
	require.Len(t, lines, 2)
	assert.Contains(t, strings.Fields(lines[1][len(lines[1])-1]), report.FlagHeight)

	rejects := readCSV(t, filepath.Join(out, "rejects.csv"))
	require.Len(t, rejects, 2)
	assert.Contains(t, rejects[1][3], `:5: zenith_angle "0.0000": want a zenith angle in dms within 0..180 deg exclusive`)
}

// readColumns reads a CSV output and the index of each of its header's
// columns.
func readColumns(t *testing.T, path string) ([][]string, map[string]int) {
	t.Helper()
	rows := readCSV(t, path)
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	return rows, col
}
