package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/report"
)

// badInputDir holds the bad-input corpus, one folder a case:
//
//	observations.csv, points.csv  the case's inputs, copied as they are
//	                              (points.csv defaults to the demo's)
//	recipe                        inputs made by the test, for bytes that
//	                              are big (1 MB of NULs) or that git might
//	                              alter (CR, CRLF, binary): see runRecipe
//	job-extra.toml                tables appended to the demo's job file
//	                              (a small [limits], say)
//	status.golden                 the exit status, summary.json's counts
//	                              and reduce's stderr
//	rejects.csv.golden            rejects.csv, when an output set is written
//
// `go test ./cmd/geored -run Golden -update` rewrites the goldens; read
// the diff: every reject must name the file, the line, the column, the
// value (clipped) and what was expected.
const badInputDir = "testdata/badinput"

// TestBadInputGolden runs geored reduce on each case of the bad-input
// corpus and compares its exit status, stderr and rejects.csv with the
// goldens. Whatever the case, nothing is dropped (read = reduced +
// rejected, in summary.json and in the files' rows), no message line
// echoes a huge value, and each reject starts with its file and line.
func TestBadInputGolden(t *testing.T) {
	entries, err := os.ReadDir(badInputDir)
	require.NoError(t, err)
	got := map[string][2]string{}
	for _, e := range entries {
		if !e.IsDir() {
			continue
		}
		name := e.Name()
		t.Run(name, func(t *testing.T) {
			status, rejects := runBadInput(t, filepath.Join(badInputDir, name))
			got[name] = [2]string{status, rejects}
			compareGolden(t, filepath.Join(badInputDir, name, "status.golden"), status)
			compareGolden(t, filepath.Join(badInputDir, name, "rejects.csv.golden"), rejects)
		})
	}
	require.GreaterOrEqual(t, len(got), 20, "the corpus is in %s", badInputDir)
	// The same rows with LF, CRLF or CR alone give the same outputs.
	for _, name := range []string{"line-ends-crlf", "line-ends-cr"} {
		assert.Equal(t, got["line-ends-lf"], got[name], "%s differs from line-ends-lf", name)
	}
}

// compareGolden compares got with the golden file, rewriting it with
// -update; an empty got means the file must not exist.
func compareGolden(t *testing.T, golden, got string) {
	t.Helper()
	if *update {
		if got == "" {
			require.NoError(t, os.RemoveAll(golden))
		} else {
			require.NoError(t, os.WriteFile(golden, []byte(got), 0o644))
		}
	}
	want, err := os.ReadFile(golden)
	if got == "" {
		assert.True(t, os.IsNotExist(err), "%s exists, and this run wrote no such output", golden)
		return
	}
	require.NoError(t, err, "run with -update to write it")
	assert.Equal(t, string(want), got, "differs from %s", golden)
}

// maxMessageLine bounds a line of stderr and a reject's reason: a value
// is shown clipped to 200 bytes (obsfile.Clip), so a longer line echoes
// more of the input than it should.
const maxMessageLine = 600

// rejectWhere is how a reject's reason starts: its file and line.
var rejectWhere = regexp.MustCompile(`^([^:]+):(\d+)[:,]`)

