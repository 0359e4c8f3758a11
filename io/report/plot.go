package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"regexp"
	"slices"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// The residual plot's size in points (1/72 in). The page scales it to the
// width of the text column; these set its aspect ratio and the size of its
// text relative to the drawing.
const (
	plotWidth  = 640 * vg.Inch / 72
	plotHeight = 340 * vg.Inch / 72
)

// plotBars is the half-length of the error bars drawn on each point, in
// standard deviations of the line's mean residual (Line.SigmaMM). Two σ
// cover about 95 % of a normal error.
const plotBars = 2

// plotLabelRunes is the longest point id the plot prints beside a flagged
// line; longer ids are cut and end in "…". The tables give them in full.
const plotLabelRunes = 16

// plotMaxLabels bounds the flagged lines labelled in the plot: the worst
// by |w|; more labels would only cover each other.
const plotMaxLabels = 30

// Colours of the plot. Flagged lines also differ in shape, and the fitted
// line in dash pattern, so that a grey-scale print still tells them apart.
var (
	plotInkColor     = color.RGBA{R: 0x1f, G: 0x4e, B: 0x79, A: 0xff} // lines within tolerance
	plotFlagColor    = color.RGBA{R: 0xb0, G: 0x00, B: 0x20, A: 0xff} // flagged lines
	plotBarColor     = color.RGBA{R: 0x70, G: 0x70, B: 0x70, A: 0xff} // error bars
	plotFitColor     = color.RGBA{R: 0xc0, G: 0x5a, B: 0x00, A: 0xff} // fitted line
	plotZeroColor    = color.Black
	plotSansFont     = font.Font{Typeface: "Liberation", Variant: "Sans"}
	plotFontFallback = "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;"
)

// plotOffScale is how far, as a multiple of the extent of the lines
// within tolerance, a flagged line's residual may lie and still be drawn
// to scale. A blunder of metres beside residuals of millimetres would
// otherwise squash every other line onto the zero line; past this it is
// drawn as an arrow at the edge, its residual written in its label.
const plotOffScale = 5

// residualPoints are lines of the plot: the residual of each line's mean
// (mm) at its geodesic distance (in the job's length unit), the half-length of its error bar (mm),
// and, for flagged lines, a label.
type residualPoints struct {
	plotter.XYs
	Bars   []float64
	Labels []string
}

// Len is the number of points, shared by the coordinates and the bars.
func (r residualPoints) Len() int { return len(r.XYs) }

// YError gives the lower and upper half-lengths of point i's bar, in mm.
func (r residualPoints) YError(i int) (float64, float64) { return r.Bars[i], r.Bars[i] }

// add appends one point.
func (r *residualPoints) add(pt plotter.XY, bar float64, label string) {
	r.XYs = append(r.XYs, pt)
	r.Bars = append(r.Bars, bar)
	r.Labels = append(r.Labels, label)
}

// plotLayout is what the plot shows and where.
type plotLayout struct {
	// OK are the lines within tolerance, Flagged the flagged lines drawn
	// to scale, OffScale the flagged lines beyond Limit, at their true
	// residual. Skipped counts lines left out for a distance, residual or
	// σ that is not a finite number (or a negative σ).
	OK, Flagged, OffScale residualPoints
	Skipped               int
	// Unlabelled counts the flagged lines drawn without a label: beyond
	// the plotMaxLabels worst.
	Unlabelled int
	// Limit is the largest |residual| drawn to scale, mm; +Inf when every
	// line is.
	Limit float64
	// The axes' ranges, the job's length unit and mm. Between DataMax and YMax is room for
	// the legend, where arrows for lines off the scale above are drawn.
	XMin, XMax, YMin, YMax, DataMin, DataMax float64
	// Unit is the distance axis's unit: the job's length unit.
	Unit reportLength
}

