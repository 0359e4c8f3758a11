package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/reduce"
)

// Unix habits on the built binary: flags after file names, "--", "-" for
// standard input, command-line files replacing the job's list.
func TestCommandLineHabits(t *testing.T) {
	bin := buildBinary(t)
	all := string(mustDemo(t, "demo/observations.csv"))
	job := writeJob(t, all, "") // the job lists observations.csv: 38 rows
	dir := filepath.Dir(job)
	clean := demoRows(t, func(r string) bool { return strings.Contains(r, ",NB-PILLAR1,NB-PILLAR2,") })
	cleanFile := filepath.Join(dir, "clean.csv")
	require.NoError(t, os.WriteFile(cleanFile, []byte(clean), 0o644))
	out := filepath.Join(dir, "out")

	// a flag after the file: read as a flag, and the file replaces the list
	code, stdout, stderr := exitCode(t, bin, "reduce", "-config", job, cleanFile, "-quiet")
	require.Equal(t, 0, code, stderr)
	assert.Empty(t, stdout, "-quiet after the file is a flag")
	s := readSummary(t, filepath.Join(out, "summary.json"))
	assert.Equal(t, 2, s.Counts.Read, "the file named replaces the job's observations.csv, not added to it")

	// "--" ends the flags: a file named -quiet is a file
	dash := filepath.Join(dir, "-quiet")
	require.NoError(t, os.WriteFile(dash, []byte(clean), 0o644))
	cmd := exec.Command(bin, "reduce", "-config", job, "-json", "--", "-quiet")
	cmd.Dir = dir
	b, err := cmd.Output()
	require.NoError(t, err)
	assert.Contains(t, string(b), `"read":2`)

	// "-" reads standard input, hashed and counted as a file, named stdin;
	// with job_alpha too (copied to a temporary file to be counted)
	for _, extra := range []string{"", "job_alpha = 0.05"} {
		j := writeJob(t, all, extra)
		cmd := exec.Command(bin, "reduce", "-config", j, "-quiet", "-")
		cmd.Stdin = strings.NewReader(clean)
		var e bytes.Buffer
		cmd.Stderr = &e
		err := cmd.Run()
		require.NoError(t, err, "%s: %s", extra, e.String())
		s := readSummary(t, filepath.Join(filepath.Dir(j), "out", "summary.json"))
		require.Len(t, s.Inputs, 2)
		h := sha256.Sum256([]byte(clean))
		assert.Equal(t, report.InputFile{Role: "observations", Path: "stdin", SHA256: hex.EncodeToString(h[:]), Rows: 2,
			Format: "csv", Delimiter: ",", DecimalMark: "."}, s.Inputs[1], extra)
	}
	code, _, stderr = exitCode(t, bin, "reduce", "-config", job, "-", "-")
	assert.Equal(t, 2, code)
	assert.Contains(t, stderr, `standard input ("-") can be read once`)
}

// The top level answers --help, -h, help, help CMD and --version.
func TestTopLevelHelpAndVersion(t *testing.T) {
	bin := buildBinary(t)
	for _, args := range [][]string{{"--help"}, {"-h"}, {"help"}} {
		code, stdout, _ := exitCode(t, bin, args...)
		assert.Equal(t, 0, code, "%v", args)
		assert.Contains(t, stdout, "Usage: geored <command>", "%v", args)
	}
	code, stdout, _ := exitCode(t, bin, "--version")
	assert.Equal(t, 0, code)
	assert.True(t, strings.HasPrefix(stdout, "geored "), stdout)
	assert.Contains(t, stdout, "PROJ ")
	code, _, stderr := exitCode(t, bin, "help", "reduce")
	assert.Equal(t, 0, code)
	assert.Contains(t, stderr, "Usage: geored reduce")
}

