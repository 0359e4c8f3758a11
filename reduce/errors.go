package reduce

import (
	"fmt"
	"math"
	"strconv"
)

// InputError reports a value that a stage of the chain cannot reduce:
// non-finite, out of range, or physically impossible geometry such as a
// slope distance shorter than the height difference.
type InputError struct {
	Stage    string  // the stage, e.g. "geometry"
	Quantity string  // the quantity, e.g. "slope distance"
	Got      float64 // the value given, in Unit
	Unit     string  // e.g. "m", "hPa", "deg"
	Want     string  // what the stage needs, e.g. "at least the height difference 12.5 m"
}

func (e *InputError) Error() string {
	return fmt.Sprintf("%s: %s %g %s, want %s", e.Stage, e.Quantity, e.Got, e.Unit, e.Want)
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// needFinite returns an *InputError unless v is finite.
func needFinite(stage, quantity string, v float64, unit string) error {
	if !finite(v) {
		return &InputError{Stage: stage, Quantity: quantity, Got: v, Unit: unit, Want: "a finite value"}
	}
	return nil
}

// needPositive returns an *InputError unless v is finite and above zero.
// The test is inlined where it is called; the error is built elsewhere.
func needPositive(stage, quantity string, v float64, unit string) error {
	if v > 0 && !math.IsInf(v, 1) { // NaN fails v > 0
		return nil
	}
	return &InputError{Stage: stage, Quantity: quantity, Got: v, Unit: unit, Want: "a finite value above zero"}
}

// needRange returns an *InputError unless v is in [lo, hi], which are
// finite (so is v then; NaN fails). The test is inlined where it is
// called; the error is built elsewhere.
func needRange(stage, quantity string, v float64, unit string, lo, hi float64) error {
	if v >= lo && v <= hi {
		return nil
	}
	return rangeError(stage, quantity, v, unit, lo, hi)
}

func rangeError(stage, quantity string, v float64, unit string, lo, hi float64) error {
	return &InputError{Stage: stage, Quantity: quantity, Got: v, Unit: unit, Want: fmt.Sprintf("a value in [%g, %g] %s", lo, hi, unit)}
}

// formatMetres writes a length for an error message, to 0.1 mm.
func formatMetres(m float64) string {
	return strconv.FormatFloat(m, 'f', 4, 64) + " m"
}
