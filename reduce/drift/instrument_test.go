package drift

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

func series(n int, f func(i int) float64) []Value {
	s := make([]Value, n)
	for i := range s {
		s[i] = Value{X: float64(i), V: f(i)}
	}
	return s
}

// TestInstrumentTrend: a constant drifting 0.2 mm a night with 0.3 mm of
// scatter (simulated) alerts once the Theil–Sen line passes the 1 mm
// bound and Mann–Kendall finds the trend; a steady offset past the bound
// does not, nor does a trend that stays inside it, nor too few nights.
func TestInstrumentTrend(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	noise := make([]float64, 30)
	for i := range noise {
		noise[i] = 0.3 * rng.NormFloat64()
	}
	drifting := series(30, func(i int) float64 { return 0.2*float64(i) + noise[i] })
	first := -1
	for n := 2; n <= 30; n++ {
		tr := InstrumentTrend(drifting[:n], 1, TrendAlpha)
		if tr.Alert && first < 0 {
			first = n
		}
		if first > 0 {
			require.True(t, tr.Alert, "still drifting after %d nights", n)
		}
	}
	require.GreaterOrEqual(t, first, MinTrendNights)
	require.LessOrEqual(t, first, 10, "0.2 mm a night passes 1 mm by night 6")
	tr := InstrumentTrend(drifting, 1, TrendAlpha)
	require.InDelta(t, 0.2, tr.Line.Slope, 0.03)
	require.Less(t, tr.Line.Lower, 0.2)
	require.Greater(t, tr.Line.Upper, 0.2)

	steady := series(30, func(i int) float64 { return 2 + noise[i] })
	require.False(t, InstrumentTrend(steady, 1, TrendAlpha).Alert, "an offset without a trend")
	inside := series(30, func(i int) float64 { return 0.02*float64(i) + 0.1*noise[i] })
	tin := InstrumentTrend(inside, 1, TrendAlpha)
	require.Less(t, tin.MannKendall.P, TrendAlpha, "a trend ...")
	require.False(t, tin.Alert, "... that stays inside the bound")
	require.False(t, InstrumentTrend(series(5, func(i int) float64 { return 3 * float64(i) }), 1, TrendAlpha).Alert, "too few nights")
}