// layoutPlot sorts the summary's lines into the plot's sets and chooses
// the axes' ranges: distance from 0 to 5 % past the longest line;
// residuals over every line drawn to scale with its error bar, zero, and
// the fitted line at both ends of the distance axis, with a margin below
// and room above for the legend. A range that would be empty is widened
// to 1 mm.
func layoutPlot(s *Summary) plotLayout {
	lay := plotLayout{Unit: lengthOf(s)}
	lu := float64(lay.Unit.unit)
	var flagged residualPoints
	labelled := worstFlagged(s.Lines, plotMaxLabels)
	for i, l := range s.Lines {
		if !finite(l.Geodesic) || !finite(l.ResidualMM) || !finite(l.SigmaMM) || l.SigmaMM < 0 {
			lay.Skipped++
			continue
		}
		pt := plotter.XY{X: l.Geodesic / lu, Y: l.ResidualMM}
		if l.Flagged() {
			label := ""
			if labelled[i] {
				label = shortID(l.From) + "–" + shortID(l.To)
			} else {
				lay.Unlabelled++
			}
			flagged.add(pt, plotBars*l.SigmaMM, label)
		} else {
			lay.OK.add(pt, plotBars*l.SigmaMM, "")
		}
		lay.XMax = math.Max(lay.XMax, pt.X)
	}
	if lay.XMax <= 0 {
		lay.XMax = 1
	}
	lay.XMax *= 1.05

	// The fitted line at both ends, and the lines within tolerance with
	// their bars, set the scale that flagged lines are measured against.
	var fitEnds []float64
	if f := s.Fit; f != nil && finite(f.ConstantMM) && finite(f.ScalePPM) {
		fitEnds = []float64{f.ConstantMM + f.ScalePPM*lay.XMin*lu/1000, f.ConstantMM + f.ScalePPM*lay.XMax*lu/1000}
	}
	lay.Limit = math.Inf(1)
	if lay.OK.Len() > 0 {
		extent := 1.0 // mm
		for i, pt := range lay.OK.XYs {
			extent = math.Max(extent, math.Abs(pt.Y)+lay.OK.Bars[i])
		}
		for _, y := range fitEnds {
			extent = math.Max(extent, math.Abs(y))
		}
		lay.Limit = plotOffScale * extent
	}
	for i, pt := range flagged.XYs {
		if math.Abs(pt.Y) > lay.Limit {
			lay.OffScale.add(pt, 0, flagged.Labels[i])
		} else {
			lay.Flagged.add(pt, flagged.Bars[i], flagged.Labels[i])
		}
	}

	for _, set := range []residualPoints{lay.OK, lay.Flagged} {
		for i, pt := range set.XYs {
			lay.DataMin = math.Min(lay.DataMin, pt.Y-set.Bars[i])
			lay.DataMax = math.Max(lay.DataMax, pt.Y+set.Bars[i])
		}
	}
	for _, y := range fitEnds {
		lay.DataMin, lay.DataMax = math.Min(lay.DataMin, y), math.Max(lay.DataMax, y)
	}
	span := lay.DataMax - lay.DataMin
	if span <= 0 {
		span = 1
	}
	lay.YMin, lay.YMax = lay.DataMin-0.1*span, lay.DataMax+0.5*span
	return lay
}

