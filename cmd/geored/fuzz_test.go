package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/report"
)

// fuzzJobText is the demo's job with a constant geoid separation (no
// grid to open per run), one worker and small limits, so that inputs
// reach the limits within the fuzzer's few kilobytes.
func fuzzJobText(demoJob []byte) string {
	return "out = \"out\"\ngeoid = \"none\"\ngeoid_separation_m = 47.6\nworkers = 1\n" + string(demoJob) +
		"\n[limits]\nmax_line_bytes = 2048\nmax_field_bytes = 256\nmax_columns = 40\nmax_points = 50\n"
}

// textColumns are the output columns that echo the input's words, which
// may read "NaN" as written; every other column that holds numbers in
// the demo's outputs must hold finite numbers (or nothing) in any run.
var textColumns = []string{"file", "line", "obs_id", "from", "to", "instrument", "route"}

// numericColumns are the columns of a golden CSV of the demo that hold a
// number in each of its rows that fills them.
func numericColumns(t testing.TB, golden string) map[string]bool {
	t.Helper()
	b, err := os.ReadFile(golden)
	require.NoError(t, err)
	recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	require.NoError(t, err)
	num := map[string]bool{}
	for i, name := range recs[0] {
		if slices.Contains(textColumns, name) {
			continue
		}
		filled, ok := 0, true
		for _, r := range recs[1:] {
			if r[i] == "" {
				continue
			}
			filled++
			if _, err := strconv.ParseFloat(r[i], 64); err != nil {
				ok = false
			}
		}
		num[name] = ok && filled > 0
	}
	return num
}

// FuzzReduceCommand runs geored reduce, in process, on an observations
// file and a points file from the fuzzer, with the demo's settings: no
// input panics; the run exits 0, 1 or 2; a run that writes no output set
// leaves nothing in the output folder; and one that does writes no NaN
// or infinity in reduced.csv, lines.csv or summary.json, and counts every
// row: read = reduced + rejected, in summary.json and in the files' rows.
// `go test ./cmd/geored -run '^$' -fuzz FuzzReduceCommand` explores
// further than the seeds (testdata/fuzz/FuzzReduceCommand: the demo and
// the bad-input corpus, TestFuzzSeedsGolden). Each run opens its own PROJ
// handles, as the command does.
func FuzzReduceCommand(f *testing.F) {
	jobText := fuzzJobText(demoFile(f, "demo/job.toml"))
	numeric := map[string]map[string]bool{
		"reduced.csv": numericColumns(f, "testdata/demo/reduced.csv.golden"),
		"lines.csv":   numericColumns(f, "testdata/demo/lines.csv.golden"),
	}
	for file, cols := range numeric {
		n := 0
		for _, ok := range cols {
			if ok {
				n++
			}
		}
		require.Greater(f, n, 10, "numeric columns of %s", file)
	}
	f.Add(demoFile(f, "demo/observations.csv"), demoFile(f, "demo/points.csv"))
	f.Fuzz(func(t *testing.T, obs, pts []byte) {
		dir := t.TempDir()
		for name, b := range map[string][]byte{"observations.csv": obs, "points.csv": pts, "job.toml": []byte(jobText)} {
			if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		var stdout, stderr bytes.Buffer
		code := run([]string{"reduce", "-config", filepath.Join(dir, "job.toml"), "-quiet"}, &stdout, &stderr)
		checkReduceRun(t, filepath.Join(dir, "out"), code, stderr.String(), numeric)
	})
}

// demoFile is mustDemo for a fuzz target.
func demoFile(tb testing.TB, name string) []byte {
	tb.Helper()
	b, err := demoFiles.ReadFile(name)
	require.NoError(tb, err)
	return b
}

// checkReduceRun checks a run of geored reduce into out: its exit
// status, and the counts and numbers of the output set it wrote.
func checkReduceRun(t *testing.T, out string, code int, stderr string, numeric map[string]map[string]bool) {
	t.Helper()
	if code != exitOK && code != exitFlagged && code != exitFailed {
		t.Fatalf("exit status %d; stderr:\n%s", code, stderr)
	}
	for _, bad := range []string{"unsupported value", "panic"} {
		if strings.Contains(stderr, bad) {
			t.Fatalf("stderr says %q:\n%s", bad, stderr)
		}
	}
	sumBytes, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if errors.Is(err, os.ErrNotExist) {
		if code != exitFailed || stderr == "" {
			t.Fatalf("no output set, exit status %d, stderr %q", code, stderr)
		}
		if entries, _ := os.ReadDir(out); len(entries) > 0 {
			t.Fatalf("a run that wrote no output set left %s", entries[0].Name())
		}
		return
	}
	if err != nil {
		t.Fatal(err)
	}
	var sum report.Summary
	if err := json.Unmarshal(sumBytes, &sum); err != nil {
		t.Fatalf("summary.json: %v", err)
	}
	if sum.ExitStatus != code {
		t.Fatalf("exit status %d, summary.json says %d", code, sum.ExitStatus)
	}
	c := sum.Counts
	if c.Read != c.Reduced+c.Rejected {
		t.Fatalf("summary.json: read %d ≠ reduced %d + rejected %d", c.Read, c.Reduced, c.Rejected)
	}
	rows := map[string]int{}
	for _, name := range []string{"reduced.csv", "rejects.csv", "lines.csv"} {
		b, err := os.ReadFile(filepath.Join(out, name))
		if err != nil {
			t.Fatal(err)
		}
		recs, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
		if err != nil {
			t.Fatalf("%s is not CSV: %v", name, err)
		}
		rows[name] = len(recs) - 1
		cols := numeric[name]
		for _, r := range recs[1:] {
			for i, v := range r {
				if !cols[recs[0][i]] || v == "" {
					continue
				}
				if x, err := strconv.ParseFloat(v, 64); err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
					t.Fatalf("%s: %s = %q, want a finite number; row %q", name, recs[0][i], v, r)
				}
			}
		}
	}
	if rows["reduced.csv"] != c.Reduced || rows["rejects.csv"] != c.Rejected {
		t.Fatalf("reduced.csv has %d rows and rejects.csv %d; summary.json: reduced %d, rejected %d", rows["reduced.csv"], rows["rejects.csv"], c.Reduced, c.Rejected)
	}
	if rows["lines.csv"] != c.Lines {
		t.Fatalf("lines.csv has %d rows; summary.json: %d lines", rows["lines.csv"], c.Lines)
	}
}

