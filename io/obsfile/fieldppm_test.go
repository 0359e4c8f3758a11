package obsfile

import (
	"strconv"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

// field_ppm is the ppm the instrument applied on the row's shot, in ppm
// whatever the length unit; a blank leaves the profile's.
func TestObservationsFieldPPM(t *testing.T) {
	in := "from;to;slope_distance;zenith_angle;field_ppm\n" +
		"A;B;100;90;12,5\n" +
		"A;B;100;90;\n" +
		"A;B;100;90;abc\n" +
		"A;B;100;90;-1000,5\n" +
		"A;B;100;90;-1000\n"
	obs, rejects, warns, err := readAll(t, in, ObsOptions{LengthUnit: units.USSurveyFoot, AngleUnit: units.Degrees})
	require.NoError(t, err)
	assert.Empty(t, warns, "a known column")
	require.Len(t, obs, 3)
	assert.True(t, obs[0].HasFieldPPM)
	assert.Equal(t, 12.5, obs[0].FieldPPM, "ppm, not scaled by the length unit; the file's decimal comma")
	assert.False(t, obs[1].HasFieldPPM, "blank: what the profile says")
	assert.Equal(t, -1000.0, obs[2].FieldPPM)
	want := []string{
		`obs.csv:4:5: field_ppm "abc": want the ppm the instrument applied`,
		`obs.csv:5:5: field_ppm "-1000,5": want the ppm the instrument applied, within ±1000 ppm`,
	}
	require.Len(t, rejects, len(want))
	for i, w := range want {
		assert.Equal(t, w, rejects[i].Error())
	}
}

// observed_at takes ISO 8601 dates and times (RFC 3339 §5.6, which
// allows a space for the T) and keeps them as written.
func TestObservationsObservedAt(t *testing.T) {
	good := []string{"2026-05-14T09:31:07", "2026-05-14T09:31", "2026-05-14 09:31:07.25", "2026-05-14T09:31:07Z", "2026-05-14T09:31:07.123456+02:00", "2026-05-14T23:59-05:30"}
	bad := []string{"2026-05-14", "14.05.2026 09:31", "2026-13-01T00:00", "2026-02-30T10:00:00", "2026-05-14T25:00", "yesterday", "2026-05-14T09:31:07+2"}
	in := "from,to,slope_distance,zenith_angle,observed_at\n"
	for _, v := range append(append([]string(nil), good...), bad...) {
		in += "A,B,100,90," + v + "\n"
	}
	in += "A,B,100,90,\n"
	obs, rejects, _, err := readAll(t, in, metresGon)
	require.NoError(t, err)
	require.Len(t, obs, len(good)+1)
	for i, v := range good {
		assert.Equal(t, v, obs[i].ObservedAt)
	}
	assert.Equal(t, "", obs[len(good)].ObservedAt)
	require.Len(t, rejects, len(bad))
	for i, v := range bad {
		assert.Equal(t, `obs.csv:`+strconv.Itoa(len(good)+2+i)+`:5: observed_at "`+v+`": want the date and time of the observation, ISO 8601 as 2026-05-14T09:31:07 (seconds, fraction and zone, Z or ±hh:mm, optional; a space for the T)`, rejects[i].Error())
	}
	at, err := ParseObservedAt("2026-05-14 09:31:07+02:00")
	require.NoError(t, err)
	assert.True(t, at.Equal(time.Date(2026, 5, 14, 7, 31, 7, 0, time.UTC)))
	// ISO 8601's decimal comma in the seconds, as a semicolon file may
	// write them.
	at, err = ParseObservedAt("2026-05-14T09:31:07,25Z")
	require.NoError(t, err)
	assert.True(t, at.Equal(time.Date(2026, 5, 14, 9, 31, 7, 250_000_000, time.UTC)))
}
