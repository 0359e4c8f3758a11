package units

import (
	"errors"
	"flag"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

var seed = flag.Uint64("units.seed", 0, "seed for the random angle tests (0: from the clock, printed)")

// angle tolerances per unit of writing
const (
	arcsecond = s1.Degree / 3600
	nanorad   = 1e-9 * s1.Radian
)

// Gon by definition: 400 gon to the turn, 100 gon to the right angle
// (ISO 80000-3:2019, item 3-5 note); 1 gon = 0.9° exactly.
func TestGonDefinition(t *testing.T) {
	assert.InDeltaf(t, 0.9, Gon.Degrees(), 1e-15, "1 gon (deg)")
	assert.InDeltaf(t, 2*math.Pi, float64(400*Gon), 1e-15, "400 gon (rad)")
	assert.InDeltaf(t, math.Pi/2, float64(100*Gon), 1e-15, "100 gon (rad)")
}

func TestParseAngle(t *testing.T) {
	cases := []struct {
		name string
		text string
		unit AngleUnit
		want s1.Angle
	}{
		{"decimal degrees", "90.5", Degrees, 90.5 * s1.Degree},
		{"packed 90°30′15″", "90.3015", PackedDMS, (90 + 30.0/60 + 15.0/3600) * s1.Degree},
		{"packed 10°30′ (float 10.3 is below 10.3)", "10.3000", PackedDMS, 10.5 * s1.Degree},
		{"packed short fraction is positional: 12.3 is 12°30′", "12.3", PackedDMS, 12.5 * s1.Degree},
		{"packed decimal seconds 0°00′00.5″", "0.00005", PackedDMS, 0.5 * arcsecond},
		{"packed 359°59′59.9″", "359.59599", PackedDMS, (360 - 0.1/3600) * s1.Degree},
		{"packed −0°30′ keeps its sign", "-0.3000", PackedDMS, -0.5 * s1.Degree},
		{"packed −12°30′30″", "-12.3030", PackedDMS, -(12 + 30.0/60 + 30.0/3600) * s1.Degree},
		{"packed no fraction", "45", PackedDMS, 45 * s1.Degree},
		{"gon 100 is a right angle", "100", Gons, 90 * s1.Degree},
		{"gon 97.1234", "97.1234", Gons, 97.1234 * 0.9 * s1.Degree},
		{"radians", "1.25", Radians, 1.25},
	}
	for _, c := range cases {
		got, err := ParseAngle("angle", c.text, c.unit)
		require.NoErrorf(t, err, "%s", c.name)
		assert.InDeltaf(t, float64(c.want), float64(got), float64(nanorad)*1e-3, "%s (rad)", c.name)
	}
}

func TestParseAngleErrors(t *testing.T) {
	cases := []struct {
		name string
		text string
		unit AngleUnit
	}{
		{"packed 60 minutes", "12.6000", PackedDMS},
		{"packed 60 seconds", "12.0060", PackedDMS},
		{"packed 99 minutes", "12.9900", PackedDMS},
		{"packed two points", "12.30.15", PackedDMS},
		{"packed exponent", "1e2", PackedDMS},
		{"packed empty", "", PackedDMS},
		{"packed lone sign", "-", PackedDMS},
		{"packed lone point", ".", PackedDMS},
		{"packed letters", "12.3a", PackedDMS},
		{"degrees not a number", "ninety", Degrees},
		{"gon NaN", "NaN", Gons},
		{"radians Inf", "+Inf", Radians},
	}
	for _, c := range cases {
		_, err := ParseAngle("angle", c.text, c.unit)
		var se *SyntaxError
		require.Truef(t, errors.As(err, &se), "%s: want *SyntaxError, got %v", c.name, err)
		assert.Equalf(t, c.text, se.Value, "%s: value kept in the error", c.name)
		assert.Equalf(t, se.Error(), toLower(se.Error()), "%s: message is lowercase but for the value", c.name)
	}
	var zero AngleUnit
	_, err := ParseAngle("angle", "1", zero)
	var ue *UnitError
	assert.Truef(t, errors.As(err, &ue), "zero AngleUnit: want *UnitError, got %v", err)
}

// toLower lowercases letters outside quotes, so a message may quote a value
// as given.
func toLower(s string) string {
	out := []byte(s)
	quoted := false
	for i, c := range out {
		if c == '"' {
			quoted = !quoted
		}
		if !quoted && c >= 'A' && c <= 'Z' {
			out[i] = c + 'a' - 'A'
		}
	}
	return string(out)
}

func TestParseZenithAngle(t *testing.T) {
	ok := []struct {
		text string
		unit AngleUnit
		want s1.Angle
	}{
		{"0.0001", Degrees, 0.0001 * s1.Degree},
		{"179.9999", Degrees, 179.9999 * s1.Degree},
		{"199.9999", Gons, 199.9999 * math.Pi / 200},
		{"89.5930", PackedDMS, (89 + 59.0/60 + 30.0/3600) * s1.Degree},
		{"3.14159", Radians, 3.14159},
	}
	for _, c := range ok {
		got, err := ParseZenithAngle(c.text, c.unit)
		require.NoErrorf(t, err, "zenith %s %s", c.text, c.unit)
		assert.InDeltaf(t, float64(c.want), float64(got), 1e-15, "zenith %s %s (rad)", c.text, c.unit)
	}
	bad := []struct {
		text string
		unit AngleUnit
		msg  string
	}{
		{"200", Degrees, "zenith angle 200 deg is outside (0, 180) deg"},
		{"412.5", Gons, "zenith angle 412.5 gon is outside (0, 200) gon"},
		{"-0.0001", Gons, "zenith angle -0.0001 gon is outside (0, 200) gon"},
		{"180.0001", PackedDMS, "zenith angle 180.0001 deg is outside (0, 180) deg"},
		{"3.2", Radians, "zenith angle 3.2 rad is outside (0, 3.141592653589793) rad"},
		// straight up and straight down are no sight to a target beside
		// the instrument (issue: a zenith angle of 0 was accepted)
		{"0", Degrees, "zenith angle 0 deg is outside (0, 180) deg"},
		{"0.00000", Gons, "zenith angle 0.00000 gon is outside (0, 200) gon"},
		{"0.0000", PackedDMS, "zenith angle 0.0000 deg is outside (0, 180) deg"},
		{"180", Degrees, "zenith angle 180 deg is outside (0, 180) deg"},
		{"200", Gons, "zenith angle 200 gon is outside (0, 200) gon"},
		{"180.0000", PackedDMS, "zenith angle 180.0000 deg is outside (0, 180) deg"},
		{"3.141592653589793", Radians, "zenith angle 3.141592653589793 rad is outside (0, 3.141592653589793) rad"},
	}
	for _, c := range bad {
		_, err := ParseZenithAngle(c.text, c.unit)
		var re *RangeError
		require.Truef(t, errors.As(err, &re), "zenith %s %s: want *RangeError, got %v", c.text, c.unit, err)
		assert.Equal(t, c.msg, err.Error())
	}
}

func TestParseDirection(t *testing.T) {
	_, err := ParseDirection("400", Gons)
	var re *RangeError
	require.Truef(t, errors.As(err, &re), "direction 400 gon: want *RangeError, got %v", err)
	assert.Equal(t, "direction 400 gon is outside [0, 400) gon", err.Error())
	got, err := ParseDirection("359.5959", PackedDMS)
	require.NoError(t, err)
	assert.InDeltaf(t, (360 - 1.0/3600), got.Degrees(), 1e-12, "direction 359°59′59″ (deg)")
}

func TestFormatAngle(t *testing.T) {
	cases := []struct {
		name     string
		a        s1.Angle
		unit     AngleUnit
		decimals int
		want     string
	}{
		{"packed 90°30′15.2″", (90 + 30.0/60 + 15.2/3600) * s1.Degree, PackedDMS, 1, "90.30152"},
		{"packed −0°30′", -0.5 * s1.Degree, PackedDMS, 0, "-0.3000"},
		{"packed carries 59.99996″ into the minute", (10 + 59.0/60 + 59.99996/3600) * s1.Degree, PackedDMS, 3, "11.0000000"},
		{"packed tiny negative rounds to unsigned zero", -1e-12 * s1.Degree, PackedDMS, 1, "0.00000"},
		{"packed 5 seconds keeps leading zero", (1 + 5.0/3600) * s1.Degree, PackedDMS, 0, "1.0005"},
		{"gon", 90 * s1.Degree, Gons, 4, "100.0000"},
		{"degrees", 12.25 * s1.Degree, Degrees, 2, "12.25"},
		{"radians", 1.5, Radians, 3, "1.500"},
	}
	for _, c := range cases {
		got, err := FormatAngle(c.a, c.unit, c.decimals)
		require.NoErrorf(t, err, "%s", c.name)
		assert.Equalf(t, c.want, got, "%s", c.name)
	}
	_, err := FormatAngle(1, AngleUnit(0), 2)
	assert.Error(t, err)
}

// Property: formatting to packed with 4 decimals of seconds and parsing
// back returns the angle within half a unit of the last digit.
func TestPackedRoundTrip(t *testing.T) {
	s := *seed
	if s == 0 {
		s = uint64(time.Now().UnixNano())
	}
	t.Logf("seed %d (rerun with -units.seed=%d)", s, s)
	rng := rand.New(rand.NewPCG(s, 0x9e3779b97f4a7c15))
	for i := 0; i < 5000; i++ {
		a := s1.Angle((rng.Float64()*2 - 1) * 2 * math.Pi)
		text, err := FormatAngle(a, PackedDMS, 4)
		require.NoError(t, err)
		back, err := ParseAngle("angle", text, PackedDMS)
		require.NoErrorf(t, err, "parse %q", text)
		assert.InDeltaf(t, float64(a), float64(back), float64(0.5e-4*arcsecond)*1.0001, "packed round trip of %v via %q (rad)", a, text)
	}
}

func TestParseAngleUnit(t *testing.T) {
	for _, u := range []AngleUnit{Degrees, PackedDMS, Gons, Radians} {
		got, err := ParseAngleUnit(u.String())
		require.NoError(t, err)
		assert.Equal(t, u, got)
	}
	got, err := ParseAngleUnit(" DDD.MMSS ")
	require.NoError(t, err)
	assert.Equal(t, PackedDMS, got)
	_, err = ParseAngleUnit("mil")
	var ue *UnitError
	assert.True(t, errors.As(err, &ue))
}
