package outset

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A set knows the set it replaces: none in a new or empty folder; the
// earlier set's manifest time and identity, said in one line on Log;
// for a folder from before manifests, its newest file's time.
func TestReplaces(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	var log bytes.Buffer
	s, err := Begin(context.Background(), out, Options{Log: &log})
	require.NoError(t, err)
	assert.Nil(t, s.Replaces())
	s.Abort()
	require.NoError(t, os.Mkdir(out, 0o755))
	s, err = Begin(context.Background(), out, Options{Log: &log})
	require.NoError(t, err)
	assert.Nil(t, s.Replaces(), "an empty folder")
	s.Abort()
	assert.Empty(t, log.String())

	require.NoError(t, writeSet(t, out, map[string]string{"a.csv": "1\n"}, Options{}))
	made := time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)
	require.NoError(t, os.Chtimes(filepath.Join(out, ManifestName), made, made))
	s, err = Begin(context.Background(), out, Options{Log: &log})
	require.NoError(t, err)
	defer s.Abort()
	require.NotNil(t, s.Replaces())
	assert.Equal(t, Earlier{Created: made, Identity: testID}, *s.Replaces())
	assert.Equal(t, "geored: "+out+" holds the outputs of geored test (input hash abc) made 2026-03-04 05:06:07 UTC; this run replaces them once its own are complete\n", log.String())
	s.Abort()

	old := filepath.Join(t.TempDir(), "old")
	require.NoError(t, os.Mkdir(old, 0o755))
	for i, name := range []string{"a.csv", "b.csv"} {
		p := filepath.Join(old, name)
		require.NoError(t, os.WriteFile(p, nil, 0o644))
		when := made.Add(time.Duration(i) * time.Hour)
		require.NoError(t, os.Chtimes(p, when, when))
	}
	log.Reset()
	s, err = Begin(context.Background(), old, Options{Log: &log, Earlier: []string{"a.csv", "b.csv"}})
	require.NoError(t, err)
	defer s.Abort()
	assert.Equal(t, Earlier{Created: made.Add(time.Hour)}, *s.Replaces())
	assert.Contains(t, log.String(), old+" holds the outputs of geored made 2026-03-04 06:06:07 UTC;")
}
