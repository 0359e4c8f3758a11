package report

import (
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestResidualPlotInline(t *testing.T) {
	svg, err := residualPlot(testSummary())
	require.NoError(t, err)
	s := string(svg)
	assert.True(t, strings.HasPrefix(s, `<svg viewBox="0 0 640 340" role="img" aria-labelledby="plot-caption">`), "opening tag: %.120s", s)
	assert.True(t, strings.HasSuffix(s, "</svg>\n"))
	assert.Equal(t, 1, strings.Count(s, "<svg"), "one svg element")
	assert.NotContains(t, s, "<?xml")
	assert.NotContains(t, s, "xmlns")
	assert.NotContains(t, s, "font-family:Liberation Sans;", "a font family without fallbacks")
	assert.Contains(t, s, plotFontFallback)
	for _, want := range []string{
		"geodesic distance from control (m)",
		"residual of the mean, reduced − control (mm)",
		"fit: 1.8 mm + 0.71 ppm · distance",
		"line within tolerance",
		"flagged line",
		"error bar: ±2σ of the line&#39;s mean",
		"Brücke-Nord–東塔",
		"P3–&lt;script&gt;alert(1…",
	} {
		assert.Contains(t, s, want)
	}
}

func TestResidualPlotFitSign(t *testing.T) {
	s := testSummary()
	s.Fit.ConstantMM, s.Fit.ScalePPM = -0.02, -3.456
	svg, err := residualPlot(s)
	require.NoError(t, err)
	assert.Contains(t, string(svg), "fit: 0.0 mm − 3.46 ppm · distance")
}

func TestResidualPlotSkipsNonFinite(t *testing.T) {
	s := testSummary()
	s.Lines[2].ResidualMM = math.NaN()
	s.Lines[3].Geodesic = math.Inf(1)
	ok, flagged, labels, skipped := plotData(s)
	assert.Equal(t, 2, skipped)
	assert.Equal(t, 1, ok.Len(), "lines within tolerance left")
	assert.Equal(t, 2, flagged.Len())
	assert.Equal(t, []string{"P3–<script>alert(1…", "Brücke-Nord–東塔"}, labels)
	assert.Equal(t, 2*1.6, flagged.Bars[1], "bar is 2σ of the line's mean")

	_, err := residualPlot(s)
	require.NoError(t, err)
	assert.Contains(t, render(t, s), "2 lines are left out of the plot")
}

func TestResidualPlotEmpty(t *testing.T) {
	s := testSummary()
	for i := range s.Lines {
		s.Lines[i].SigmaMM = math.NaN()
	}
	svg, err := residualPlot(s)
	require.NoError(t, err)
	assert.Nil(t, svg)
}

func TestPlotRanges(t *testing.T) {
	s := testSummary()
	s.Fit = nil
	ok, flagged, _, _ := plotData(s)
	xMin, xMax, yMin, yMax := plotRanges(s, ok, flagged)
	assert.Equal(t, 0.0, xMin)
	assert.InDelta(t, 1208.43317*1.05, xMax, 1e-9, "5 % past the longest line, m")
	// Lowest: P2–P3 at −1.53 − 2·1.44 mm; highest: P3–hostile at 14.95 + 2·2.92 mm.
	lo, hi := -1.53-2*1.44, 14.95+2*2.92
	span := hi - lo
	assert.InDelta(t, lo-0.08*span, yMin, 1e-9, "mm")
	assert.InDelta(t, hi+0.45*span, yMax, 1e-9, "mm")

	// One line on zero with no σ: the range is widened, not empty.
	s.Lines = []Line{{From: "A", To: "B", Geodesic: 0}}
	ok, flagged, _, _ = plotData(s)
	xMin, xMax, yMin, yMax = plotRanges(s, ok, flagged)
	assert.Less(t, xMin, xMax)
	assert.Less(t, yMin, yMax)
	_, err := residualPlot(s)
	assert.NoError(t, err)
}

func TestFixedTicks(t *testing.T) {
	labels := func(lo, hi float64) []string {
		var l []string
		for _, tk := range fixedTicks(lo, hi) {
			if tk.Label != "" {
				l = append(l, tk.Label)
			}
		}
		return l
	}
	assert.Equal(t, []string{"0", "200", "400", "600", "800", "1000", "1200"}, labels(0, 1268.85))
	assert.Equal(t, []string{"-5", "0", "5", "10", "15", "20"}, labels(-5.8, 21.2))
	assert.Equal(t, []string{"-2", "0", "2", "4", "6", "8", "10"}, labels(-2.6, 10.3))
	assert.Equal(t, []string{"-0.4", "-0.2", "0.0", "0.2", "0.4"}, labels(-0.5, 0.5))
	assert.Len(t, fixedTicks(0, 1000), 26, "majors every 200 m, four minors between")
	assert.Nil(t, fixedTicks(1, 1))
}

func TestFixed(t *testing.T) {
	for _, c := range []struct {
		x        float64
		decimals int
		want     string
	}{
		{0, 1, "0.0"},
		{-0.04, 1, "0.0"},
		{math.Copysign(0, -1), 2, "0.00"},
		{-0.05001, 1, "-0.1"},
		{1208.43317, 4, "1208.4332"},
		{12.372, 2, "12.37"},
		{-30, 1, "-30.0"},
		{math.NaN(), 1, "NaN"},
		{math.Inf(-1), 1, "-Inf"},
	} {
		assert.Equal(t, c.want, fixed(c.x, c.decimals), "fixed(%v, %d)", c.x, c.decimals)
	}
}

func TestShortID(t *testing.T) {
	assert.Equal(t, "P1", shortID("P1"))
	assert.Equal(t, "0123456789abcdef", shortID("0123456789abcdef"), "16 runes fit")
	assert.Equal(t, "東東東東東東東東東東東東東東東…", shortID(strings.Repeat("東", 17)), "cut by runes, not bytes")
}
