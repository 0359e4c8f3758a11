package report

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// plotFloorMM is the foot of the audit plot's misclosure axis: a smaller
// misclosure is drawn on it.
const plotFloorMM = 0.1

// auditPlot draws each delivered value's |misclosure| (distances: the
// residual's size; vectors: the 3-D misclosure; loops: the loop's) in mm
// against the control length, with the tolerance at each length: a point
// above the curve fails. The misclosure axis is logarithmic, from
// plotFloorMM, so that a millimetre and a metre show on one plot. Nil when
// there is nothing to plot.
func auditPlot(s *AuditSummary, tolerance func(float64) float64) ([]byte, error) {
	var ok, bad, loops plotter.XYs
	maxX, maxY := 0.0, 0.0
	for _, r := range s.Rows {
		if !finite(r.Reference) || !finite(r.Residual) {
			continue
		}
		pt := plotter.XY{X: r.Reference, Y: math.Max(math.Abs(r.Residual)*1e3, plotFloorMM)}
		if r.Pass {
			ok = append(ok, pt)
		} else {
			bad = append(bad, pt)
		}
		maxX, maxY = math.Max(maxX, pt.X), math.Max(maxY, pt.Y)
	}
	for _, l := range s.Loops {
		loops = append(loops, plotter.XY{X: l.Length, Y: math.Max(l.MM, plotFloorMM)})
		maxX, maxY = math.Max(maxX, l.Length), math.Max(maxY, l.MM)
	}
	if len(ok)+len(bad)+len(loops) == 0 {
		return nil, nil
	}
	p := newPlot()
	p.X.Label.Text = "control length (m)"
	p.Y.Label.Text = "|misclosure| (mm, logarithmic)"
	p.X.Tick.Marker = plot.TickerFunc(fixedTicks)
	p.Y.Scale = plot.LogScale{}
	p.Y.Tick.Marker = plot.LogTicks{Prec: -1}
	p.Add(plotter.NewGrid())
	p.X.Min, p.X.Max = 0, maxX*1.05
	tolMax := tolerance(maxX*1.05) * 1e3
	p.Y.Min, p.Y.Max = plotFloorMM, math.Max(maxY, tolMax)*2
	tol := plotter.NewFunction(func(d float64) float64 { return tolerance(d) * 1e3 })
	tol.Samples = 50
	tol.Color = plotFitColor
	tol.Width = vg.Points(1.5)
	tol.Dashes = []vg.Length{vg.Points(6), vg.Points(3)}
	p.Add(tol)
	p.Legend.Add("tolerance", tol)
	for _, set := range []struct {
		pts   plotter.XYs
		name  string
		col   color.Color
		shape draw.GlyphDrawer
	}{
		{ok, "passes", color.RGBA{R: 0x1b, G: 0x6c, B: 0x3a, A: 0xff}, draw.CircleGlyph{}},
		{bad, "fails", color.RGBA{R: 0xb0, G: 0x1c, B: 0x1c, A: 0xff}, draw.CrossGlyph{}},
		{loops, "loop", color.RGBA{R: 0x33, G: 0x44, B: 0x99, A: 0xff}, draw.TriangleGlyph{}},
	} {
		if len(set.pts) == 0 {
			continue
		}
		sc, err := plotter.NewScatter(set.pts)
		if err != nil {
			return nil, fmt.Errorf("audit plot: %w", err)
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: set.col, Radius: vg.Points(3.5), Shape: set.shape}
		p.Add(sc)
		p.Legend.Add(set.name, sc)
	}
	p.Legend.Top = true
	return plotSVG(p, "audit plot")
}
