package units

import (
	"errors"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A CRS's axis unit as PROJ 9.1.1 describes it (proj_cs_get_axis_info on
// EPSG:2231, 2223, 26913, 24100 and on PROJ strings, printed with %.17g):
// the US survey foot of the EPSG grids is 0.30480060960121924 m, one ulp
// above 1200/3937, and +units=us-ft gives 0.30480060960121919. The old
// code compared it with 1200/3937 exactly and refused every EPSG grid in
// US survey feet.
func TestAxisUnitLengthUnit(t *testing.T) {
	for _, tc := range []struct {
		name string
		unit AxisUnit
		want LengthUnit
	}{
		{"EPSG:2231 (proj.db)", AxisUnit{"US survey foot", "EPSG:9003", 0.30480060960121924}, USSurveyFoot},
		{"+units=us-ft", AxisUnit{"US survey foot", "EPSG:9003", 0.30480060960121919}, USSurveyFoot},
		{"EPSG:2223", AxisUnit{"foot", "EPSG:9002", 0.30480000000000002}, InternationalFoot},
		{"EPSG:26913", AxisUnit{"metre", "EPSG:9001", 1}, Metre},
		{"WKT without a code, proj.db's factor", AxisUnit{"ftus", "", 0.30480060960121924}, USSurveyFoot},
		{"+to_meter=0.3048", AxisUnit{"unknown", "", 0.3048}, InternationalFoot},
		{"+to_meter=1", AxisUnit{"unknown", "", 1}, Metre},
	} {
		got, err := tc.unit.LengthUnit()
		require.NoError(t, err, tc.name)
		assert.Equal(t, tc.want, got, tc.name)
	}
}

// Units geored does not read grid coordinates in are refused with the
// unit's name, code and length in words, never a Go type name. Clarke's
// foot is 0.3047972654 m (EPSG unit of measure 9005, as proj.db gives it
// for EPSG:24100, Jamaica 1875 / Jamaica (Old Grid)); the chain is
// 20.1168 m (PROJ's unit ch, cs2cs -lu).
func TestAxisUnitRefused(t *testing.T) {
	for _, tc := range []struct {
		name string
		unit AxisUnit
		want []string
	}{
		{"Clarke's foot", AxisUnit{"Clarke's foot", "EPSG:9005", 0.3047972654},
			[]string{`the CRS's axis unit "Clarke's foot" (EPSG:9005) is 0.3047972654 m per unit`, "metres, US survey feet (1200/3937 m) or international feet (0.3048 m) only"}},
		{"chain", AxisUnit{"chain", "EPSG:9097", 20.1168},
			[]string{`"chain" (EPSG:9097) is 20.1168 m per unit`}},
		{"truncated US foot", AxisUnit{"unknown", "", 0.3048006},
			[]string{"(unnamed) is 0.3048006 m per unit", "-0.0315 ppm from the US survey foot (1200/3937 m), so not that unit", "+units=us-ft"}},
		{"ten digits", AxisUnit{"", "", 0.3048006096},
			[]string{"0.3048006096 m per unit", "ppm from the US survey foot"}},
		{"code and length disagree", AxisUnit{"US survey foot", "EPSG:9003", 0.3048},
			[]string{`"US survey foot" (EPSG:9003) is 0.3048 m per unit: that code is the US survey foot, 1200/3937 m`}},
	} {
		_, err := tc.unit.LengthUnit()
		var ae *AxisUnitError
		require.Truef(t, errors.As(err, &ae), "%s: want *AxisUnitError, got %v", tc.name, err)
		for _, w := range tc.want {
			assert.Contains(t, err.Error(), w, tc.name)
		}
		assert.NotContains(t, err.Error(), "LengthUnit", tc.name)
	}
}

// Four ulps and no more: the tolerance only absorbs how the factor was
// stored, never a different length.
func TestAxisUnitTolerance(t *testing.T) {
	const us = float64(USSurveyFoot)
	ulp := 5.551115123125783e-17 // 2⁻⁵⁴, the spacing of doubles in [0.25, 0.5)
	for _, tc := range []struct {
		ulps float64
		ok   bool
	}{{-4, true}, {4, true}, {-5, false}, {5, false}} {
		_, err := AxisUnit{"", "", us + tc.ulps*ulp}.LengthUnit()
		assert.Equal(t, tc.ok, err == nil, "%v ulps: %v", tc.ulps, err)
	}
}

// A value that is not a unit names its length in words in messages.
func TestLengthUnitStringInWords(t *testing.T) {
	assert.Equal(t, "us-ft", LengthUnit(0.3048006096012192).String())
	assert.Equal(t, "a unit of 0.30480060960121924 m", LengthUnit(0.30480060960121924).String())
	assert.Equal(t, "no unit", LengthUnit(0).String())
	_, err := ParseLength("easting", "3100000", LengthUnit(0.30480060960121924))
	assert.EqualError(t, err, `length unit "a unit of 0.30480060960121924 m": want one of "m", "us-ft" or "intl-ft"`)
	assert.Equal(t, "angle unit number 99 (not one geored knows)", AngleUnit(99).String())
}
