package obsfile

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

// A row may give the instrument's horizontal and vertical distance
// instead of the slope distance and zenith angle; both pairs may be
// columns of one file, each row giving one. The slope distance and zenith
// angle are derived exactly: S = sqrt(hd² + vd²), z = atan2(hd, vd).
func TestObservationsHorizontal(t *testing.T) {
	in := "from,to,slope_distance,zenith_angle,horizontal_distance,vertical_distance,instrument_height\n" +
		"A,B,500,95,,,1.5\n" +
		"A,C,,,300,-4,1.5\n" +
		"A,D,,,3000,40.5,\n"
	obs, rejects, warns, err := readAll(t, in, ObsOptions{LengthUnit: units.USSurveyFoot, AngleUnit: units.Degrees})
	require.NoError(t, err)
	assert.Empty(t, rejects)
	assert.Empty(t, warns, "known columns")
	require.Len(t, obs, 3)
	ft := 1200.0 / 3937
	assert.False(t, obs[0].Horizontal)
	assert.InDelta(t, 500*ft, obs[0].SlopeDistance, 1e-12)
	assert.InDelta(t, 95, obs[0].Zenith.Degrees(), 1e-12)
	for i, c := range []struct{ hd, vd float64 }{{300, -4}, {3000, 40.5}} {
		o := obs[i+1]
		assert.True(t, o.Horizontal)
		// back to the instrument's own components, in feet
		assert.InDelta(t, c.hd, o.SlopeDistance*math.Sin(float64(o.Zenith))/ft, 1e-9)
		assert.InDelta(t, c.vd, o.SlopeDistance*math.Cos(float64(o.Zenith))/ft, 1e-9)
	}
	assert.Greater(t, obs[1].Zenith.Degrees(), 90.0, "a target below the axis: z over 90°")
	assert.Less(t, obs[2].Zenith.Degrees(), 90.0)
	// a file of horizontal observations alone needs no slope columns;
	// a semicolon file may write a decimal comma in them
	obs, rejects, _, err = readAll(t, "from;to;horizontal_distance;vertical_distance\nA;B;1000,25;-0,5\n", metresGon)
	require.NoError(t, err)
	require.Empty(t, rejects)
	require.Len(t, obs, 1)
	assert.InDelta(t, math.Hypot(1000.25, 0.5), obs[0].SlopeDistance, 1e-12)
	assert.InDelta(t, math.Atan2(1000.25, -0.5), float64(obs[0].Zenith), 1e-15)
}

// Both pairs, half a pair or neither is a reject at its line and column.
func TestObservationsHorizontalRejects(t *testing.T) {
	in := "from,to,slope_distance,zenith_angle,horizontal_distance,vertical_distance\n" +
		"A,B,500,95,500,1\n" + // line 2: both
		"A,B,500,,,1\n" + // both, half each
		"A,B,,,500,\n" +
		"A,B,,,,1\n" +
		"A,B,,,,\n" +
		"A,B,,,-5,1\n" +
		"A,B,,,0,1\n" +
		"A,B,,,abc,1\n" +
		"A,B,,,500,x\n" +
		"A,B,,,99999,9000\n" +
		"A,B,,,500,1\n" // the good row, line 12
	obs, rejects, _, err := readAll(t, in, metresGon)
	require.NoError(t, err)
	require.Len(t, obs, 1)
	assert.Equal(t, 12, obs[0].Line)
	want := []string{
		`obs.csv:2:5: horizontal_distance "500": want a blank: a row gives slope_distance and zenith_angle or horizontal_distance and vertical_distance, not both`,
		`obs.csv:3:6: vertical_distance "1": want a blank: a row gives slope_distance and zenith_angle or horizontal_distance and vertical_distance, not both`,
		`obs.csv:4:6: vertical_distance "": want a vertical distance in m: horizontal_distance and vertical_distance go together`,
		`obs.csv:5:5: horizontal_distance "": want a horizontal distance in m: horizontal_distance and vertical_distance go together`,
		`obs.csv:6:3: slope_distance "": want a slope distance and zenith angle, or a horizontal_distance and vertical_distance`,
		`obs.csv:7:5: horizontal_distance "-5": want a horizontal distance in m, > 0 and at most 100 km`,
		`obs.csv:8:5: horizontal_distance "0": want a horizontal distance in m, > 0 and at most 100 km`,
		`obs.csv:9:5: horizontal_distance "abc": want a horizontal distance in m`,
		`obs.csv:10:6: vertical_distance "x": want a vertical distance in m`,
		`obs.csv:11:6: vertical_distance "9000": want a vertical distance in m that keeps the slope distance within 100 km`,
	}
	require.Len(t, rejects, len(want))
	for i, w := range want {
		assert.Equal(t, w, rejects[i].Error())
	}
	// a slope row's own errors are unchanged in such a file
	_, rejects, _, err = readAll(t, "from,to,slope_distance,zenith_angle,horizontal_distance,vertical_distance\nA,B,500,,,\n", metresGon)
	require.NoError(t, err)
	require.Len(t, rejects, 1)
	assert.Contains(t, rejects[0].Error(), `obs.csv:2:4: zenith_angle "": want a zenith angle in gon`)
}

func TestObservationsHorizontalHeader(t *testing.T) {
	for in, want := range map[string]string{
		"from,to,horizontal_distance\n":                                "horizontal_distance and vertical_distance go together",
		"from,to,vertical_distance,slope_distance\n":                   "horizontal_distance and vertical_distance go together",
		"from,to,horizontal_distance,vertical_distance,zenith_angle\n": "slope_distance and zenith_angle go together",
		"from,horizontal_distance,vertical_distance\n":                 "missing required column(s) to",
		"from,to,instrument_height\n":                                  "missing required column(s) slope_distance, zenith_angle",
	} {
		_, _, _, err := readAll(t, in+"A,B,1,2,3\n", metresGon)
		var he *HeaderError
		require.ErrorAs(t, err, &he, in)
		assert.ErrorContains(t, err, want, in)
	}
}
