package main

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Numbers on the command line are decimal only, as in the files: Go's
// strconv would read 0x1p-3 as 0.125 and 1_0 as 10.
func TestNumberFlagsAreDecimalOnly(t *testing.T) {
	dir := t.TempDir()
	job := filepath.Join(dir, "job.toml")
	require.NoError(t, os.WriteFile(job, []byte("crs = \"EPSG:32614\"\ngeoid = \"none\"\n"), 0o644))
	ab := []string{"-a", "66.445848116,-100.419110116", "-b", "66.523994116044705,-100.823270782800293"}
	for _, c := range []struct {
		args []string
		msg  string
	}{
		{[]string{"reduce", "-config", job, "-k", "0x1p-3"}, `-k "0x1p-3": want a decimal number`},
		{[]string{"reduce", "-config", job, "-critical=3_29"}, `-critical "3_29": want a decimal number`},
		{[]string{"inverse", "-config", job, "--geoid-separation-m", "NaN"}, `-geoid-separation-m "NaN": want a decimal number`},
		{[]string{"inverse", "-config", job, "-a", "0x42,-100", "-b", "66.5,-100.8"}, `-a "0x42,-100": want 'lat,lon' in decimal degrees`},
		{[]string{"reduce", "-config", job, "-wavelength-um", "0x1p-1"}, `-wavelength-um "0x1p-1": want a wavelength in µm`},
	} {
		code, _, stderr := runCmd(t, c.args...)
		assert.Equal(t, exitFailed, code, c.args)
		assert.Contains(t, stderr, c.msg, c.args)
	}
	// the same flags in decimal are taken
	code, _, stderr := runCmd(t, append([]string{"inverse", "-config", job, "-geoid-separation-m", "1.5e1"}, ab...)...)
	assert.Equal(t, exitOK, code, stderr)
}
