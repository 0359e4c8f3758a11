package main

import (
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/baselines"
	"github.com/geored/geored/io/obsfile"
)

// readme is the project's README, which these tests hold to the program.
func readme(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "README.md"))
	require.NoError(t, err)
	return string(b)
}

// readmeSection is the README's text from the heading title to the next
// heading of the same or a higher level.
func readmeSection(t *testing.T, title string) string {
	t.Helper()
	s := readme(t)
	i := strings.Index(s, title+"\n")
	require.GreaterOrEqual(t, i, 0, "README has no heading %q", title)
	level := strings.Index(title, " ")
	rest := s[i+len(title)+1:]
	for _, h := range regexp.MustCompile(`(?m)^#+ `).FindAllStringIndex(rest, -1) {
		if h[1]-h[0]-1 <= level {
			return rest[:h[0]]
		}
	}
	return rest
}

// tableColumns are the CSV column names in the first cell of each row of
// the section's table: `name`, `a`, `b`, and `cov_xx` … `cov_zz`.
func tableColumns(section string) []string {
	var out []string
	for _, l := range strings.Split(section, "\n") {
		if !strings.HasPrefix(l, "| `") {
			continue
		}
		cell, _, _ := strings.Cut(strings.TrimPrefix(l, "| "), " |")
		if a, b, ok := strings.Cut(cell, " … "); ok {
			out = append(out, covColumns(strings.Trim(a, "`"), strings.Trim(b, "`"))...)
			continue
		}
		for _, m := range regexp.MustCompile("`([a-z_]+)`").FindAllStringSubmatch(cell, -1) {
			out = append(out, m[1])
		}
	}
	return out
}

// covColumns are the six terms of a symmetric covariance from first to
// last, e.g. cov_xx … cov_zz.
func covColumns(first, last string) []string {
	if first != "cov_xx" || last != "cov_zz" {
		return []string{first, last}
	}
	return []string{"cov_xx", "cov_xy", "cov_xz", "cov_yy", "cov_yz", "cov_zz"}
}

// The README's file-format tables name every column the readers take,
// and no other.
func TestReadmeListsEveryInputColumn(t *testing.T) {
	for _, c := range []struct {
		section string
		want    []string
	}{
		{"### points.csv (the job's `points`)", obsfile.PointColumns()},
		{"### observations.csv (the job's `observations`)", obsfile.ObservationColumns()},
		{"### baselines.csv (`geored audit`)", baselines.Columns},
	} {
		got := tableColumns(readmeSection(t, c.section))
		want := slices.Clone(c.want)
		slices.Sort(got)
		slices.Sort(want)
		assert.Equal(t, want, got, c.section)
	}
}

// The README's example job runs as written on the demo's files and gives
// the demo's lines.
func TestReadmeExampleJobRuns(t *testing.T) {
	sec := readmeSection(t, "### The job file (TOML)")
	m := regexp.MustCompile("(?s)```toml\n(.*?)```").FindStringSubmatch(sec)
	require.NotNil(t, m, "no toml block in the README's job file section")
	dir := t.TempDir()
	require.NoError(t, os.WriteFile(filepath.Join(dir, "job.toml"), []byte(m[1]), 0o644))
	for _, n := range []string{"points.csv", "observations.csv"} {
		b, err := demoFiles.ReadFile("demo/" + n)
		require.NoError(t, err)
		require.NoError(t, os.WriteFile(filepath.Join(dir, n), b, 0o644))
	}
	out := filepath.Join(dir, "out")
	code, _, stderr := runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-out", out, "-quiet")
	require.Equal(t, 1, code, stderr) // the demo's blunders

	demoOut := filepath.Join(t.TempDir(), "demo")
	code, _, stderr = runCmd(t, "demo", "-out", demoOut, "-quiet")
	require.Equal(t, 1, code, stderr)
	a, err := os.ReadFile(filepath.Join(demoOut, "lines.csv"))
	require.NoError(t, err)
	b, err := os.ReadFile(filepath.Join(out, "lines.csv"))
	require.NoError(t, err)
	assert.Equal(t, string(a), string(b))
}
