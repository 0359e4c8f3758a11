package report

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestNightPlot: an inline SVG element with the series' names in its
// legend and the nights' dates on its axis; mismatched series refused.
func TestNightPlot(t *testing.T) {
	x := []float64{20400, 20401, 20402, 20403}
	svg, err := NightPlot("ts-1 additive constant", "constant (mm)", []NightSeries{
		{Name: "nightly fit", X: x, Y: []float64{0.1, 0.3, 0.5, 0.7}, Err: []float64{0.1, 0.1, 0.1, 0.1}},
		{Name: "Theil–Sen", X: []float64{20400, 20403}, Y: []float64{0.1, 0.7}, Trend: true},
	})
	require.NoError(t, err)
	s := string(svg)
	require.True(t, strings.HasPrefix(s, "<svg viewBox="), s[:40])
	require.Contains(t, s, "nightly fit")
	require.Contains(t, s, "Theil–Sen")
	require.Contains(t, s, "2025-11-08") // day 20400
	_, err = NightPlot("x", "y", []NightSeries{{Name: "bad", X: x, Y: []float64{1}}})
	require.Error(t, err)
}
