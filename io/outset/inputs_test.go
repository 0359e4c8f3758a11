package outset

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// An output that is, or holds, an input is refused before anything is
// written, however the paths name it: relative, through a symbolic link,
// by a hard link, or through the current folder.
func TestCheckInputs(t *testing.T) {
	root := t.TempDir()
	job := filepath.Join(root, "job")
	require.NoError(t, os.MkdirAll(filepath.Join(job, "field"), 0o755))
	obs := filepath.Join(job, "field", "observations.csv")
	require.NoError(t, os.WriteFile(obs, []byte("from,to\n"), 0o644))
	keep := []Keep{{Role: "the observations file", Path: obs}, {Role: "the points file", Path: filepath.Join(job, "missing.csv")}}
	require.NoError(t, os.Symlink(job, filepath.Join(root, "link")))
	require.NoError(t, os.Link(obs, filepath.Join(root, "hard.csv")))
	t.Chdir(root)

	for _, c := range []struct{ out, want string }{
		{filepath.Join(job, "field", "observations.csv"), "the output " + filepath.Join(job, "field", "observations.csv") + " is the observations file " + obs},
		{"job/field", "the output folder job/field holds the observations file " + obs + ", and a run replaces the folder whole"},
		{"job", "the output folder job holds the observations file"},
		{"link/field", "the output folder link/field holds the observations file"},
		{"hard.csv", "the output hard.csv is the observations file"},
		{".", "the output folder . holds the observations file"},
		{root, "holds the observations file"},
	} {
		err := CheckInputs(c.out, keep)
		if assert.Error(t, err, c.out) {
			assert.Contains(t, err.Error(), c.want, c.out)
		}
	}
	for _, ok := range []string{"out", "job/out", "link/out", "job/field/observations.csv.d"} {
		assert.NoError(t, CheckInputs(ok, keep), ok)
	}

	// The current folder is kept too: a run must not swap it away.
	t.Chdir(filepath.Join(job, "field"))
	assert.ErrorContains(t, CheckInputs(job, nil), "holds the current folder")
	assert.ErrorContains(t, CheckInputs(".", nil), "is the current folder")
}

// WriteFile puts the whole file in place, refuses an input, and removes
// the temporaries of dead runs beside it.
func TestWriteFile(t *testing.T) {
	dir := t.TempDir()
	plot := filepath.Join(dir, "plot.svg")
	prof := filepath.Join(dir, "profile.csv")
	require.NoError(t, os.WriteFile(prof, []byte("0,1\n"), 0o644))
	stale := filepath.Join(dir, ".plot.svg.geored-tmp-4194999-00")
	require.NoError(t, os.WriteFile(stale, []byte("half"), 0o644))
	var log syncBuffer
	require.NoError(t, WriteFile(plot, []byte("<svg/>"), []Keep{{Role: "the profile file", Path: prof}}, &log))
	b, _ := os.ReadFile(plot)
	assert.Equal(t, "<svg/>", string(b))
	assert.NoFileExists(t, stale)
	assert.Contains(t, log.String(), "removed "+stale)
	entries, _ := os.ReadDir(dir)
	assert.Len(t, entries, 2)

	err := WriteFile(prof, []byte("<svg/>"), []Keep{{Role: "the profile file", Path: prof}}, nil)
	assert.ErrorContains(t, err, "the output "+prof+" is the profile file")
	b, _ = os.ReadFile(prof)
	assert.Equal(t, "0,1\n", string(b))
	assert.ErrorContains(t, WriteFile(dir, nil, nil, nil), "is a folder")
}
