package obsfile

import (
	"errors"
	"io"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

func readAll(t *testing.T, in string, opt ObsOptions) ([]Observation, []*RowError, []Warning, error) {
	t.Helper()
	r, warns, err := NewObsReader(strings.NewReader(in), "obs.csv", opt)
	if err != nil {
		return nil, nil, warns, err
	}
	var obs []Observation
	var rejects []*RowError
	for {
		o, err := r.Next()
		if errors.Is(err, io.EOF) {
			return obs, rejects, warns, nil
		}
		var re *RowError
		if errors.As(err, &re) {
			rejects = append(rejects, re)
			continue
		}
		if err != nil {
			return obs, rejects, warns, err
		}
		obs = append(obs, o)
	}
}

var metresGon = ObsOptions{LengthUnit: units.Metre, AngleUnit: units.Gons}

func TestObservationsRead(t *testing.T) {
	in := "\uFEFFobs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm,instrument,note\r\n" +
		"# set 1\r\n" +
		"1,Süd 1,\"N,2\",662.6712,99.5123,1.602,1.500,18.5,1004.2,65,-30,ts1,x\r\n" +
		"\r\n" +
		"2,A,B,100,100,,,,,,,,\r\n"
	obs, rejects, warns, err := readAll(t, in, metresGon)
	require.NoError(t, err)
	assert.Empty(t, rejects)
	require.Len(t, warns, 1)
	assert.Contains(t, warns[0].Text, `unknown column "note"`)
	require.Len(t, obs, 2)
	o := obs[0]
	assert.Equal(t, "Süd 1", o.From)
	assert.Equal(t, "N,2", o.To)
	assert.Equal(t, 3, o.Line)
	assert.Equal(t, 662.6712, o.SlopeDistance)
	assert.InDelta(t, 99.5123*0.9, o.Zenith.Degrees(), 1e-12)
	assert.Equal(t, 1.602, o.InstrumentHeight)
	assert.InDelta(t, -0.030, o.PrismConstant, 1e-15)
	assert.True(t, o.AtInstrument.Has)
	assert.False(t, o.AtTarget.Has)
	assert.Equal(t, "ts1", o.Instrument)
	assert.False(t, obs[1].HasPrismConstant)
	assert.False(t, obs[1].AtInstrument.Has)
}

// US survey feet: 1200/3937 m (common practice; io/units).
func TestObservationsInFeet(t *testing.T) {
	obs, _, _, err := readAll(t, "from,to,slope_distance,zenith_angle,instrument_height\nA,B,1000,90.0000,5\n", ObsOptions{LengthUnit: units.USSurveyFoot, AngleUnit: units.PackedDMS})
	require.NoError(t, err)
	assert.InDelta(t, 1000*1200.0/3937, obs[0].SlopeDistance, 1e-9)
	assert.InDelta(t, 5*1200.0/3937, obs[0].InstrumentHeight, 1e-12)
}

func TestObservationsRejectBadRows(t *testing.T) {
	in := "from,to,slope_distance,zenith_angle,temperature_c,pressure_hpa,humidity_pct\n" +
		"A,B,100,412.5,,,\n" + // line 2
		"A,B,-3,100,,,\n" +
		"A,A,100,100,,,\n" +
		"A,B,100,100,20,,50\n" +
		"A,B,100,100,20,1000\n" +
		"A,B,abc,100,,,\n" +
		"A,B,100,100,20,1300,50\n" +
		"A,B,100,0.00000,,,\n" +
		"A,B,100,200,,,\n" +
		"A,B,100.5,99.9,,,\n" // the one good row, line 11
	obs, rejects, _, err := readAll(t, in, metresGon)
	require.NoError(t, err)
	require.Len(t, obs, 1)
	assert.Equal(t, 11, obs[0].Line)
	want := []string{
		`obs.csv:2:4: zenith_angle "412.5": want a zenith angle in gon within 0..200 gon exclusive (face left: 0 is straight up, 200 straight down)`,
		`obs.csv:3:3: slope_distance "-3": want a slope distance in m, > 0 and at most 100 km`,
		`obs.csv:4:2: to "A": want a target other than the station "A"`,
		`obs.csv:5:6: pressure_hpa "": want a value: temperature, pressure and humidity are given together or not at all`,
		`obs.csv:6: want 7 fields as in the header, got 6`,
		`obs.csv:7:3: slope_distance "abc": want a slope distance in m`,
		`obs.csv:8:6: pressure_hpa "1300": want a pressure in 500..1100 hPa`,
		// a zenith angle of 0 or of the half circle is no sight to a
		// target beside the instrument (issue: 0 was accepted)
		`obs.csv:9:4: zenith_angle "0.00000": want a zenith angle in gon within 0..200 gon exclusive (face left: 0 is straight up, 200 straight down)`,
		`obs.csv:10:4: zenith_angle "200": want a zenith angle in gon within 0..200 gon exclusive (face left: 0 is straight up, 200 straight down)`,
	}
	require.Len(t, rejects, len(want))
	for i, w := range want {
		assert.Equal(t, w, rejects[i].Error())
	}
	assert.Equal(t, "A,B,100,412.5,,,", rejects[0].Raw)
}

func TestObservationsHeaderErrors(t *testing.T) {
	_, _, _, err := readAll(t, "from,to,slope_distance\nA,B,1\n", metresGon)
	var he *HeaderError
	require.True(t, errors.As(err, &he))
	assert.ErrorContains(t, err, "missing required column(s) zenith_angle")
	_, _, _, err = readAll(t, "from,to,slope_distance,zenith_angle,temperature_c\n", metresGon)
	assert.ErrorContains(t, err, "go together")
	_, _, _, err = readAll(t, "from,to,slope_distance,zenith_angle\n", ObsOptions{})
	assert.ErrorContains(t, err, "units not set")
}

// field_prism_constant_mm is the prism constant the instrument applied on
// the shot, beside the target's own prism_constant_mm; either may be
// blank, and both are millimetres whatever the length unit.
func TestObservationsFieldPrismConstant(t *testing.T) {
	in := "from,to,slope_distance,zenith_angle,prism_constant_mm,field_prism_constant_mm\n" +
		"A,B,100,90,-34.4,-30\n" +
		"A,B,100,90,-34.4,\n" +
		"A,B,100,90,,-34.4\n" +
		"A,B,100,90,,\n"
	obs, rejects, warns, err := readAll(t, in, ObsOptions{LengthUnit: units.USSurveyFoot, AngleUnit: units.Degrees})
	require.NoError(t, err)
	assert.Empty(t, rejects)
	assert.Empty(t, warns, "a known column")
	require.Len(t, obs, 4)
	assert.Equal(t, -34.4/1000, obs[0].PrismConstant, "target's constant, m")
	assert.Equal(t, -30.0/1000, obs[0].FieldPrismConstant, "applied constant, m (not scaled by the length unit)")
	assert.True(t, obs[0].HasPrismConstant && obs[0].HasFieldPrismConstant)
	assert.True(t, obs[1].HasPrismConstant)
	assert.False(t, obs[1].HasFieldPrismConstant, "blank: what the profile says")
	assert.False(t, obs[2].HasPrismConstant)
	assert.True(t, obs[2].HasFieldPrismConstant)
	assert.Equal(t, -34.4/1000, obs[2].FieldPrismConstant)
	assert.False(t, obs[3].HasPrismConstant || obs[3].HasFieldPrismConstant)
}

func TestObservationsRejectBadPrismConstants(t *testing.T) {
	in := "from,to,slope_distance,zenith_angle,prism_constant_mm,field_prism_constant_mm\n" +
		"A,B,100,90,-30,abc\n" +
		"A,B,100,90,-30,-1000.5\n" +
		"A,B,100,90,-30,NaN\n" +
		"A,B,100,90,x,-30\n" +
		"A,B,100,90,1e4,-30\n" +
		"A,B,100,90,-30,-30\n"
	obs, rejects, _, err := readAll(t, in, metresGon)
	require.NoError(t, err)
	require.Len(t, obs, 1)
	assert.Equal(t, 7, obs[0].Line)
	want := []string{
		`obs.csv:2:6: field_prism_constant_mm "abc": want the prism constant the instrument applied in mm`,
		`obs.csv:3:6: field_prism_constant_mm "-1000.5": want the prism constant the instrument applied within ±1000 mm`,
		`obs.csv:4:6: field_prism_constant_mm "NaN": want the prism constant the instrument applied in mm`,
		`obs.csv:5:5: prism_constant_mm "x": want the target's prism constant in mm`,
		`obs.csv:6:5: prism_constant_mm "1e4": want the target's prism constant within ±1000 mm`,
	}
	require.Len(t, rejects, len(want))
	for i, w := range want {
		assert.Equal(t, w, rejects[i].Error())
	}
}