// The fuzz targets' seed corpora are made from the demo and the
// bad-input corpus: testdata/fuzz/FuzzReduceCommand here (observations
// and points as files) and ../../reduce/job/testdata/fuzz/FuzzReduceRow
// (the rows of the observations under that target's fixed header, angles
// in dms as the demo's). `go test ./cmd/geored -run Golden -update`
// rewrites them; the fuzzers' own finds (files named by hash) stay.
func TestFuzzSeedsGolden(t *testing.T) {
	cmdSeeds := map[string]string{"demo": fuzzCorpusFile(mustDemo(t, "demo/observations.csv"), mustDemo(t, "demo/points.csv"))}
	rowSeeds := map[string]string{}
	for i, row := range demoDataRows(t) {
		rowSeeds[fmt.Sprintf("demo-%02d", i+1)] = fuzzCorpusFile(row, uint8(1))
	}
	entries, err := os.ReadDir(badInputDir)
	require.NoError(t, err)
	for _, e := range entries {
		if !e.IsDir() {
			continue
		}
		obs, pts, ok := badInputFiles(t, filepath.Join(badInputDir, e.Name()))
		if !ok {
			continue // too big for a seed
		}
		cmdSeeds["badinput-"+e.Name()] = fuzzCorpusFile(obs, pts)
		rowSeeds["badinput-"+e.Name()] = fuzzCorpusFile(rowsUnderFuzzHeader(obs), uint8(1))
	}
	require.Greater(t, len(cmdSeeds), 15)
	compareSeeds(t, filepath.Join("testdata", "fuzz", "FuzzReduceCommand"), cmdSeeds)
	compareSeeds(t, filepath.Join("..", "..", "reduce", "job", "testdata", "fuzz", "FuzzReduceRow"), rowSeeds)
}

// maxSeedBytes bounds a seed: the corpus's big cases (a megabyte of NULs)
// are left out, the fuzzer's inputs being small.
const maxSeedBytes = 16 << 10

// badInputFiles are a case's observations and points as the test makes
// them; false if either is over maxSeedBytes.
func badInputFiles(t *testing.T, caseDir string) (obs, pts []byte, ok bool) {
	t.Helper()
	dir := t.TempDir()
	for _, name := range []string{"observations.csv", "points.csv"} {
		if b, err := os.ReadFile(filepath.Join(caseDir, name)); err == nil {
			require.NoError(t, os.WriteFile(filepath.Join(dir, name), b, 0o644))
		}
	}
	if _, err := os.Stat(filepath.Join(caseDir, "recipe")); err == nil {
		runRecipe(t, caseDir, dir)
	}
	obs, err := os.ReadFile(filepath.Join(dir, "observations.csv"))
	require.NoError(t, err)
	pts, err = os.ReadFile(filepath.Join(dir, "points.csv"))
	if errors.Is(err, os.ErrNotExist) {
		pts, err = mustDemo(t, "demo/points.csv"), nil
	}
	require.NoError(t, err)
	return obs, pts, len(obs) <= maxSeedBytes && len(pts) <= maxSeedBytes
}

