package obsfile

import (
	"errors"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

const mm = 1e-3

// US survey feet: 1200/3937 m (common practice; io/units).
func TestReadSights(t *testing.T) {
	in := "\uFEFF# sights for the next day\r\n" +
		"from,to,instrument_height,target_height,instrument,prism_constant_mm,temperature_c,pressure_hpa,humidity_pct,temperature_c_to,pressure_hpa_to,humidity_pct_to,note\r\n" +
		"A,\"N,2\",5.0853,5.9055,ts1,-30,18,1001,55,17,999,60,x\r\n" +
		"\r\n" +
		"Süd 1,C, 5 ,-2,,,,,,,,,\r\n"
	sights, warns, err := ReadSights(strings.NewReader(in), "pairs.csv", units.USSurveyFoot, Comma)
	require.NoError(t, err)
	require.Len(t, warns, 1)
	assert.Equal(t, `pairs.csv:2: unknown column "note" (column 13) is ignored; known columns: from, to, instrument_height, target_height, instrument, prism_constant_mm, temperature_c, pressure_hpa, humidity_pct, temperature_c_to, pressure_hpa_to, humidity_pct_to`, warns[0].String())
	require.Len(t, sights, 2)

	s := sights[0]
	assert.Equal(t, 3, s.Line)
	assert.Equal(t, "A", s.From)
	assert.Equal(t, "N,2", s.To)
	assert.Equal(t, "ts1", s.Instrument)
	assert.InDelta(t, 5.0853*1200/3937, s.InstrumentHeight, 1e-9*mm, "instrument height, m")
	assert.InDelta(t, 5.9055*1200/3937, s.TargetHeight, 1e-9*mm, "target height, m")
	assert.True(t, s.HasPrismConstant)
	assert.InDelta(t, -30*mm, s.PrismConstant, 1e-12*mm, "prism constant, m (not scaled by the height unit)")
	assert.Equal(t, Weather{TemperatureC: 18, PressureHPa: 1001, HumidityPct: 55, Has: true}, s.AtInstrument)
	assert.Equal(t, Weather{TemperatureC: 17, PressureHPa: 999, HumidityPct: 60, Has: true}, s.AtTarget)

	s = sights[1]
	assert.Equal(t, 5, s.Line)
	assert.Equal(t, "Süd 1", s.From)
	assert.Equal(t, "", s.Instrument, "blank: the job's default instrument")
	assert.InDelta(t, 5*1200.0/3937, s.InstrumentHeight, 1e-9*mm, "instrument height, m")
	assert.InDelta(t, -2*1200.0/3937, s.TargetHeight, 1e-9*mm, "target height, m")
	assert.False(t, s.HasPrismConstant, "blank prism constant: the profile's")
	assert.False(t, s.AtInstrument.Has)
	assert.False(t, s.AtTarget.Has)
}

// The fewest columns: no instrument, prism constant or air.
func TestReadSightsRequiredOnly(t *testing.T) {
	sights, warns, err := ReadSights(strings.NewReader("to,from,target_height,instrument_height\nB,A,1.5,1.6\n"), "pairs.csv", units.Metre, Comma)
	require.NoError(t, err)
	assert.Empty(t, warns)
	require.Len(t, sights, 1)
	assert.Equal(t, Sight{Line: 2, From: "A", To: "B", InstrumentHeight: 1.6, TargetHeight: 1.5}, sights[0])
}

func TestReadSightsErrors(t *testing.T) {
	const head = "from,to,instrument_height,target_height,instrument,temperature_c,pressure_hpa,humidity_pct\n"
	for _, tc := range []struct {
		name, in string
		unit     units.LengthUnit
		want     string
	}{
		{"empty", "", units.Metre, "pairs.csv:1: header: the file is empty: want a header row"},
		{"missing column", "from,to,instrument_height\nA,B,5\n", units.Metre, "pairs.csv:1: header: missing required column(s) target_height; found from, to, instrument_height"},
		{"dup column", "from,to,to,instrument_height,target_height\n", units.Metre, `pairs.csv:1: header: column "to" appears twice (columns 2 and 3)`},
		{"half the air's columns", "from,to,instrument_height,target_height,temperature_c,humidity_pct\nA,B,1,1,20,50\n", units.Metre,
			"pairs.csv:1: header: temperature_c, pressure_hpa and humidity_pct go together"},
		{"half the air's columns at the target", "from,to,instrument_height,target_height,pressure_hpa_to\nA,B,1,1,1000\n", units.Metre,
			"pairs.csv:1: header: temperature_c_to, pressure_hpa_to and humidity_pct_to go together"},
		{"no sights", "from,to,instrument_height,target_height\n# none yet\n", units.Metre, "pairs.csv:1: header: no sights after the header"},
		{"no station", head + ",B,5,5,ts1,,,\n", units.Metre, `pairs.csv:2:1: from "": want the id of the instrument's mark`},
		{"no target", head + "A, ,5,5,ts1,,,\n", units.Metre, `pairs.csv:2:2: to " ": want the id of the target's mark`},
		{"same point", head + "A,A,5,5,ts1,,,\n", units.Metre, `pairs.csv:2:2: to "A": want a target other than the station "A"`},
		{"bad height", head + "A,B,5,abc,ts1,,,\n", units.USSurveyFoot, `pairs.csv:2:4: target_height "abc": want a height over the mark in us-ft within ±328.1`},
		{"blank height", head + "A,B,,5,ts1,,,\n", units.Metre, `pairs.csv:2:3: instrument_height "": want a height over the mark in m within ±100`},
		{"height too great", head + "A,B,5,500,ts1,,,\n", units.USSurveyFoot, `pairs.csv:2:4: target_height "500": want a height over the mark in us-ft within ±328.1`},
		{"height NaN", head + "A,B,NaN,5,ts1,,,\n", units.Metre, `pairs.csv:2:3: instrument_height "NaN"`},
		{"height Inf", head + "A,B,5,-Inf,ts1,,,\n", units.Metre, `pairs.csv:2:4: target_height "-Inf"`},
		{"half the air", head + "A,B,5,5,ts1,20,,50\n", units.Metre, `pairs.csv:2:7: pressure_hpa "": want a value: temperature, pressure and humidity are given together or not at all`},
		{"temperature out of range", head + "A,B,5,5,ts1,61,1000,50\n", units.Metre, `pairs.csv:2:6: temperature_c "61": want a temperature in -60..60 °C`},
		{"pressure out of range", head + "A,B,5,5,ts1,20,101.3,50\n", units.Metre, `pairs.csv:2:7: pressure_hpa "101.3": want a pressure in 500..1100 hPa`},
		{"humidity out of range", head + "A,B,5,5,ts1,20,1000,101\n", units.Metre, `pairs.csv:2:8: humidity_pct "101": want a relative humidity in 0..100 %`},
		{"air at the target", "from,to,instrument_height,target_height,temperature_c_to,pressure_hpa_to,humidity_pct_to\nA,B,1,1,20,1000,x\n", units.Metre,
			`pairs.csv:2:7: humidity_pct_to "x": want a relative humidity in 0..100 %`},
		{"prism constant", "from,to,instrument_height,target_height,prism_constant_mm\nA,B,1,1,-1000.5\n", units.Metre,
			`pairs.csv:2:5: prism_constant_mm "-1000.5": want a prism constant in mm within ±1000`},
		{"ragged row", head + "A,B,5,5\n", units.Metre, "pairs.csv:2: want 8 fields as in the header, got 4"},
		{"bad quote", head + "A,\"B,5,5,ts1,,,\n", units.Metre, "pairs.csv:2"},
		{"no unit", head + "A,B,5,5,ts1,,,\n", 0, "pairs.csv: height unit not set"},
	} {
		_, _, err := ReadSights(strings.NewReader(tc.in), "pairs.csv", tc.unit, Comma)
		assert.ErrorContainsf(t, err, tc.want, "case %s", tc.name)
	}
}

// Every bad row is reported, with the good rows between them read and
// dropped: a pairs file is predicted whole or not at all.
func TestReadSightsReportsEveryBadRow(t *testing.T) {
	in := "from,to,instrument_height,target_height,instrument\n" +
		"A,B,5,abc,ts1\n" +
		"A,C,5,5,ts1\n" +
		"B,C,5,500,ts1\n" +
		"B,C,5\n"
	sights, warns, err := ReadSights(strings.NewReader(in), "pairs.csv", units.USSurveyFoot, Comma)
	assert.Nil(t, sights)
	assert.Empty(t, warns)
	require.Error(t, err)
	assert.Equal(t, `pairs.csv:2:4: target_height "abc": want a height over the mark in us-ft within ±328.1
pairs.csv:4:4: target_height "500": want a height over the mark in us-ft within ±328.1
pairs.csv:5: want 5 fields as in the header, got 3`, err.Error())
	var fe *FieldError
	require.True(t, errors.As(err, &fe))
	assert.Equal(t, FieldError{File: "pairs.csv", Line: 2, Column: 4, Field: "target_height", Value: "abc", Want: "a height over the mark in us-ft within ±328.1", Err: fe.Err}, *fe)
	assert.Error(t, fe.Err, "the number's own parse error is kept")
}

// Warnings come back even when the file is refused.
func TestReadSightsWarnsOnRefusal(t *testing.T) {
	_, warns, err := ReadSights(strings.NewReader("from,to,instrument_height,colour\nA,B,1,red\n"), "pairs.csv", units.Metre, Comma)
	var he *HeaderError
	require.True(t, errors.As(err, &he))
	require.Len(t, warns, 1)
	assert.Contains(t, warns[0].Text, `unknown column "colour"`)
}
