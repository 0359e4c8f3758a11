package units

import (
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// sameAsStrconv checks ParseFloat against Go's strconv.ParseFloat, the
// correctly rounded reference: the same bits, or an error from both —
// except that what is not decimal syntax (notDecimal) must be an error.
func sameAsStrconv(t *testing.T, s string) {
	t.Helper()
	got, gotErr := ParseFloat(s)
	want, wantErr := strconv.ParseFloat(s, 64)
	if notDecimal(s) {
		wantErr = strconv.ErrSyntax
	}
	if (gotErr != nil) != (wantErr != nil) {
		t.Fatalf("ParseFloat(%q): error %v, strconv: %v", s, gotErr, wantErr)
	}
	if wantErr == nil && math.Float64bits(got) != math.Float64bits(want) {
		t.Fatalf("ParseFloat(%q) = %v (%#x), strconv: %v (%#x)", s, got, math.Float64bits(got), want, math.Float64bits(want))
	}
}

// notDecimal reports whether strconv.ParseFloat would take s as
// something other than decimal syntax: a hexadecimal float, an
// underscore, an infinity or a NaN (written independently of
// decimalSyntax, as the opposite test).
func notDecimal(s string) bool {
	l := strings.ToLower(s)
	return strings.ContainsAny(l, "x_") || strings.Contains(l, "inf") || strings.Contains(l, "nan")
}

// What strconv takes and a surveyor's file never means: every one is a
// syntax error, and none reaches a reduction as a number (0x1p9 was a
// 512 m slope distance and an easting before ParseFloat refused it).
func TestParseFloatDecimalOnly(t *testing.T) {
	for _, s := range []string{"0x1p9", "0X1P9", "-0x1.8p1", "0x10", "0x_1p0", "0x1_0p0", "1_000", "Inf", "+Inf", "-inf",
		"infinity", "NaN", "nan", "1e", "1e+", "e5", ".", ".e1", "1.5.", "1,5", " 1", "1 ", "١٢"} {
		_, err := ParseFloat(s)
		require.ErrorIs(t, err, strconv.ErrSyntax, "ParseFloat(%q)", s)
	}
	for s, want := range map[string]float64{"1e3": 1000, "1.5E-3": 0.0015, "+2.": 2, "-.25e+1": -2.5, "000123.4500": 123.45} {
		got, err := ParseFloat(s)
		require.NoError(t, err, s)
		require.Equal(t, want, got, s) // exact: each is a correctly rounded decimal
	}
}

// randomDecimal is a number of 1 to maxDigits random digits, negative one
// time in four, with a decimal point at a random place: in n − 1 of n of
// them, or in every one where n is 1.
func randomDecimal(rng *rand.Rand, maxDigits, n int) []byte {
	digits := 1 + rng.IntN(maxDigits)
	b := make([]byte, 0, maxDigits+8)
	if rng.IntN(4) == 0 {
		b = append(b, '-')
	}
	point := rng.IntN(digits + 1)
	for d := range digits {
		if d == point && (n == 1 || rng.IntN(n) > 0) {
			b = append(b, '.')
		}
		b = append(b, byte('0'+rng.IntN(10)))
	}
	return b
}

func TestParseFloatMatchesStrconv(t *testing.T) {
	for _, s := range []string{
		"0", "-0", "+0", "0.0", "-0.000", "1", "1.", ".5", "-.5", "+.5", ".", "-", "+", "", " 1", "1 ", "1..2", "1.2.3",
		"2925.7522", "89.679380", "1000.6", "-30", "0.658", "1e3", "1E-3", "0x1p3", "1_000", "inf", "NaN", "Infinity",
		"9007199254740992", "9007199254740993", "9007199254740993.0", "1234567890123456789", "12345678901234567890",
		"0.1234567890123456789012", "0.00000000000000000000001", "0.0000000000000000000000123", "4503599627370497.5",
	} {
		sameAsStrconv(t, s)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for range 200000 {
		sameAsStrconv(t, string(randomDecimal(rng, 19, 3)))
	}
}

func FuzzParseFloat(f *testing.F) {
	for _, s := range []string{"2925.7522", "-0", ".5", "1e3", "9007199254740993", "0.1234567890123456789012"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) { sameAsStrconv(t, s) })
}

func BenchmarkParseFloat(b *testing.B) {
	fields := []string{"2925.7522", "89.679380", "1.631", "1.700", "22.4", "1000.6", "77"}
	b.Run("units", func(b *testing.B) {
		for b.Loop() {
			for _, s := range fields {
				if _, err := ParseFloat(s); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
	b.Run("strconv", func(b *testing.B) {
		for b.Loop() {
			for _, s := range fields {
				if _, err := strconv.ParseFloat(s, 64); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
}

// sameWithComma checks ParseFloatMark with DecimalComma against strconv
// on the same number written with a point: the same bits or an error
// from both.
func sameWithComma(t *testing.T, s string) {
	t.Helper()
	c := strings.Replace(s, ".", ",", 1)
	got, gotErr := ParseFloatMark(c, DecimalComma)
	want, wantErr := strconv.ParseFloat(s, 64)
	if notDecimal(s) || strings.Count(s, ".") > 1 {
		wantErr = strconv.ErrSyntax
	}
	if (gotErr != nil) != (wantErr != nil) {
		t.Fatalf("ParseFloatMark(%q, ','): error %v, strconv(%q): %v", c, gotErr, s, wantErr)
	}
	if wantErr == nil && math.Float64bits(got) != math.Float64bits(want) {
		t.Fatalf("ParseFloatMark(%q, ',') = %v, strconv(%q): %v", c, got, s, want)
	}
}

func TestParseFloatMarkComma(t *testing.T) {
	for _, s := range []string{"2925.7522", "-0.5", ".5", "1.", "1e3", "1.5E-3", "9007199254740993.0", "0.1234567890123456789012",
		"12345678901234567890.5", "1.5e400", "0x1p9", "inf", "NaN", "1_0.5", ""} {
		sameWithComma(t, s)
	}
	rng := rand.New(rand.NewPCG(5, 6))
	for range 100000 {
		b := randomDecimal(rng, 24, 1)
		if rng.IntN(8) == 0 {
			b = append(b, 'e')
			b = strconv.AppendInt(b, int64(rng.IntN(40)-20), 10)
		}
		sameWithComma(t, string(b))
	}
	// Grouped thousands and a point in a comma file are refused, not
	// read as some number (a point there may group thousands: 1.234 is
	// 1234 in a file written with decimal commas).
	for _, s := range []string{"1.234,5", "1,234.5", "1.5", "1.234", "1,2,3", "1 234,5", ",", "1,,5", "1,5e", "0x1,8p1"} {
		_, err := ParseFloatMark(s, DecimalComma)
		require.ErrorIs(t, err, strconv.ErrSyntax, "ParseFloatMark(%q, ',')", s)
	}
	// With the point as the mark a comma is refused, as ParseFloat does.
	for _, s := range []string{"1,5", "1,234.5"} {
		_, err := ParseFloatMark(s, DecimalPoint)
		require.ErrorIs(t, err, strconv.ErrSyntax, "ParseFloatMark(%q, '.')", s)
	}
	// Nothing but a point or a comma is a decimal mark.
	_, err := ParseFloatMark("1;5", DecimalMark(';'))
	require.ErrorIs(t, err, strconv.ErrSyntax)
	_, err = ParseFloatMark("15", DecimalMark(';'))
	require.ErrorIs(t, err, strconv.ErrSyntax)
	// The error quotes the value as written, comma and all.
	_, err = ParseFloatMark("1,5e999999999999999999999", DecimalComma)
	var ne *strconv.NumError
	require.ErrorAs(t, err, &ne)
	require.Equal(t, "1,5e999999999999999999999", ne.Num)
}

func TestAngleAndLengthWithDecimalComma(t *testing.T) {
	for _, c := range []struct {
		u      AngleUnit
		comma  string
		period string
	}{{PackedDMS, "90,3015", "90.3015"}, {PackedDMS, "-0,3000", "-0.3000"}, {Degrees, "89,67938", "89.67938"}, {Gons, "99,6434", "99.6434"}} {
		got, err := ParseAngleMark("angle", c.comma, c.u, DecimalComma)
		require.NoError(t, err, c.comma)
		want, err := ParseAngle("angle", c.period, c.u)
		require.NoError(t, err)
		require.Equal(t, want, got, c.comma) // exact: the same digits
		z, err := ParseZenithAngleMark(" "+c.comma+" ", c.u, DecimalComma)
		if c.comma[0] != '-' {
			require.NoError(t, err, c.comma)
			require.Equal(t, want, z, c.comma)
		} else {
			require.Error(t, err)
		}
		_, err = ParseAngleMark("angle", c.period, c.u, DecimalComma)
		require.Error(t, err, "a point where the mark is a comma: %s", c.period)
	}
	m, err := ParseLengthMark("easting", "512345,678", USSurveyFoot, DecimalComma)
	require.NoError(t, err)
	want, _ := ParseLength("easting", "512345.678", USSurveyFoot)
	require.Equal(t, want, m)
	_, err = ParseLengthMark("easting", "512.345,678", Metre, DecimalComma)
	require.Error(t, err)
}

func BenchmarkParseFloatComma(b *testing.B) {
	fields := []string{"2925,7522", "89,679380", "1,631", "1,700", "22,4", "1000,6", "77"}
	for b.Loop() {
		for _, s := range fields {
			if _, err := ParseFloatMark(s, DecimalComma); err != nil {
				b.Fatal(err)
			}
		}
	}
}