// residualPlot draws the residual of each line's mean against its geodesic
// distance, with ±plotBars·σ error bars, flagged lines as red triangles
// labelled with their ids (as arrows at the edge, with their residual,
// when far off the scale of the others), the fitted line ConstantMM +
// ScalePPM·distance when the summary has a fit, and a zero line. It
// returns an <svg> element ready to be placed inline in an HTML page: no
// XML prolog, no namespace URLs, and fonts named by family with generic
// fallbacks, so the page loads nothing. The result is nil when no line has
// finite values to plot.
//
// Drawing is deterministic: the same summary gives the same bytes.
func residualPlot(s *Summary) ([]byte, error) {
	lay := layoutPlot(s)
	if lay.OK.Len()+lay.Flagged.Len()+lay.OffScale.Len() == 0 {
		return nil, nil
	}

	p := newPlot()
	p.X.Label.Text = "geodesic distance from control (" + lay.Unit.label + ")"
	p.Y.Label.Text = "residual of the mean, reduced − control (mm)"
	p.X.Tick.Marker = plot.TickerFunc(fixedTicks)
	p.Y.Tick.Marker = plot.TickerFunc(fixedTicks)
	p.Add(plotter.NewGrid())

	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = lay.XMin, lay.XMax, lay.YMin, lay.YMax

	zero := plotter.NewFunction(func(float64) float64 { return 0 })
	zero.Samples = 2
	zero.Color = plotZeroColor
	zero.Width = vg.Points(0.8)
	p.Add(zero)

	if s.Fit != nil && finite(s.Fit.ConstantMM) && finite(s.Fit.ScalePPM) {
		c, k, lu := s.Fit.ConstantMM, s.Fit.ScalePPM, float64(lay.Unit.unit)
		// d in the job's unit, lu metres to it: k ppm of d·lu metres is k·d·lu/1000 mm.
		fit := plotter.NewFunction(func(d float64) float64 { return c + k*d*lu/1000 })
		fit.Samples = 2
		fit.Color = plotFitColor
		fit.Width = vg.Points(1.5)
		fit.Dashes = []vg.Length{vg.Points(6), vg.Points(3)}
		p.Add(fit)
		name := "fit"
		if !s.Fit.Enough() {
			name = "fit, not a diagnosis"
		}
		p.Legend.Add(fmt.Sprintf("%s: %s mm %s %s ppm · distance",
			name, fixed(c, 1), signWord(k), fixed(math.Abs(k), 2)), fit)
	}

	barStyle := draw.LineStyle{Color: plotBarColor, Width: vg.Points(0.8)}
	const barCap = 5
	for _, set := range []struct {
		pts   residualPoints
		name  string
		shape draw.GlyphDrawer
		ink   color.Color
	}{
		{lay.OK, "line within tolerance", draw.CircleGlyph{}, plotInkColor},
		{lay.Flagged, "flagged line", draw.PyramidGlyph{}, plotFlagColor},
	} {
		if set.pts.Len() == 0 {
			continue
		}
		bars, err := plotter.NewYErrorBars(set.pts)
		if err != nil {
			return nil, fmt.Errorf("residual plot: %s error bars: %w", set.name, err)
		}
		bars.LineStyle = barStyle
		bars.CapWidth = vg.Points(barCap)
		sc, err := plotter.NewScatter(set.pts.XYs)
		if err != nil {
			return nil, fmt.Errorf("residual plot: %s points: %w", set.name, err)
		}
		sc.Shape = set.shape
		sc.Color = set.ink
		sc.Radius = vg.Points(3.5)
		p.Add(bars, sc)
		p.Legend.Add(set.name, sc)
	}
	p.Legend.Add(fmt.Sprintf("error bar: ±%dσ of the line's mean", plotBars),
		barThumbnail{barStyle, vg.Points(barCap)})

	// Lines off the scale: an arrow just past the data, pointing the way
	// the residual lies, labelled with the residual.
	labelled := lay.Flagged
	if lay.OffScale.Len() > 0 {
		span := lay.DataMax - lay.DataMin
		var arrows residualPoints
		for i, pt := range lay.OffScale.XYs {
			at := lay.DataMax + 0.12*span
			if pt.Y < 0 {
				at = lay.DataMin - 0.05*span
			}
			label := ""
			if lay.OffScale.Labels[i] != "" {
				label = fmt.Sprintf("%s: %s mm", lay.OffScale.Labels[i], signed(pt.Y, 1))
			}
			arrows.add(plotter.XY{X: pt.X, Y: at}, 0, label)
		}
		sc, err := plotter.NewScatter(arrows.XYs)
		if err != nil {
			return nil, fmt.Errorf("residual plot: lines off the scale: %w", err)
		}
		sc.GlyphStyleFunc = func(i int) draw.GlyphStyle {
			return draw.GlyphStyle{Color: plotFlagColor, Radius: vg.Points(4.5),
				Shape: arrowGlyph{Down: lay.OffScale.XYs[i].Y < 0}}
		}
		p.Add(sc)
		p.Legend.Add(fmt.Sprintf("flagged line off the scale (over %s mm)", fixed(lay.Limit, 1)),
			legendGlyph{draw.GlyphStyle{Color: plotFlagColor, Radius: vg.Points(4), Shape: arrowGlyph{}}})
		labelled.XYs = append(slices.Clone(labelled.XYs), arrows.XYs...)
		labelled.Labels = append(slices.Clone(labelled.Labels), arrows.Labels...)
	}
	p.Legend.Top = true
	p.Legend.Left = true
	p.Legend.XOffs = vg.Points(8)
	p.Legend.YOffs = -vg.Points(4)
	p.Legend.Padding = vg.Points(2)

	// Flagged lines are labelled from–to: to the right of points in the
	// left half of the plot, to the left of those in the right half, so
	// that no label runs off the drawing.
	var right, left plotter.XYLabels
	for i, pt := range labelled.XYs {
		if labelled.Labels[i] == "" {
			continue
		}
		side := &right
		if pt.X > (lay.XMin+lay.XMax)/2 {
			side = &left
		}
		side.XYs = append(side.XYs, pt)
		side.Labels = append(side.Labels, labelled.Labels[i])
	}
	for _, side := range []struct {
		labels plotter.XYLabels
		align  draw.XAlignment
		dx     vg.Length
	}{
		{right, draw.XLeft, vg.Points(7)},
		{left, draw.XRight, -vg.Points(7)},
	} {
		if len(side.labels.Labels) == 0 {
			continue
		}
		lab, err := plotter.NewLabels(side.labels)
		if err != nil {
			return nil, fmt.Errorf("residual plot: labels: %w", err)
		}
		for i := range lab.TextStyle {
			lab.TextStyle[i].Font = font.From(plotSansFont, 9)
			lab.TextStyle[i].Color = plotFlagColor
			lab.TextStyle[i].XAlign = side.align
		}
		lab.Offset = vg.Point{X: side.dx, Y: vg.Points(2)}
		p.Add(lab)
	}

	return plotSVG(p, "residual plot")
}

