package drift

import "math"

// Defaults of the rules, stated in the command's help.
const (
	// TrendAlpha is the Mann–Kendall test's two-sided level for an
	// instrument's trend, and 1 − the confidence of its slope's interval.
	TrendAlpha = 0.01
	// MinTrendNights is the fewest nights with a fit that a trend is
	// looked for over.
	MinTrendNights = 6
)

// A Value is one night's value of a series: X the night's number (days
// from any fixed night), V the value.
type Value struct {
	X, V float64
}

// A Trend is the trend of one series of an instrument (its additive
// constant or its scale) up to its last night.
type Trend struct {
	MannKendall MannKendall
	Line        TheilSen
	// Last is the trend line's value at the last night, against Bound.
	Last, Bound float64
	// Alert: the trend is significant (P < α) and carries the instrument
	// beyond its bound.
	Alert bool
}

// InstrumentTrend is the trend of one series of an instrument's nightly
// fits (constants in mm, scales in ppm), over nights in order, at level
// alpha, against bound (the same unit; > 0).
//
// The rule: with at least MinTrendNights nights, the series drifts when
// the Mann–Kendall test finds a trend (two-sided P < alpha) and the
// Theil–Sen line's value at the last night lies beyond ±bound: the
// instrument's calibration is then off by more than its EDM
// specification says it can be, and getting worse (or better) night by
// night rather than scattering. A single bad night moves neither the
// Theil–Sen line nor the test much; a constant off but steady is a
// calibration for the certificate, not a drift.
func InstrumentTrend(s []Value, bound, alpha float64) Trend {
	var t Trend
	t.Bound = bound
	if len(s) < 2 {
		t.MannKendall = MannKendallTest(nil)
		return t
	}
	x := make([]float64, len(s))
	y := make([]float64, len(s))
	for i, v := range s {
		x[i], y[i] = v.X, v.V
	}
	t.MannKendall = MannKendallTest(y)
	t.Line = TheilSenLine(x, y, alpha)
	t.Last = t.Line.At(x[len(x)-1])
	t.Alert = len(s) >= MinTrendNights && t.MannKendall.P < alpha && math.Abs(t.Last) > bound
	return t
}
