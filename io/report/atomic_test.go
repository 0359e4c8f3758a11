package report

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A file being written is under a hidden temporary name; only Commit puts
// it under its final name, and Abort leaves nothing behind — so a killed
// or failed run never leaves a half file that looks complete.
func TestAtomicFile(t *testing.T) {
	dir := t.TempDir()
	final := filepath.Join(dir, "reduced.csv")
	require.NoError(t, os.WriteFile(final, []byte("old complete run\n"), 0o644))

	f, err := CreateAtomic(final)
	require.NoError(t, err)
	_, err = f.WriteString("new rows\n")
	require.NoError(t, err)
	require.NoError(t, f.Flush())
	old, err := os.ReadFile(final)
	require.NoError(t, err)
	assert.Equal(t, "old complete run\n", string(old), "the final name keeps the old file while writing")
	entries, _ := os.ReadDir(dir)
	assert.Len(t, entries, 2)
	require.NoError(t, f.Commit())
	got, err := os.ReadFile(final)
	require.NoError(t, err)
	assert.Equal(t, "new rows\n", string(got))
	assert.Error(t, f.Commit(), "a second commit")
	f.Abort() // harmless after Commit
	entries, _ = os.ReadDir(dir)
	assert.Len(t, entries, 1, "no temporary file left")

	g, err := CreateAtomic(filepath.Join(dir, "lines.csv"))
	require.NoError(t, err)
	g.WriteString("half a file")
	g.Abort()
	entries, _ = os.ReadDir(dir)
	assert.Len(t, entries, 1, "an aborted file leaves nothing")

	_, err = CreateAtomic(filepath.Join(dir, "no such folder", "x.csv"))
	assert.Error(t, err)
}

// StartSync flushes and syncs in the background: Commit waits for it and
// puts the whole file in place; Abort after it still leaves nothing.
func TestAtomicFileStartSync(t *testing.T) {
	dir := t.TempDir()
	f, err := CreateAtomic(filepath.Join(dir, "reduced.csv"))
	require.NoError(t, err)
	_, err = f.WriteString("all rows\n")
	require.NoError(t, err)
	f.StartSync()
	f.StartSync() // once is enough
	require.NoError(t, f.Commit())
	got, err := os.ReadFile(filepath.Join(dir, "reduced.csv"))
	require.NoError(t, err)
	assert.Equal(t, "all rows\n", string(got))

	g, err := CreateAtomic(filepath.Join(dir, "rejects.csv"))
	require.NoError(t, err)
	g.WriteString("a half file")
	g.StartSync()
	g.Abort()
	entries, _ := os.ReadDir(dir)
	assert.Len(t, entries, 1, "an aborted file leaves nothing")
}