// newPlot is a plot in the report's type: the title in 12 pt, the axis
// labels in 11, the tick labels and the legend in 10.
func newPlot() *plot.Plot {
	p := plot.New()
	for _, ts := range []struct {
		font *font.Font
		size vg.Length
	}{
		{&p.Title.TextStyle.Font, 12},
		{&p.X.Label.TextStyle.Font, 11},
		{&p.Y.Label.TextStyle.Font, 11},
		{&p.X.Tick.Label.Font, 10},
		{&p.Y.Tick.Label.Font, 10},
		{&p.Legend.TextStyle.Font, 10},
	} {
		*ts.font = font.From(plotSansFont, ts.size)
	}
	return p
}

// plotSVG draws p at the report's plot size and returns it as an <svg>
// element to place inline (inlineSVG); what names the plot in an error.
func plotSVG(p *plot.Plot, what string) ([]byte, error) {
	c := vgsvg.New(plotWidth, plotHeight)
	p.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return nil, fmt.Errorf("%s: %w", what, err)
	}
	return inlineSVG(buf.Bytes())
}

// barThumbnail draws an error bar, a vertical stroke with a cap at each
// end, as the legend's sample of the error bars.
type barThumbnail struct {
	draw.LineStyle
	Cap vg.Length // width of each cap
}

// Thumbnail draws the bar across the height of c, centred.
func (b barThumbnail) Thumbnail(c *draw.Canvas) {
	x := (c.Min.X + c.Max.X) / 2
	c.StrokeLine2(b.LineStyle, x, c.Min.Y, x, c.Max.Y)
	for _, y := range []vg.Length{c.Min.Y, c.Max.Y} {
		c.StrokeLine2(b.LineStyle, x-b.Cap/2, y, x+b.Cap/2, y)
	}
}

// arrowGlyph is a filled triangle on a short stem, pointing up, or down
// when Down is set: a line whose residual lies off the plot that way.
type arrowGlyph struct{ Down bool }

// DrawGlyph draws the arrow with its tip a radius from pt.
func (g arrowGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	dir := vg.Length(1)
	if g.Down {
		dir = -1
	}
	var head vg.Path
	head.Move(vg.Point{X: pt.X, Y: pt.Y + dir*r})
	head.Line(vg.Point{X: pt.X - r*0.8, Y: pt.Y})
	head.Line(vg.Point{X: pt.X + r*0.8, Y: pt.Y})
	head.Close()
	c.SetColor(sty.Color)
	c.Fill(head)
	c.StrokeLine2(draw.LineStyle{Color: sty.Color, Width: r * 0.4}, pt.X, pt.Y, pt.X, pt.Y-dir*r)
}

