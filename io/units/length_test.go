package units

import (
	"errors"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

const (
	mm  = 1e-3
	ppm = 1e-6
)

// The two feet by definition: international foot 0.3048 m exactly (1959
// agreement, NBS Federal Register notice of 1 July 1959); US survey foot
// 1200/3937 m exactly (Mendenhall Order, 1893; NIST/NOAA 85 FR 62698, 2020).
// The published relation is that the survey foot is longer by 2 ppm:
// 0.3048 × 3937/1200 = 0.999998 exactly.
func TestFeetDifferByTwoPPM(t *testing.T) {
	ratio := float64(InternationalFoot) / float64(USSurveyFoot)
	assert.InDeltaf(t, 1-2*ppm, ratio, 1e-15, "international foot / US survey foot (ratio)")
	// 1 km written in each foot: the numbers differ by 2 mm per km, the
	// trade's "2 ppm" (common practice).
	usFt, err := USSurveyFoot.FromMetres(1000)
	require.NoError(t, err)
	intlFt, err := InternationalFoot.FromMetres(1000)
	require.NoError(t, err)
	diffMetres := (intlFt - usFt) * float64(InternationalFoot)
	assert.InDeltaf(t, 2*mm, diffMetres, 1e-6*mm, "1 km in international vs US survey feet (m)")
}

// Published conversion factors, NIST Special Publication 811 (2008),
// appendix B.8 [memory of the table, 7 significant digits as printed]:
// foot (U.S. survey) 3.048 006 E-01 m; mile (U.S. survey) 1.609 347 E+03 m;
// mile (international) 1.609 344 E+03 m. The mile is 5280 ft.
func TestLengthConversions(t *testing.T) {
	cases := []struct {
		name  string
		unit  LengthUnit
		value float64
		want  float64 // metres
		tol   float64 // metres
	}{
		{"metre", Metre, 1234.5678, 1234.5678, 0},
		{"one US survey foot (NIST SP 811)", USSurveyFoot, 1, 0.3048006096012192, 1e-16},
		{"one international foot (1959 agreement)", InternationalFoot, 1, 0.3048, 0},
		{"NIST SP 811 foot (U.S. survey)", USSurveyFoot, 1, 0.3048006, 0.5e-7},
		{"NIST SP 811 mile (U.S. survey)", USSurveyFoot, 5280, 1609.347, 0.5 * mm},
		{"NIST SP 811 mile (international)", InternationalFoot, 5280, 1609.344, 0.5 * mm},
	}
	for _, c := range cases {
		got, err := c.unit.Metres(c.value)
		require.NoErrorf(t, err, "%s", c.name)
		assert.InDeltaf(t, c.want, got, c.tol, "%s (m)", c.name)
		back, err := c.unit.FromMetres(got)
		require.NoErrorf(t, err, "%s", c.name)
		assert.InDeltaf(t, c.value, back, 1e-9*c.value, "%s round trip (unit)", c.name)
	}
}

func TestParseLengthUnit(t *testing.T) {
	for _, c := range []struct {
		name string
		want LengthUnit
	}{
		{"m", Metre}, {" Metre ", Metre}, {"meters", Metre},
		{"us-ft", USSurveyFoot}, {"ftUS", USSurveyFoot}, {"US survey foot", USSurveyFoot},
		{"intl-ft", InternationalFoot}, {"International Foot", InternationalFoot},
	} {
		got, err := ParseLengthUnit(c.name)
		require.NoErrorf(t, err, "unit %q", c.name)
		assert.Equalf(t, c.want, got, "unit %q", c.name)
		again, err := ParseLengthUnit(got.String())
		require.NoErrorf(t, err, "String of %q", c.name)
		assert.Equalf(t, got, again, "String round trip of %q", c.name)
	}
	for _, bad := range []string{"ft", "feet", "foot", "yd", ""} {
		_, err := ParseLengthUnit(bad)
		var ue *UnitError
		require.Truef(t, errors.As(err, &ue), "unit %q: want *UnitError, got %v", bad, err)
		assert.Equal(t, "length", ue.Kind)
	}
	_, err := ParseLengthUnit("ft")
	assert.Contains(t, err.Error(), "ambiguous")
}

func TestZeroLengthUnitIsLoud(t *testing.T) {
	var u LengthUnit
	_, err := u.Metres(1)
	assert.Error(t, err)
	_, err = u.FromMetres(1)
	assert.Error(t, err)
	_, err = ParseLength("slope distance", "1", u)
	assert.Error(t, err)
	_, err = FormatLength(1, u, 3)
	assert.Error(t, err)
}

func TestParseLength(t *testing.T) {
	got, err := ParseLength("slope distance", " 1000 ", USSurveyFoot)
	require.NoError(t, err)
	assert.InDeltaf(t, 304.8006096, got, 1e-7, "1000 ftUS (m), NIST SP 811")

	for _, bad := range []string{"", "abc", "1,5", "NaN", "Inf", "-inf", "1e400"} {
		_, err := ParseLength("slope distance", bad, Metre)
		var se *SyntaxError
		require.Truef(t, errors.As(err, &se), "length %q: want *SyntaxError, got %v", bad, err)
		assert.Equal(t, "slope distance", se.Quantity)
		assert.Equal(t, bad, se.Value)
	}
}

func TestFormatLength(t *testing.T) {
	s, err := FormatLength(0.3048, InternationalFoot, 4)
	require.NoError(t, err)
	assert.Equal(t, "1.0000", s)
	s, err = FormatLength(1200, USSurveyFoot, 3)
	require.NoError(t, err)
	assert.Equal(t, "3937.000", s)
}
