package report

import (
	"errors"
	"fmt"
	"html/template"
	"image/color"
	"math"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// A NightSeries is one series of a plot over nights: X the night's number
// of days since 1970-01-01, Y its values and Err the half-length of each
// point's error bar (nil: none). A Trend series is drawn as a dashed line
// through its points instead of as points.
type NightSeries struct {
	Name  string
	X, Y  []float64
	Err   []float64
	Trend bool
}

// seriesColors tell a plot's series apart; their shapes differ too.
var seriesColors = []color.Color{plotInkColor, plotFlagColor, color.RGBA{R: 0x2e, G: 0x7d, B: 0x32, A: 0xff},
	color.RGBA{R: 0x6a, G: 0x1b, B: 0x9a, A: 0xff}, color.RGBA{R: 0x00, G: 0x83, B: 0x8f, A: 0xff}, plotBarColor}

var seriesShapes = []draw.GlyphDrawer{draw.CircleGlyph{}, draw.PyramidGlyph{}, draw.SquareGlyph{}, draw.BoxGlyph{}, draw.RingGlyph{}, draw.CrossGlyph{}}

// NightPlot draws series over nights as an SVG element for an HTML page,
// the same size and style as the residual plot: the nights' dates along
// the bottom, yLabel up the side, a zero line.
func NightPlot(title, yLabel string, series []NightSeries) (template.HTML, error) {
	if len(series) == 0 {
		return "", errors.New("night plot: no series")
	}
	p := newPlot()
	p.Title.Text = title
	p.X.Label.Text = "night"
	p.Y.Label.Text = yLabel
	p.X.Tick.Marker = plot.TickerFunc(nightTicks)
	p.Y.Tick.Marker = plot.TickerFunc(fixedTicks)
	p.Add(plotter.NewGrid())
	zero := plotter.NewFunction(func(float64) float64 { return 0 })
	zero.Samples = 2
	zero.Color = plotZeroColor
	zero.Width = vg.Points(0.8)
	p.Add(zero)
	for i, s := range series {
		if len(s.X) != len(s.Y) || (s.Err != nil && len(s.Err) != len(s.X)) {
			return "", fmt.Errorf("night plot: series %s: %d nights, %d values, %d error bars", s.Name, len(s.X), len(s.Y), len(s.Err))
		}
		var xys plotter.XYs
		var bars residualPoints
		for k := range s.X {
			if !finite(s.X[k]) || !finite(s.Y[k]) {
				continue
			}
			xys = append(xys, plotter.XY{X: s.X[k], Y: s.Y[k]})
			if s.Err != nil {
				bars.add(plotter.XY{X: s.X[k], Y: s.Y[k]}, s.Err[k], "")
			}
		}
		if len(xys) == 0 {
			continue
		}
		ink := seriesColors[i%len(seriesColors)]
		if s.Trend {
			l, err := plotter.NewLine(xys)
			if err != nil {
				return "", fmt.Errorf("night plot: %s: %w", s.Name, err)
			}
			l.Color = plotFitColor
			l.Width = vg.Points(1.5)
			l.Dashes = []vg.Length{vg.Points(6), vg.Points(3)}
			p.Add(l)
			p.Legend.Add(s.Name, l)
			continue
		}
		if bars.Len() > 0 {
			eb, err := plotter.NewYErrorBars(bars)
			if err != nil {
				return "", fmt.Errorf("night plot: %s error bars: %w", s.Name, err)
			}
			eb.LineStyle = draw.LineStyle{Color: ink, Width: vg.Points(0.6)}
			eb.CapWidth = vg.Points(4)
			p.Add(eb)
		}
		sc, err := plotter.NewScatter(xys)
		if err != nil {
			return "", fmt.Errorf("night plot: %s: %w", s.Name, err)
		}
		sc.Shape = seriesShapes[i%len(seriesShapes)]
		sc.Color = ink
		sc.Radius = vg.Points(3)
		p.Add(sc)
		p.Legend.Add(s.Name, sc)
	}
	p.Legend.Top = true
	p.Legend.Left = true
	p.Legend.XOffs = vg.Points(8)
	p.Legend.YOffs = -vg.Points(4)
	svg, err := plotSVG(p, "night plot")
	if err != nil {
		return "", err
	}
	return template.HTML(svg), nil
}

// nightTicks are about six ticks on whole nights, labelled by date.
func nightTicks(lo, hi float64) []plot.Tick {
	step := math.Max(1, math.Ceil((hi-lo)/6))
	var out []plot.Tick
	for x := math.Ceil(lo); x <= hi; x += step {
		out = append(out, plot.Tick{Value: x, Label: time.Unix(int64(x)*86400, 0).UTC().Format(time.DateOnly)})
	}
	return out
}