// runBadInput sets up the case in a temporary folder, runs geored reduce
// on it in process and returns the status text and rejects.csv ("" when
// no output set was written), with the folder's path taken out.
func runBadInput(t *testing.T, caseDir string) (status, rejects string) {
	t.Helper()
	dir := t.TempDir()
	files, err := os.ReadDir(caseDir)
	require.NoError(t, err)
	for _, f := range files {
		if f.Name() == "recipe" || f.Name() == "job-extra.toml" || strings.HasSuffix(f.Name(), ".golden") {
			continue
		}
		b, err := os.ReadFile(filepath.Join(caseDir, f.Name()))
		require.NoError(t, err)
		require.NoError(t, os.WriteFile(filepath.Join(dir, f.Name()), b, 0o644))
	}
	if _, err := os.Stat(filepath.Join(caseDir, "recipe")); err == nil {
		runRecipe(t, caseDir, dir)
	}
	if _, err := os.Stat(filepath.Join(dir, "points.csv")); os.IsNotExist(err) {
		require.NoError(t, os.WriteFile(filepath.Join(dir, "points.csv"), mustDemo(t, "demo/points.csv"), 0o644))
	}
	extra, err := os.ReadFile(filepath.Join(caseDir, "job-extra.toml"))
	if err != nil && !os.IsNotExist(err) {
		require.NoError(t, err)
	}
	jobText := "out = \"out\"\n" + string(mustDemo(t, "demo/job.toml")) + "\n" + string(extra)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "job.toml"), []byte(jobText), 0o644))

	code, _, stderr := runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"))
	stderr = strings.ReplaceAll(stderr, dir+string(filepath.Separator), "")
	for i, line := range strings.Split(stderr, "\n") {
		assert.LessOrEqual(t, len(line), maxMessageLine, "stderr line %d echoes too much: %.300q…", i+1, line)
	}

	var b strings.Builder
	fmt.Fprintf(&b, "exit status %d\n", code)
	out := filepath.Join(dir, "out")
	sumBytes, err := os.ReadFile(filepath.Join(out, "summary.json"))
	if os.IsNotExist(err) {
		b.WriteString("no output set written\n")
		entries, _ := os.ReadDir(out)
		assert.Empty(t, entries, "a run that wrote no summary left files")
	} else {
		require.NoError(t, err)
		var sum report.Summary
		require.NoError(t, json.Unmarshal(sumBytes, &sum))
		c := sum.Counts
		fmt.Fprintf(&b, "summary.json: read %d = reduced %d + rejected %d\n", c.Read, c.Reduced, c.Rejected)
		assert.Equal(t, c.Read, c.Reduced+c.Rejected, "read = reduced + rejected")
		assert.Equal(t, c.Reduced, len(readCSV(t, filepath.Join(out, "reduced.csv")))-1, "rows of reduced.csv")
		recs := readCSV(t, filepath.Join(out, "rejects.csv"))
		assert.Equal(t, c.Rejected, len(recs)-1, "rows of rejects.csv")
		for _, r := range recs[1:] {
			reason := strings.ReplaceAll(r[3], dir+string(filepath.Separator), "")
			m := rejectWhere.FindStringSubmatch(reason)
			if assert.NotNil(t, m, "reject without its file and line: %q", reason) {
				assert.Equal(t, strings.ReplaceAll(r[0], dir+string(filepath.Separator), ""), m[1], "file of %q", reason)
				assert.Equal(t, r[1], m[2], "line of %q", reason)
			}
			assert.LessOrEqual(t, len(reason), maxMessageLine, "reason echoes too much: %.300q…", reason)
		}
		rj, err := os.ReadFile(filepath.Join(out, "rejects.csv"))
		require.NoError(t, err)
		rejects = strings.ReplaceAll(string(rj), dir+string(filepath.Separator), "")
	}
	b.WriteString("stderr:\n")
	b.WriteString(stderr)
	return b.String(), rejects
}

// runRecipe makes a case's generated inputs from its recipe, a line an
// operation that appends to a file of the case (# starts a comment):
//
//	FILE text "GO STRING"          the string, Go-quoted ("\x00", "\r\n", "\ufeff")
//	FILE repeat N "GO STRING"      the string N times, {i} in it replaced by 1, 2, …
//	FILE eol PATH "GO STRING"      the file PATH (from the case folder) with
//	                               each LF replaced by the string
func runRecipe(t *testing.T, caseDir, dir string) {
	t.Helper()
	f, err := os.Open(filepath.Join(caseDir, "recipe"))
	require.NoError(t, err)
	defer f.Close()
	out := map[string]*strings.Builder{}
	var order []string
	sc := bufio.NewScanner(f)
	sc.Buffer(nil, 1<<20)
	for n := 1; sc.Scan(); n++ {
		line := strings.TrimSpace(sc.Text())
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		file, rest, _ := strings.Cut(line, " ")
		op, rest, _ := strings.Cut(strings.TrimSpace(rest), " ")
		rest = strings.TrimSpace(rest)
		where := fmt.Sprintf("%s/recipe:%d", caseDir, n)
		b, ok := out[file]
		if !ok {
			b = &strings.Builder{}
			out[file] = b
			order = append(order, file)
		}
		switch op {
		case "text":
			s, err := strconv.Unquote(rest)
			require.NoError(t, err, where)
			b.WriteString(s)
		case "repeat":
			count, quoted, _ := strings.Cut(rest, " ")
			k, err := strconv.Atoi(count)
			require.NoError(t, err, where)
			s, err := strconv.Unquote(strings.TrimSpace(quoted))
			require.NoError(t, err, where)
			for i := 1; i <= k; i++ {
				b.WriteString(strings.ReplaceAll(s, "{i}", strconv.Itoa(i)))
			}
		case "eol":
			path, quoted, _ := strings.Cut(rest, " ")
			src, err := os.ReadFile(filepath.Join(caseDir, path))
			require.NoError(t, err, where)
			s, err := strconv.Unquote(strings.TrimSpace(quoted))
			require.NoError(t, err, where)
			b.WriteString(strings.ReplaceAll(string(src), "\n", s))
		default:
			t.Fatalf("%s: unknown operation %q", where, op)
		}
	}
	require.NoError(t, sc.Err())
	for _, file := range order {
		require.NoError(t, os.WriteFile(filepath.Join(dir, file), []byte(out[file].String()), 0o644))
	}
}