// helpFlags are the flag names a command's -help lists.
func helpFlags(t *testing.T, cmd string) []string {
	t.Helper()
	code, _, stderr := runCmd(t, cmd, "-help")
	require.Equal(t, 0, code)
	var names []string
	for _, line := range strings.Split(stderr, "\n") {
		if f, ok := strings.CutPrefix(line, "  -"); ok {
			names = append(names, strings.Fields(f)[0])
		}
	}
	return names
}

// Each command's -help lists the flags that command uses, and no others.
func TestHelpListsOnlyFlagsUsed(t *testing.T) {
	assert.ElementsMatch(t, append([]string{"pairs", "csv"}, predictFlags...), helpFlags(t, "predict"))
	assert.ElementsMatch(t, []string{"config", "crs", "points", "length-unit", "angle-unit", "geoid", "geoid-separation-m", "delimiter",
		"from", "to", "lines", "a", "b", "csv"}, helpFlags(t, "inverse"))
	sl := helpFlags(t, "sightline")
	for _, n := range []string{"tolerance", "critical", "job-alpha", "out", "workers", "wavelength-um", "spec", "angle-unit", "default-atmosphere"} {
		assert.NotContains(t, sl, n, "sightline -help")
	}
	assert.Contains(t, helpFlags(t, "reduce"), "tolerance")
	// the accuracy class names are in reduce's and init's help
	for _, cmd := range []string{"reduce", "init"} {
		_, _, stderr := runCmd(t, cmd, "-help")
		for _, n := range reduce.AccuracyClasses() {
			assert.Contains(t, stderr, n, cmd)
		}
	}
}

// inverse reads the job file and prints angles in its angle unit: the
// 20 km WGS 84 line of TestInverseCSVAgainstGeodSolve (GeodSolve 2.1.2,
// azi1 = −63.983716463997524°) in gon is (360 − 63.9837…)·400/360.
func TestInverseTakesConfigAndAngleUnit(t *testing.T) {
	dir := t.TempDir()
	job := filepath.Join(dir, "job.toml")
	require.NoError(t, os.WriteFile(job, []byte("crs = \"EPSG:32614\"\nangle_unit = \"gon\"\ngeoid = \"none\"\n"), 0o644))
	code, out, stderr := runCmd(t, "inverse", "-config", job, "-a", "66.445848116,-100.419110116", "-b", "66.523994116044705,-100.823270782800293", "-csv")
	require.Equal(t, exitOK, code, stderr)
	rows := strings.Split(strings.TrimSpace(out), "\n")
	require.Len(t, rows, 2)
	head, vals := strings.Split(rows[0], ","), strings.Split(rows[1], ",")
	assert.Equal(t, "azimuth_gon", head[3])
	assert.InDelta(t, (360-63.983716463997524)*400/360, num(t, vals[3]), 1e-5/3600*400/360)
}

// A job that gives only its CRS hears of everything it lacks at once.
func TestReduceReportsEveryMissingSetting(t *testing.T) {
	dir := t.TempDir()
	job := filepath.Join(dir, "job.toml")
	require.NoError(t, os.WriteFile(job, []byte("crs = \"EPSG:25832\"\n"), 0o644))
	code, _, stderr := runCmd(t, "reduce", "-config", job)
	assert.Equal(t, exitFailed, code)
	for _, key := range []string{"points", "observations", "tolerance", "instrument"} {
		assert.Contains(t, stderr, job+": "+key+": missing")
	}
}

// tomlKeys lists every key of the job file's TOML form.
func tomlKeys(t reflect.Type) []string {
	var keys []string
	for i := 0; i < t.NumField(); i++ {
		f := t.Field(i)
		name := strings.Split(f.Tag.Get("toml"), ",")[0]
		keys = append(keys, name)
		ft := f.Type
		for ft.Kind() == reflect.Pointer || ft.Kind() == reflect.Map {
			ft = ft.Elem()
		}
		if ft.Kind() == reflect.Struct {
			keys = append(keys, tomlKeys(ft)...)
		}
	}
	return keys
}

