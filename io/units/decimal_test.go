package units

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"
)

// sameAsStrconv checks ParseFloat against Go's strconv.ParseFloat, the
// correctly rounded reference: the same bits, or an error from both.
func sameAsStrconv(t *testing.T, s string) {
	t.Helper()
	got, gotErr := ParseFloat(s)
	want, wantErr := strconv.ParseFloat(s, 64)
	if (gotErr != nil) != (wantErr != nil) {
		t.Fatalf("ParseFloat(%q): error %v, strconv: %v", s, gotErr, wantErr)
	}
	if wantErr == nil && math.Float64bits(got) != math.Float64bits(want) {
		t.Fatalf("ParseFloat(%q) = %v (%#x), strconv: %v (%#x)", s, got, math.Float64bits(got), want, math.Float64bits(want))
	}
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
		digits := 1 + rng.IntN(19)
		b := make([]byte, 0, 24)
		if rng.IntN(4) == 0 {
			b = append(b, '-')
		}
		point := rng.IntN(digits + 1)
		for d := range digits {
			if d == point && rng.IntN(3) > 0 {
				b = append(b, '.')
			}
			b = append(b, byte('0'+rng.IntN(10)))
		}
		sameAsStrconv(t, string(b))
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