// legendGlyph is a legend sample that draws one glyph.
type legendGlyph struct{ draw.GlyphStyle }

// Thumbnail draws the glyph in the middle of c.
func (g legendGlyph) Thumbnail(c *draw.Canvas) {
	c.DrawGlyph(g.GlyphStyle, c.Center())
}

// fixedTicks puts about six major ticks on round values (1, 2 or 5 times a
// power of ten) with labels of as many decimals as the step needs, and four
// minor ticks between majors.
func fixedTicks(lo, hi float64) []plot.Tick {
	if !(hi > lo) {
		return nil
	}
	raw := (hi - lo) / 6
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := mag
	for _, m := range []float64{2, 5, 10} {
		if raw/mag > m*0.75 {
			step = m * mag
		}
	}
	decimals := max(0, -int(math.Floor(math.Log10(step))))
	minor := step / 5
	var ticks []plot.Tick
	for i := math.Ceil(lo / minor); i*minor <= hi+minor*1e-9; i++ {
		v := i * minor
		t := plot.Tick{Value: v}
		// A label too near the top of the range would run off the
		// drawing: the axis ends there without one.
		if m := math.Mod(math.Abs(i), 5); m == 0 && hi-v > 0.04*(hi-lo) {
			t.Label = fixed(v, decimals)
		}
		ticks = append(ticks, t)
	}
	return ticks
}

// svgStart matches the XML prolog, the generator comment and the opening
// <svg> tag that vgsvg writes, which names the SVG and XLink namespaces by
// URL.
var svgStart = regexp.MustCompile(`(?s)\A<\?xml[^>]*\?>\s*(<!--.*?-->\s*)?<svg\b[^>]*>`)

// inlineSVG turns a standalone SVG document written by vgsvg into an
// element for an HTML page: the prolog and generator comment go, the
// opening tag keeps only the view box (an HTML parser puts <svg> in the SVG
// namespace itself), and every font family gains generic fallbacks, since
// the page embeds no font files.
func inlineSVG(doc []byte) ([]byte, error) {
	loc := svgStart.FindIndex(doc)
	if loc == nil {
		return nil, fmt.Errorf("residual plot: the SVG writer's output does not start with an XML prolog and <svg> tag")
	}
	w, h := plotWidth.Points(), plotHeight.Points()
	var out bytes.Buffer
	fmt.Fprintf(&out, `<svg viewBox="0 0 %s %s" role="img" aria-labelledby="plot-caption">`,
		fixed(w, 0), fixed(h, 0))
	body := strings.ReplaceAll(string(doc[loc[1]:]), "font-family:Liberation Sans;", plotFontFallback)
	out.WriteString(body)
	return out.Bytes(), nil
}

// shortID cuts a point id to plotLabelRunes runes for a plot label.
func shortID(id string) string {
	r := []rune(id)
	if len(r) <= plotLabelRunes {
		return id
	}
	return string(r[:plotLabelRunes-1]) + "…"
}

// signed formats x with the given decimals and always a sign, "+" or "-".
func signed(x float64, decimals int) string {
	f := fixed(x, decimals)
	if strings.HasPrefix(f, "-") {
		return f
	}
	return "+" + f
}

// signWord is "+" for a non-negative x and "−" (minus sign) otherwise.
func signWord(x float64) string {
	if x < 0 {
		return "−"
	}
	return "+"
}

// finite reports whether x is neither NaN nor infinite.
func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// worstFlagged marks the at most n flagged lines with the largest |w|
// (the first observed of equals), by position in lines.
func worstFlagged(lines []Line, n int) []bool {
	var flagged []flaggedLine
	for i, l := range lines {
		if l.Flagged() {
			flagged = append(flagged, flaggedLine{i, l.MaxAbsW})
		}
	}
	marked := make([]bool, len(lines))
	for _, f := range keepWorst(flagged, n) {
		marked[f.i] = true
	}
	return marked
}