// geored init writes a starter job that names every setting and the
// accuracy classes, runs as written on its files, and replaces nothing
// unless asked.
func TestInitWritesAStarterJobThatRuns(t *testing.T) {
	bin := buildBinary(t)
	for _, tc := range [][]string{{"EPSG:25832", "m", "dms"}, {"EPSG:2231", "us-ft", "gon"}, {"+proj=utm +zone=33 +ellps=GRS80", "intl-ft", "deg"}} {
		dir := filepath.Join(t.TempDir(), "job")
		code, _, stderr := exitCode(t, bin, "init", "-crs", tc[0], "-length-unit", tc[1], "-angle-unit", tc[2], "-dir", dir)
		require.Equal(t, 0, code, "%v: %s", tc, stderr)
		text, err := os.ReadFile(filepath.Join(dir, "job.toml"))
		require.NoError(t, err)
		for _, k := range tomlKeys(reflect.TypeOf(jobconfig.File{})) {
			assert.Contains(t, string(text), k, "%v: the starter names %s", tc, k)
		}
		for _, n := range reduce.AccuracyClasses() {
			assert.Contains(t, string(text), n)
		}
		code, _, stderr = exitCode(t, bin, "reduce", "-config", filepath.Join(dir, "job.toml"), "-quiet")
		assert.Contains(t, []int{0, 1}, code, "%v runs as written: %s", tc, stderr)
		s := readSummary(t, filepath.Join(dir, "geored-out", "summary.json"))
		assert.Equal(t, 6, s.Counts.Reduced, "%v", tc)

		code, _, stderr = exitCode(t, bin, "init", "-crs", tc[0], "-dir", dir)
		assert.Equal(t, 2, code)
		assert.Contains(t, stderr, "exists: give -force")
		after, _ := os.ReadFile(filepath.Join(dir, "job.toml"))
		assert.Equal(t, text, after, "nothing replaced")
		code, _, _ = exitCode(t, bin, "init", "-crs", tc[0], "-dir", dir, "-force")
		assert.Equal(t, 0, code)
	}
}

// geored demo writes its inputs beside its outputs; their job file
// reproduces the demo's results; an edited input is kept.
func TestDemoWritesItsInputs(t *testing.T) {
	bin := buildBinary(t)
	dir := t.TempDir()
	demoOut := filepath.Join(dir, "d")
	code, _, stderr := exitCode(t, bin, "demo", "-out", demoOut, "-quiet")
	require.Equal(t, 1, code, stderr)
	inputs := demoOut + "-job"
	for _, n := range demoInputFiles {
		assert.FileExists(t, filepath.Join(inputs, n))
	}
	again := filepath.Join(dir, "again")
	code, _, stderr = exitCode(t, bin, "reduce", "-config", filepath.Join(inputs, "job.toml"), "-out", again, "-quiet")
	require.Equal(t, 1, code, stderr)
	strip := func(path string) string { // the file column names the inputs' place
		b, err := os.ReadFile(path)
		require.NoError(t, err)
		var out []string
		for _, l := range strings.Split(string(b), "\n") {
			_, rest, _ := strings.Cut(l, ",")
			out = append(out, rest)
		}
		return strings.Join(out, "\n")
	}
	assert.Equal(t, strip(filepath.Join(demoOut, "reduced.csv")), strip(filepath.Join(again, "reduced.csv")))
	a, _ := os.ReadFile(filepath.Join(demoOut, "lines.csv"))
	b, _ := os.ReadFile(filepath.Join(again, "lines.csv"))
	assert.Equal(t, string(a), string(b))

	edited := filepath.Join(inputs, "points.csv")
	require.NoError(t, os.WriteFile(edited, []byte("id,lat,lon\nX,52,9\n"), 0o644))
	code, stdout, _ := exitCode(t, bin, "demo", "-out", demoOut)
	assert.Equal(t, 1, code)
	assert.Contains(t, stdout, edited+" differs from the demo's and was left as it is")
	kept, _ := os.ReadFile(edited)
	assert.Equal(t, "id,lat,lon\nX,52,9\n", string(kept))
}
