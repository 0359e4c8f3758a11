package report

import (
	"fmt"
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

	s.Fit.Evidence = EvidenceHighLeverage
	svg, err = residualPlot(s)
	require.NoError(t, err)
	assert.Contains(t, string(svg), "fit, not a diagnosis: 0.0 mm − 3.46 ppm · distance")
}

func TestResidualPlotSkipsNonFinite(t *testing.T) {
	s := testSummary()
	s.Lines[2].ResidualMM = math.NaN()
	s.Lines[3].Geodesic = math.Inf(1)
	lay := layoutPlot(s)
	assert.Equal(t, 2, lay.Skipped)
	assert.Equal(t, 1, lay.OK.Len(), "lines within tolerance left")
	// The one line within tolerance left, Ω-7–P1, reaches 0.04 + 2·1.01
	// mm, the fitted line 1.84 mm + 0.71 ppm at the far end of the axis
	// more: P3's 14.95 mm is past 5 times that.
	assert.InDelta(t, 5*(1.84+0.71*1208.43317*1.05/1000), lay.Limit, 1e-9, "mm")
	assert.Equal(t, []string{"P3–<script>alert(1…"}, lay.OffScale.Labels)
	assert.Equal(t, []string{"Brücke-Nord–東塔"}, lay.Flagged.Labels)
	assert.Equal(t, 2*1.6, lay.Flagged.Bars[0], "bar is 2σ of the line's mean, mm")

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

func TestLayoutPlot(t *testing.T) {
	s := testSummary()
	s.Fit = nil
	lay := layoutPlot(s)
	assert.Equal(t, 0.0, lay.XMin)
	assert.InDelta(t, 1208.43317*1.05, lay.XMax, 1e-9, "5 % past the longest line, m")
	// Lines within tolerance reach 4.41 mm (P2–P3: |−1.53| + 2·1.44), so
	// flagged lines up to 5 times that are drawn to scale.
	assert.InDelta(t, 5*(1.53+2*1.44), lay.Limit, 1e-9, "mm")
	assert.Equal(t, 2, lay.Flagged.Len())
	assert.Zero(t, lay.OffScale.Len())
	// Lowest: P2–P3 at −1.53 − 2·1.44 mm; highest: P3–hostile at 14.95 + 2·2.92 mm.
	lo, hi := -1.53-2*1.44, 14.95+2*2.92
	span := hi - lo
	assert.InDelta(t, lo, lay.DataMin, 1e-9, "mm")
	assert.InDelta(t, hi, lay.DataMax, 1e-9, "mm")
	assert.InDelta(t, lo-0.1*span, lay.YMin, 1e-9, "mm")
	assert.InDelta(t, hi+0.5*span, lay.YMax, 1e-9, "mm")

	// One line on zero with no σ: the range is widened, not empty.
	s.Lines = []Line{{From: "A", To: "B", Geodesic: 0}}
	lay = layoutPlot(s)
	assert.Less(t, lay.XMin, lay.XMax)
	assert.Less(t, lay.YMin, lay.YMax)
	_, err := residualPlot(s)
	assert.NoError(t, err)
}

// A blunder of metres must not squash the other lines onto zero: it is
// drawn as an arrow at the edge, its residual in its label.
func TestResidualPlotOffScale(t *testing.T) {
	s := testSummary()
	s.Lines = append(s.Lines,
		Line{From: "N1", To: "S1", Count: 5, Geodesic: 662.661, ResidualMM: 51795.8, SigmaMM: 0.7, Flags: []string{"outlier"}},
		Line{From: "N2", To: "S2", Count: 2, Geodesic: 300, ResidualMM: -880, SigmaMM: 0.9, Flags: []string{"outlier"}},
	)
	lay := layoutPlot(s)
	require.Equal(t, 2, lay.OffScale.Len())
	assert.Equal(t, []string{"N1–S1", "N2–S2"}, lay.OffScale.Labels)
	assert.Equal(t, 2, lay.Flagged.Len(), "the other flagged lines stay to scale")
	assert.Less(t, lay.YMax, 100.0, "the axis is not stretched to the blunder, mm")
	assert.Greater(t, lay.YMin, -100.0, "the axis is not stretched to the blunder, mm")

	svg, err := residualPlot(s)
	require.NoError(t, err)
	assert.Contains(t, string(svg), "N1–S1: +51795.8 mm")
	assert.Contains(t, string(svg), "N2–S2: -880.0 mm")
	assert.Contains(t, string(svg), "flagged line off the scale (over 22.1 mm)")
	assert.Contains(t, render(t, s), "a flagged line far off the scale of the others is an arrow")

	// With no line within tolerance there is no scale to keep: all are
	// drawn to scale.
	var only []Line
	for _, l := range s.Lines {
		if l.Flagged() {
			only = append(only, l)
		}
	}
	s.Lines = only
	lay = layoutPlot(s)
	assert.Zero(t, lay.OffScale.Len())
	assert.Greater(t, lay.YMax, 51795.8)
}

// A large job's plot labels its plotMaxLabels worst flagged lines by |w|,
// and says how many more it draws without a label.
func TestResidualPlotLabelsTheWorst(t *testing.T) {
	s := testSummary()
	s.Lines = nil
	const n = plotMaxLabels + 40
	for i := range n {
		s.Lines = append(s.Lines, Line{From: fmt.Sprintf("F%d", i), To: "T", Count: 2, Geodesic: 100 + 10*float64(i),
			ResidualMM: 5, SigmaMM: 1, MaxAbsW: float64((i * 37) % n), Flags: []string{"outlier"}})
	}
	lay := layoutPlot(s)
	assert.Equal(t, n, lay.Flagged.Len())
	assert.Equal(t, n-plotMaxLabels, lay.Unlabelled)
	for i, l := range s.Lines {
		if labelled := lay.Flagged.Labels[i] != ""; labelled != (l.MaxAbsW >= n-plotMaxLabels) {
			t.Errorf("line %d, |w| %g: labelled %v", i, l.MaxAbsW, labelled)
		}
	}
	svg, err := residualPlot(s)
	require.NoError(t, err)
	assert.Equal(t, plotMaxLabels, strings.Count(string(svg), "–T</text>"), "labels drawn")
	assert.Contains(t, render(t, s), fmt.Sprintf("(the %d worst by |w|; %d more are not labelled)", plotMaxLabels, n-plotMaxLabels))
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
	assert.Equal(t, []string{"-2", "0", "2", "4", "6", "8"}, labels(-2.6, 10.3), "no label within 4 % of the top")
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
