package jobconfig

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

var reduceNeeds = Needs{Points: true, Observations: true, Tolerance: true, Instrument: true}

// A job that gives only its CRS is told everything it lacks at once, each
// by its key, not one error a run.
func TestMissingSettingsReportedAtOnce(t *testing.T) {
	f, err := Parse([]byte(`crs = "EPSG:25832"`), "job.toml")
	require.NoError(t, err)
	_, err = ResolveFor(f, "job.toml", reduceNeeds)
	require.Error(t, err)
	lines := strings.Split(err.Error(), "\n")
	require.Len(t, lines, 4, "%v", err)
	for i, key := range []string{"points", "observations", "tolerance", "instrument"} {
		assert.True(t, strings.HasPrefix(lines[i], "job.toml: "+key+": missing: "), "%s", lines[i])
	}
	// Without the needs, the same file resolves (inverse and sightline
	// ask for no tolerance, no instrument).
	_, err = Resolve(f, "job.toml")
	assert.NoError(t, err)
}

// An empty instrument profile and a bad setting elsewhere: the missing
// wavelength, reference and specification and the wrong unit come in one
// error, together with the missing tolerance.
func TestEmptyProfileReportsEveryMissingKey(t *testing.T) {
	f, err := Parse([]byte(`crs = "EPSG:25832"
points = "p.csv"
observations = ["o.csv"]
length_unit = "ft"
[instrument.ts1]
additive_constant_mm = 0.3
`), "job.toml")
	require.NoError(t, err)
	_, err = ResolveFor(f, "job.toml", reduceNeeds)
	require.Error(t, err)
	msg := err.Error()
	for _, want := range []string{
		"job.toml: length_unit: ",
		"job.toml: instrument.ts1.wavelength_um: missing",
		"job.toml: instrument.ts1: give exactly one of reference_atmosphere",
		"job.toml: instrument.ts1.spec_mm: ",
		"job.toml: tolerance: missing",
	} {
		assert.Contains(t, msg, want)
	}
	assert.NotContains(t, msg, "instrument: missing", "a profile is given, if incomplete")
	assert.Len(t, strings.Split(msg, "\n"), 5, "%s", msg)
}
