package units

import "fmt"

// SyntaxError reports text that is not a well-formed value of the unit it
// was read in, for example a packed angle with 60 minutes.
type SyntaxError struct {
	Quantity string // what was being read, e.g. "angle", "length"
	Value    string // the text as given
	Unit     string // the unit it was read in, e.g. "packed ddd.mmss"
	Want     string // what a well-formed value looks like
	Err      error  // the underlying cause, if any (e.g. from strconv)
}

func (e *SyntaxError) Error() string {
	return fmt.Sprintf("%s %q in %s: want %s", e.Quantity, e.Value, e.Unit, e.Want)
}

// Unwrap returns the underlying cause.
func (e *SyntaxError) Unwrap() error { return e.Err }

// RangeError reports a well-formed value outside the range its quantity
// allows, for example a zenith angle of 200°.
type RangeError struct {
	Quantity string  // e.g. "zenith angle"
	Value    string  // the text as given
	Unit     string  // the unit of Value, Min and Max, e.g. "gon"
	Min, Max float64 // the allowed range in Unit
	MinOpen  bool    // whether Min itself is excluded
	MaxOpen  bool    // whether Max itself is excluded
}

func (e *RangeError) Error() string {
	opening, closing := "[", "]"
	if e.MinOpen {
		opening = "("
	}
	if e.MaxOpen {
		closing = ")"
	}
	return fmt.Sprintf("%s %s %s is outside %s%g, %g%s %s", e.Quantity, e.Value, e.Unit, opening, e.Min, e.Max, closing, e.Unit)
}

// UnitError reports a unit name that is unknown or ambiguous.
type UnitError struct {
	Kind string // "length" or "angle"
	Name string // the name as given
	Want string // the accepted names
}

func (e *UnitError) Error() string {
	return fmt.Sprintf("%s unit %q: want one of %s", e.Kind, e.Name, e.Want)
}