// rowSeedHeader is the header of reduce/job's FuzzReduceRow, under which
// it reads the rows of a seed.
var rowSeedHeader = []string{"obs_id", "from", "to", "slope_distance", "zenith_angle", "instrument_height", "target_height", "temperature_c", "pressure_hpa", "humidity_pct", "temperature_c_to", "pressure_hpa_to", "humidity_pct_to", "prism_constant_mm", "field_prism_constant_mm", "instrument"}

// rowsUnderFuzzHeader is the data rows of an observations file with their
// fields moved to rowSeedHeader's columns; a file that does not read as
// CSV with a header naming from gives its bytes after the first line, as
// they are.
func rowsUnderFuzzHeader(obs []byte) string {
	r := csv.NewReader(bytes.NewReader(obs))
	r.FieldsPerRecord, r.LazyQuotes, r.Comment = -1, true, '#'
	recs, err := r.ReadAll()
	if err != nil || len(recs) == 0 || !slices.Contains(recs[0], "from") {
		_, rest, _ := bytes.Cut(obs, []byte("\n"))
		return string(rest)
	}
	recs[0][0] = strings.TrimPrefix(recs[0][0], "\ufeff")
	at := make([]int, len(rowSeedHeader))
	for i, name := range rowSeedHeader {
		at[i] = slices.Index(recs[0], name)
	}
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	for _, rec := range recs[1:] {
		row := make([]string, len(rowSeedHeader))
		for i, k := range at {
			if k >= 0 && k < len(rec) {
				row[i] = rec[k]
			}
		}
		w.Write(row)
	}
	w.Flush()
	return b.String()
}

// demoDataRows are the demo's observation rows under rowSeedHeader, one
// a seed.
func demoDataRows(t *testing.T) []string {
	t.Helper()
	rows := strings.SplitAfter(rowsUnderFuzzHeader(mustDemo(t, "demo/observations.csv")), "\n")
	if rows[len(rows)-1] == "" {
		rows = rows[:len(rows)-1]
	}
	require.Greater(t, len(rows), 30)
	return rows
}

// fuzzCorpusFile is a seed in the format of go test's corpus files.
func fuzzCorpusFile(args ...any) string {
	var b strings.Builder
	b.WriteString("go test fuzz v1\n")
	for _, a := range args {
		switch v := a.(type) {
		case []byte:
			fmt.Fprintf(&b, "[]byte(%s)\n", strconv.Quote(string(v)))
		case string:
			fmt.Fprintf(&b, "string(%s)\n", strconv.Quote(v))
		case uint8:
			fmt.Fprintf(&b, "uint8(%d)\n", v)
		default:
			panic(fmt.Sprintf("no corpus form for %T", a))
		}
	}
	return b.String()
}

// compareSeeds compares the seeds with the corpus folder's files named
// demo* and badinput-*; -update rewrites them and removes stale ones.
func compareSeeds(t *testing.T, dir string, seeds map[string]string) {
	t.Helper()
	ours := func(name string) bool {
		return strings.HasPrefix(name, "demo") || strings.HasPrefix(name, "badinput-")
	}
	if *update {
		require.NoError(t, os.MkdirAll(dir, 0o755))
		entries, err := os.ReadDir(dir)
		require.NoError(t, err)
		for _, e := range entries {
			if _, keep := seeds[e.Name()]; ours(e.Name()) && !keep {
				require.NoError(t, os.Remove(filepath.Join(dir, e.Name())))
			}
		}
		for name, s := range seeds {
			require.NoError(t, os.WriteFile(filepath.Join(dir, name), []byte(s), 0o644))
		}
	}
	entries, err := os.ReadDir(dir)
	require.NoError(t, err, "run with -update to write the seeds")
	found := 0
	for _, e := range entries {
		if !ours(e.Name()) {
			continue
		}
		found++
		want, ok := seeds[e.Name()]
		if !assert.True(t, ok, "%s: a seed the corpus no longer makes", filepath.Join(dir, e.Name())) {
			continue
		}
		got, err := os.ReadFile(filepath.Join(dir, e.Name()))
		require.NoError(t, err)
		assert.Equal(t, want, string(got), "%s differs from what the corpus makes", filepath.Join(dir, e.Name()))
	}
	assert.Equal(t, len(seeds), found, "seeds in %s", dir)
}
