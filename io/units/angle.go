package units

import (
	"math"
	"strconv"
	"strings"

	"github.com/golang/geo/s1"
)

// Gon is the centesimal angle unit: a full turn is 400 gon, a right angle
// 100 gon (ISO 80000-3; also called grad). One mgon is about 0.016 mm/m of
// lateral offset.
const Gon = s1.Angle(math.Pi / 200)

// AngleUnit is a way of writing an angle in a file. The zero value is not a
// unit: parsing or formatting with it returns an error.
type AngleUnit int

// Angle units at the edges.
const (
	// Degrees: decimal degrees, 90.5 is 90°30′.
	Degrees AngleUnit = iota + 1
	// PackedDMS: degrees, minutes and seconds packed into one decimal
	// number DDD.MMSSs, so 90.3015 is 90°30′15″ and -0.3000 is -0°30′
	// (common practice on total stations and in field books).
	PackedDMS
	// Gons: decimal gon, 400 to the turn.
	Gons
	// Radians: decimal radians.
	Radians
)

var angleUnitNames = []struct {
	unit  AngleUnit
	names []string
}{
	{Degrees, []string{"deg", "degree", "degrees", "dd"}},
	{PackedDMS, []string{"dms", "packed", "ddd.mmss"}},
	{Gons, []string{"gon", "gons", "grad", "grads"}},
	{Radians, []string{"rad", "radian", "radians"}},
}

const angleUnitWant = `"deg", "dms" (packed DDD.MMSS), "gon" or "rad"`

// ParseAngleUnit returns the unit named by name (case and surrounding space
// ignored).
func ParseAngleUnit(name string) (AngleUnit, error) {
	key := strings.ToLower(strings.TrimSpace(name))
	for _, u := range angleUnitNames {
		for _, n := range u.names {
			if key == n {
				return u.unit, nil
			}
		}
	}
	return 0, &UnitError{Kind: "angle", Name: name, Want: angleUnitWant}
}

// String returns the unit's short name as ParseAngleUnit accepts it.
func (u AngleUnit) String() string {
	for _, n := range angleUnitNames {
		if n.unit == u {
			return n.names[0]
		}
	}
	if u == 0 {
		return "no unit"
	}
	return "angle unit number " + strconv.Itoa(int(u)) + " (not one geored knows)"
}

// perUnit returns the size of one unit (one degree for PackedDMS, whose
// numbers parse to degrees).
func (u AngleUnit) perUnit() (s1.Angle, bool) {
	switch u {
	case Degrees, PackedDMS:
		return s1.Degree, true
	case Gons:
		return Gon, true
	case Radians:
		return s1.Radian, true
	}
	return 0, false
}

// halfTurn returns 180° written in unit u, for range checks made in the
// unit's own numbers (so that 200 gon is exactly the limit).
func (u AngleUnit) halfTurn() float64 {
	switch u {
	case Gons:
		return 200
	case Radians:
		return math.Pi
	}
	return 180
}

// unitValue reads s as a number in unit u: decimal degrees for Degrees and
// PackedDMS, gon for Gons, radians for Radians, with mark as its decimal
// mark.
func unitValue(quantity, s string, u AngleUnit, mark DecimalMark) (float64, error) {
	if _, ok := u.perUnit(); !ok {
		return 0, &UnitError{Kind: "angle", Name: u.String(), Want: angleUnitWant}
	}
	if u == PackedDMS {
		return parsePackedDegrees(quantity, s, mark)
	}
	v, err := ParseFloatMark(strings.TrimSpace(s), mark)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, &SyntaxError{Quantity: quantity, Value: s, Unit: u.String(), Want: "a finite decimal number", Err: err}
	}
	return v, nil
}

// ParseAngle reads an angle written in unit u. Any finite value is
// accepted; quantity names it in errors. Use ParseZenithAngle or
// ParseDirection where the quantity has a range.
func ParseAngle(quantity, s string, u AngleUnit) (s1.Angle, error) {
	return ParseAngleMark(quantity, s, u, DecimalPoint)
}

// ParseAngleMark is ParseAngle with mark as the decimal mark (a packed
// angle's too: 90,3015 with DecimalComma).
func ParseAngleMark(quantity, s string, u AngleUnit, mark DecimalMark) (s1.Angle, error) {
	v, err := unitValue(quantity, s, u, mark)
	if err != nil {
		return 0, err
	}
	per, _ := u.perUnit()
	return s1.Angle(v) * per, nil
}

// ParseZenithAngle reads a zenith angle written in unit u and checks that
// it lies strictly between 0 and 180° (face left: 0 is straight up, 90°
// horizontal, 180° straight down; neither end is a sight to a target
// beside the instrument). A face-right reading (over 180°) must be reduced
// to face left first; it is refused here rather than silently folded.
func ParseZenithAngle(s string, u AngleUnit) (s1.Angle, error) {
	return ParseZenithAngleMark(s, u, DecimalPoint)
}

// ParseZenithAngleMark is ParseZenithAngle with mark as the decimal mark.
func ParseZenithAngleMark(s string, u AngleUnit, mark DecimalMark) (s1.Angle, error) {
	return parseInRange("zenith angle", s, u, u.halfTurn(), true, true, mark)
}

// ParseDirection reads a horizontal direction or azimuth written in unit u
// and checks that it lies in [0, full turn).
func ParseDirection(s string, u AngleUnit) (s1.Angle, error) {
	return parseInRange("direction", s, u, 2*u.halfTurn(), false, true, DecimalPoint)
}

// parseInRange reads an angle in unit u and checks it against [0, max],
// with 0 excluded when minOpen and max when maxOpen, in the unit's own
// numbers.
func parseInRange(quantity, s string, u AngleUnit, max float64, minOpen, maxOpen bool, mark DecimalMark) (s1.Angle, error) {
	v, err := unitValue(quantity, s, u, mark)
	if err != nil {
		return 0, err
	}
	if v < 0 || v > max || (minOpen && v == 0) || (maxOpen && v == max) {
		return 0, &RangeError{Quantity: quantity, Value: strings.TrimSpace(s), Unit: u.rangeUnit(), Min: 0, Max: max, MinOpen: minOpen, MaxOpen: maxOpen}
	}
	per, _ := u.perUnit()
	return s1.Angle(v) * per, nil
}

// rangeUnit names the unit in which range errors quote their limits.
func (u AngleUnit) rangeUnit() string {
	if u == PackedDMS {
		return "deg"
	}
	return u.String()
}

// FormatAngle writes a in unit u. For Degrees, Gons and Radians decimals is
// the number of decimal places; for PackedDMS it is the number of decimal
// places of the seconds, so FormatAngle(a, PackedDMS, 1) gives "90.30152"
// for 90°30′15.2″.
func FormatAngle(a s1.Angle, u AngleUnit, decimals int) (string, error) {
	per, ok := u.perUnit()
	if !ok {
		return "", &UnitError{Kind: "angle", Name: u.String(), Want: angleUnitWant}
	}
	if u == PackedDMS {
		return formatPacked(a.Degrees(), decimals), nil
	}
	return strconv.FormatFloat(float64(a/per), 'f', decimals, 64), nil
}
