package units

import (
	"math"
	"strconv"
	"strings"
)

// LengthUnit is the length of one unit in metres. The zero value is not a
// unit: conversions with it return an error rather than zeros.
type LengthUnit float64

// Length units, each as its exact length in metres.
//
// The international foot is 0.3048 m exactly (the 1959 agreement of the
// national standards laboratories of the US, UK, Canada, Australia, New
// Zealand and South Africa). The US survey foot is 1200/3937 m exactly (the
// Mendenhall Order of 1893, kept for the State Plane Coordinate Systems;
// NOAA/NIST Federal Register notice 85 FR 62698 of 2020 deprecates it from
// 2023). They differ by 2 ppm: 2 mm in 1 km, 0.6 m across a 300 km state.
const (
	Metre             LengthUnit = 1
	USSurveyFoot      LengthUnit = 1200.0 / 3937.0
	InternationalFoot LengthUnit = 0.3048
)

// lengthUnitNames lists the accepted spellings of each unit, the first
// being the one String returns.
var lengthUnitNames = []struct {
	unit  LengthUnit
	names []string
}{
	{Metre, []string{"m", "metre", "meter", "metres", "meters"}},
	{USSurveyFoot, []string{"us-ft", "ftus", "us survey foot", "us survey feet", "survey foot"}},
	{InternationalFoot, []string{"intl-ft", "ft-intl", "international foot", "international feet"}},
}

const lengthUnitWant = `"m", "us-ft" or "intl-ft"`

// ParseLengthUnit returns the unit named by name (case and surrounding
// space ignored). A bare "ft", "foot" or "feet" is refused as ambiguous:
// the two feet differ by 2 ppm, which is larger than the error budget of a
// long line.
func ParseLengthUnit(name string) (LengthUnit, error) {
	key := strings.ToLower(strings.TrimSpace(name))
	for _, u := range lengthUnitNames {
		for _, n := range u.names {
			if key == n {
				return u.unit, nil
			}
		}
	}
	want := lengthUnitWant
	switch key {
	case "ft", "foot", "feet", "'":
		want = `"us-ft" or "intl-ft" (a bare foot is ambiguous)`
	}
	return 0, &UnitError{Kind: "length", Name: name, Want: want}
}

// String returns the unit's short name as ParseLengthUnit accepts it, and
// for a value that is not one of the units, its length in words ("a unit
// of 0.3047972654 m", "no unit" for the zero value), for messages.
func (u LengthUnit) String() string {
	for _, n := range lengthUnitNames {
		if n.unit == u {
			return n.names[0]
		}
	}
	if u == 0 {
		return "no unit"
	}
	return "a unit of " + strconv.FormatFloat(float64(u), 'g', -1, 64) + " m"
}

// valid reports whether u is one of the named units.
func (u LengthUnit) valid() bool {
	return u == Metre || u == USSurveyFoot || u == InternationalFoot
}

// Metres converts v, a length in unit u, to metres.
func (u LengthUnit) Metres(v float64) (float64, error) {
	if !u.valid() {
		return 0, &UnitError{Kind: "length", Name: u.String(), Want: lengthUnitWant}
	}
	return v * float64(u), nil
}

// FromMetres converts m metres to unit u.
func (u LengthUnit) FromMetres(m float64) (float64, error) {
	if !u.valid() {
		return 0, &UnitError{Kind: "length", Name: u.String(), Want: lengthUnitWant}
	}
	return m / float64(u), nil
}

// ParseLength reads a decimal length written in unit u and returns it in
// metres. The value must be finite; quantity names it in errors (e.g.
// "slope distance").
func ParseLength(quantity, s string, u LengthUnit) (float64, error) {
	return ParseLengthMark(quantity, s, u, DecimalPoint)
}

// ParseLengthMark is ParseLength with mark as the decimal mark.
func ParseLengthMark(quantity, s string, u LengthUnit, mark DecimalMark) (float64, error) {
	if !u.valid() {
		return 0, &UnitError{Kind: "length", Name: u.String(), Want: lengthUnitWant}
	}
	v, err := ParseFloatMark(strings.TrimSpace(s), mark)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, &SyntaxError{Quantity: quantity, Value: s, Unit: u.String(), Want: "a finite decimal number", Err: err}
	}
	return v * float64(u), nil
}

// FormatLength writes m metres in unit u with the given number of decimals.
func FormatLength(m float64, u LengthUnit, decimals int) (string, error) {
	v, err := u.FromMetres(m)
	if err != nil {
		return "", err
	}
	return strconv.FormatFloat(v, 'f', decimals, 64), nil
}

// FormatLength is FormatLength(m, u, decimals): a LengthUnit writes
// lengths for the pipeline's messages (reduce/input.LengthUnit).
func (u LengthUnit) FormatLength(m float64, decimals int) (string, error) {
	return FormatLength(m, u, decimals)
}
