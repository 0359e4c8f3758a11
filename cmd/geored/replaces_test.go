package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/outset"
)

// replacesNotice is the pattern of the line a run into a folder of
// earlier outputs writes on stderr before anything else.
func replacesNotice(out string) string {
	return `geored: ` + regexp.QuoteMeta(out) + ` holds the outputs of geored reduce \(input hash [0-9a-f]{12}\) made \d{4}-\d\d-\d\d \d\d:\d\d:\d\d UTC; this run replaces them once its own are complete\n`
}

// A rerun into a folder of earlier outputs says so on stderr, naming the
// folder, when the earlier set was made (its manifest's time) and its
// input hash, even with -quiet, and records them in summary.json's
// "replaces"; a run into a new folder says nothing and records none.
func TestRerunSaysWhatItReplaces(t *testing.T) {
	j := newSetJob(t, setBinary(t), 1)
	code, stderr := j.run(t, nil)
	require.Equal(t, exitFlagged, code, stderr)
	assert.NotContains(t, stderr, "holds the outputs")
	first := readSummary(t, filepath.Join(j.out, "summary.json"))
	assert.Nil(t, first.Replaces, "a new folder replaces nothing")
	st, err := os.Stat(filepath.Join(j.out, outset.ManifestName))
	require.NoError(t, err)
	made := st.ModTime().UTC()

	code, stderr = j.run(t, nil, newer...)
	require.Equal(t, exitFlagged, code, stderr)
	assert.Regexp(t, "^"+replacesNotice(j.out), stderr)
	assert.Contains(t, stderr, " (input hash "+first.InputHash[:12]+") made "+made.Format("2006-01-02 15:04:05")+" UTC;")
	second := readSummary(t, filepath.Join(j.out, "summary.json"))
	require.NotNil(t, second.Replaces)
	assert.Equal(t, first.InputHash, second.Replaces.InputHash)
	assert.Equal(t, made.Truncate(time.Second).Format(time.RFC3339), second.Replaces.Created)
	assert.NotEqual(t, first.InputHash, second.InputHash)

	// A run that fails leaves the earlier set, and says that too.
	code, stderr = j.run(t, nil, "-k", "9")
	assert.Equal(t, exitFailed, code)
	assert.NotContains(t, stderr, "holds the outputs", "a job refused before its output set is begun replaces nothing")
}

// The outputs are created with mode 0644 less the process's umask, and
// the folder with 0755 less it: a server's other users read them as the
// umask allows.
func TestOutputsFollowTheUmask(t *testing.T) {
	j := newSetJob(t, setBinary(t), 1)
	for _, c := range []struct {
		umask      string
		file, fold os.FileMode
	}{{"022", 0o644, 0o755}, {"027", 0o640, 0o750}, {"077", 0o600, 0o700}} {
		out := filepath.Join(t.TempDir(), "out")
		cmd := exec.Command("sh", "-c", "umask "+c.umask+` && exec "$0" "$@"`, j.bin, "reduce", "-config", j.job, "-quiet", "-out", out)
		b, err := cmd.CombinedOutput()
		var ee *exec.ExitError
		require.ErrorAs(t, err, &ee, string(b))
		require.Equal(t, exitFlagged, ee.ExitCode(), string(b))
		st, err := os.Stat(out)
		require.NoError(t, err)
		assert.Equal(t, c.fold, st.Mode().Perm(), "umask %s: the folder", c.umask)
		entries, err := os.ReadDir(out)
		require.NoError(t, err)
		require.NotEmpty(t, entries)
		for _, e := range entries {
			info, err := e.Info()
			require.NoError(t, err)
			assert.Equal(t, c.file, info.Mode().Perm(), "umask %s: %s", c.umask, e.Name())
		}
		assert.False(t, strings.Contains(string(b), "holds the outputs"))
	}
}
