package obsfile

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

// The pairs file and the profile file are read in the observation file's
// dialects: their delimiter found from the header (or given), a decimal
// comma in a semicolon or tab file; the same values as the comma file.
func TestSightsAndProfileDialects(t *testing.T) {
	comma := "from,to,instrument_height,target_height,prism_constant_mm,temperature_c,pressure_hpa,humidity_pct\nA,B,1.543,1.6,-34.4,12.5,1003.2,61\n"
	want, _, err := ReadSights(strings.NewReader(comma), "pairs.csv", units.Metre, DelimiterAuto)
	require.NoError(t, err)
	require.Len(t, want, 1)
	for _, c := range []struct {
		text  string
		delim Delimiter
	}{
		{strings.NewReplacer(",", ";", ".", ",").Replace(comma), DelimiterAuto},
		{strings.NewReplacer(",", ";", ".", ",").Replace(comma), Semicolon},
		{strings.ReplaceAll(comma, ",", "\t"), DelimiterAuto},
		{strings.NewReplacer(",", "\t", ".", ",").Replace(comma), Tab},
	} {
		got, _, err := ReadSights(strings.NewReader(c.text), "pairs.csv", units.Metre, c.delim)
		require.NoError(t, err, c.text)
		assert.Equal(t, want, got, c.text)
	}
	_, _, err = ReadSights(strings.NewReader(strings.NewReplacer(",", ";", ".", ",").Replace(comma)), "pairs.csv", units.Metre, Comma)
	require.Error(t, err, "a semicolon file read as commas")
	assert.Contains(t, err.Error(), "pairs.csv:1: header: missing required column(s)")

	prof := "distance,height\n0,12.5\n1500.25,-3.75\n"
	wantP, _, err := ReadProfile(strings.NewReader(prof), "profile.csv", units.Metre, 3000, DelimiterAuto)
	require.NoError(t, err)
	gotP, _, err := ReadProfile(strings.NewReader(strings.NewReplacer(",", "\t", ".", ",").Replace(prof)), "profile.csv", units.Metre, 3000, DelimiterAuto)
	require.NoError(t, err)
	assert.Equal(t, wantP, gotP)
	_, _, err = ReadProfile(strings.NewReader("distance,height\n0,12,5\n"), "profile.csv", units.Metre, 3000, DelimiterAuto)
	require.Error(t, err, "a decimal comma in a comma file splits the field")
}
