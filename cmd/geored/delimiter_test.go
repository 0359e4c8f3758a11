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

// rewriteCSV writes a comma file's rows (comments kept) delimited by
// delim, with each number's decimal point a comma where comma is set.
func rewriteCSV(t *testing.T, text string, delim rune, comma bool) string {
	t.Helper()
	var b strings.Builder
	for _, line := range strings.SplitAfter(text, "\n") {
		if line == "" || strings.HasPrefix(line, "#") {
			b.WriteString(line)
			continue
		}
		rec, err := csv.NewReader(strings.NewReader(line)).Read()
		require.NoError(t, err, line)
		for i, f := range rec {
			if _, err := strconv.ParseFloat(f, 64); err == nil && comma {
				rec[i] = strings.Replace(f, ".", ",", 1)
			}
		}
		w := csv.NewWriter(&b)
		w.Comma = delim
		require.NoError(t, w.Write(rec))
		w.Flush()
	}
	return b.String()
}

// The demo's points and observations written with semicolons and decimal
// commas, or with tabs (decimal points or commas), reduce as the comma
// files do: reduced.csv and lines.csv the same byte for byte, the same
// rows rejected for the same reasons, found with the delimiter
// automatically and given by -delimiter.
func TestReduceSemicolonAndTabFiles(t *testing.T) {
	root := t.TempDir()
	comma := filepath.Join(root, "comma")
	code, _, stderr := runCmd(t, "demo", "-inputs", comma, "-out", filepath.Join(root, "demo-out"), "-quiet")
	require.Equal(t, exitFlagged, code, stderr)
	reduceIn := func(dir string, args ...string) {
		t.Helper()
		code, _, stderr := runCmd(t, append([]string{"reduce", "-config", filepath.Join(dir, "job.toml"), "-out", filepath.Join(dir, "out"), "-quiet"}, args...)...)
		require.Equal(t, exitFlagged, code, "the demo's blunders are flagged\n%s", stderr)
	}
	reduceIn(comma)
	outputs := func(dir string) map[string]string {
		m := map[string]string{}
		for _, name := range []string{"reduced.csv", "lines.csv"} {
			m[name] = strings.ReplaceAll(readFile(t, filepath.Join(dir, "out", name)), dir, "JOB")
		}
		return m
	}
	want := outputs(comma)
	wantRejects := readCSV(t, filepath.Join(comma, "out", "rejects.csv"))
	require.Len(t, wantRejects, 3, "the demo's two rejects")
	wantCounts := readSummary(t, filepath.Join(comma, "out", "summary.json")).Counts

	for _, c := range []struct {
		name   string
		delim  rune
		comma  bool
		option string
	}{
		{"semicolon", ';', true, ";"},
		{"semicolon-point", ';', false, ";"},
		{"tab", '\t', false, "tab"},
		{"tab-comma", '\t', true, "tab"},
	} {
		dir := filepath.Join(root, c.name)
		require.NoError(t, os.MkdirAll(dir, 0o755))
		require.NoError(t, os.WriteFile(filepath.Join(dir, "job.toml"), []byte(readFile(t, filepath.Join(comma, "job.toml"))), 0o644))
		for _, name := range []string{"points.csv", "observations.csv"} {
			text := rewriteCSV(t, readFile(t, filepath.Join(comma, name)), c.delim, c.comma)
			require.NotContains(t, text, ",PILLAR", "rewritten")
			require.NoError(t, os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644))
		}
		for _, args := range [][]string{nil, {"-delimiter", c.option}} {
			reduceIn(dir, args...)
			assert.Equal(t, want, outputs(dir), "%s %v", c.name, args)
			sum := readSummary(t, filepath.Join(dir, "out", "summary.json"))
			assert.Equal(t, wantCounts, sum.Counts, c.name)
			// summary.json says how the observations were read.
			obs := sum.Inputs[len(sum.Inputs)-1]
			mark := map[bool]string{true: ",", false: "."}[c.comma]
			assert.Equal(t, []string{"csv", c.option, mark}, []string{obs.Format, obs.Delimiter, obs.DecimalMark}, c.name)
			rejects := readCSV(t, filepath.Join(dir, "out", "rejects.csv"))
			require.Len(t, rejects, len(wantRejects), c.name)
			for i, r := range rejects[1:] {
				w := wantRejects[i+1]
				// file, line, raw (as written, with its delimiter), reason
				assert.Equal(t, strings.ReplaceAll(w[0], comma, dir), r[0], c.name)
				assert.Equal(t, w[1], r[1], c.name)
				raw, err := csv.NewReader(strings.NewReader(w[2])).Read()
				require.NoError(t, err)
				reason := strings.ReplaceAll(w[3], comma, dir)
				for j, f := range raw {
					if _, err := strconv.ParseFloat(f, 64); err == nil && c.comma && strings.Contains(f, ".") {
						raw[j] = strings.Replace(f, ".", ",", 1)
						reason = strings.ReplaceAll(reason, `"`+f+`"`, `"`+raw[j]+`"`)
					}
				}
				assert.Equal(t, strings.Join(raw, string(c.delim)), r[2], c.name)
				assert.Equal(t, reason, r[3], c.name)
			}
		}
	}
}

// A points file written with semicolons under a job that says commas
// fails at its header with the delimiter the job gave; an observation
// file with a decimal comma in a comma file is rejected at its line and
// column.
func TestReduceDelimiterErrors(t *testing.T) {
	root := t.TempDir()
	dir := filepath.Join(root, "job")
	code, _, stderr := runCmd(t, "demo", "-inputs", dir, "-out", filepath.Join(root, "demo-out"), "-quiet")
	require.Equal(t, exitFlagged, code, stderr)
	pts := filepath.Join(dir, "points.csv")
	commaPoints := readFile(t, pts)
	require.NoError(t, os.WriteFile(pts, []byte(rewriteCSV(t, commaPoints, ';', true)), 0o644))
	code, _, stderr = runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-out", filepath.Join(root, "out"), "-quiet", "-delimiter", ",")
	assert.Equal(t, exitFailed, code)
	assert.Contains(t, stderr, "points.csv:5: header: missing required column(s) id; found id;easting;northing;elevation (the columns split at ',', as the job's delimiter setting says; set delimiter")

	code, _, stderr = runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-out", filepath.Join(root, "out"), "-quiet", "-delimiter", "|")
	assert.Equal(t, exitFailed, code)
	assert.Contains(t, stderr, `delimiter: "|": want "auto"`)

	require.NoError(t, os.WriteFile(pts, []byte(commaPoints), 0o644))
	obs := filepath.Join(dir, "observations.csv")
	text := readFile(t, obs)
	first := strings.Index(text, "\n1,NB-PILLAR1,SB-PILLAR1,662.6729,")
	require.Positive(t, first, "the demo's first row")
	line := strings.Count(text[:first+1], "\n") + 1
	text = strings.Replace(text, ",662.6729,", `,"662,6729",`, 1)
	require.NoError(t, os.WriteFile(obs, []byte(text), 0o644))
	code, _, stderr = runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-out", filepath.Join(root, "out"), "-quiet")
	assert.Equal(t, exitFlagged, code, stderr)
	rejects := readFile(t, filepath.Join(root, "out", "rejects.csv"))
	assert.Contains(t, rejects, "observations.csv:"+strconv.Itoa(line)+`:4: slope_distance ""662,6729"": want a slope distance in m; a decimal comma is read only in a semicolon- or tab-delimited file (this one is delimited by ',')`)
}
