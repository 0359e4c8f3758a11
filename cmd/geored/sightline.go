package main

import (
	"bytes"
	"encoding/csv"
	"errors"
	"flag"
	"fmt"
	"html"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/outset"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// meanEarthRadius is R₁ = (2a + b)/3 of GRS 80, 6 371 008.8 m (Moritz,
// Geodetic Reference System 1980), the radius of the trade's rules of
// thumb, used where a sightline is given by its length alone.
const meanEarthRadius = 6371008.8

// sightlineSamples is how many intervals the CSV and the plot sample the
// ray at.
const sightlineSamples = 200

type sightlineFlags struct {
	from, to, profile, plot               string
	hi, ht, distance, eye, target, radius float64
	minClearance                          float64
	csv                                   bool
	pointsFile                            string // the job's, once resolved
}

func runSightline(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("sightline", flag.ContinueOnError)
	var jf jobFlags
	jf.register(fs)
	var f sightlineFlags
	fs.StringVar(&f.from, "from", "", "id of the instrument's mark in the points file (with -to)")
	fs.StringVar(&f.to, "to", "", "id of the target's mark in the points file (with -from)")
	fs.Float64Var(&f.hi, "hi", 0, "instrument (eye) height over the mark -from, in the length unit")
	fs.Float64Var(&f.ht, "ht", 0, "target height over the mark -to, in the length unit")
	fs.Float64Var(&f.distance, "distance", 0, "instead of marks: distance along the ground from eye to target, in the length unit")
	fs.Float64Var(&f.eye, "eye-height", 0, "with -distance: eye height above the ground, in the length unit")
	fs.Float64Var(&f.target, "target-height", 0, "with -distance: target height above the ground, in the length unit")
	fs.Float64Var(&f.radius, "radius-m", meanEarthRadius, "with -distance: radius of the Earth, metres")
	fs.StringVar(&f.profile, "profile", "", "CSV of distance,height: ground or obstacles under the line, distance from the eye along the line and height above the geoid (orthometric, as on maps; with -distance: above the ground at the ends), in the length unit")
	fs.Float64Var(&f.minClearance, "min-clearance", 0, "clearance over a profile point below which it is flagged, in the length unit")
	fs.BoolVar(&f.csv, "csv", false, "print CSV of the ray along the line (samples, profile points and the lowest point) instead of a table")
	fs.StringVar(&f.plot, "plot", "", "also write a profile plot with exaggerated vertical scale to this file: .svg or .html")
	fs.Usage = func() {
		fmt.Fprint(stderr, `Usage: geored sightline -from ID -to ID -hi H -ht H [-config job.toml] [flags]
       geored sightline -distance L -eye-height H -target-height H [flags]

Whether a line of sight clears the curved Earth: the ray's clearance above the
surface along the line with the coefficient of refraction k (a circular ray of
curvature k/R), where it runs lowest and by how much, the horizon distance from
each end, and how much of the target the Earth hides from the eye. With marks,
heights are above the geoid (orthometric: H = h − N, the heights of ground and
water) and R is the ellipsoid's radius in the line's azimuth; with -distance,
heights are above the ground at the ends.
A profile CSV (distance,height) gives the clearance over each point.

Exit status: 0 the line clears the surface and every profile point by the
minimum clearance, 1 it does not, 2 could not run.

Flags:
`)
		fs.PrintDefaults()
		fmt.Fprintln(stderr, "\n"+cautionText)
	}
	if ok, code := parseFlags(fs, args, stderr); !ok {
		return code
	}
	sl, unit, title, err := f.sightline(fs, &jf, stderr)
	if err != nil {
		return fail(stderr, "sightline", err)
	}
	sum, err := sl.Summarize()
	if err != nil {
		return fail(stderr, "sightline", err)
	}
	var prof []reduce.PointClearance
	if f.profile != "" {
		pts, err := readProfileFile(f.profile, unit, sl.Arc, stderr)
		if err != nil {
			return fail(stderr, "sightline", err)
		}
		if prof, err = sl.ProfileClearance(pts, f.minClearance*float64(unit)); err != nil {
			return fail(stderr, "sightline", err)
		}
	}
	if f.csv {
		err = writeSightlineCSV(stdout, sum, prof, unit)
	} else {
		err = writeSightlineTable(stdout, title, sum, prof, unit, f.minClearance*float64(unit))
	}
	if err != nil {
		return fail(stderr, "sightline", err)
	}
	if f.plot != "" {
		keep := []outset.Keep{{Role: "the job file", Path: jf.config}, {Role: "the points file", Path: f.pointsFile}, {Role: "the profile file", Path: f.profile}}
		if err := writeSightlinePlot(f.plot, title, sum, prof, unit, f.minClearance*float64(unit), keep, stderr); err != nil {
			return fail(stderr, "sightline", err)
		}
	}
	if !sum.Clear || slices.ContainsFunc(prof, func(p reduce.PointClearance) bool { return p.Below }) {
		return exitFlagged
	}
	return exitOK
}

// sightline builds the sightline the flags ask for, with the length unit
// and a title.
func (f *sightlineFlags) sightline(fs *flag.FlagSet, jf *jobFlags, stderr io.Writer) (reduce.Sightline, units.LengthUnit, string, error) {
	set := map[string]bool{}
	fs.Visit(func(fl *flag.Flag) { set[fl.Name] = true })
	marks := set["from"] || set["to"]
	direct := set["distance"]
	switch {
	case marks && direct:
		return reduce.Sightline{}, 0, "", errors.New("give -from and -to, or -distance, not both")
	case !marks && !direct:
		return reduce.Sightline{}, 0, "", errors.New("give -from ID -to ID (with -hi, -ht and the job's points), or -distance with -eye-height and -target-height")
	case marks && (f.from == "" || f.to == ""):
		return reduce.Sightline{}, 0, "", errors.New("give -from and -to together")
	case marks && (set["eye-height"] || set["target-height"] || set["radius-m"]):
		return reduce.Sightline{}, 0, "", errors.New("-eye-height, -target-height and -radius-m go with -distance; with marks give -hi and -ht")
	case direct && (set["hi"] || set["ht"]):
		return reduce.Sightline{}, 0, "", errors.New("-hi and -ht go with -from and -to; with -distance give -eye-height and -target-height")
	}
	if direct {
		file, name, err := jf.file(fs)
		if err != nil {
			return reduce.Sightline{}, 0, "", err
		}
		unit, err := units.ParseLengthUnit(or(file.LengthUnit, "m"))
		if err != nil {
			return reduce.Sightline{}, 0, "", fmt.Errorf("%s: length_unit: %w", name, err)
		}
		k := jobconfig.DefaultRefractionK
		if file.RefractionK != nil {
			k = *file.RefractionK
		}
		u := float64(unit)
		s, err := reduce.NewSightline(f.distance*u, f.eye*u, f.target*u, f.radius, k)
		title := fmt.Sprintf("line of sight over %s %s, eye %s %s, target %s %s above the ground", fmtLen(f.distance*u, unit), unit, fmtLen(f.eye*u, unit), unit, fmtLen(f.target*u, unit), unit)
		return s, unit, title, err
	}
	j, err := jf.resolve(fs)
	if err != nil {
		return reduce.Sightline{}, 0, "", err
	}
	f.pointsFile = j.Points
	w, err := openJobWorld(j, stderr)
	if err != nil {
		return reduce.Sightline{}, 0, "", err
	}
	defer w.close()
	a, markA, err := w.mark(f.from, "station", sightSource{file: "-from"})
	if err != nil {
		return reduce.Sightline{}, 0, "", err
	}
	b, markB, err := w.mark(f.to, "target", sightSource{file: "-to"})
	if err != nil {
		return reduce.Sightline{}, 0, "", err
	}
	line, err := job.Inverse(a, b, w.sess.geod, w.sess.proj)
	if err != nil {
		return reduce.Sightline{}, 0, "", fmt.Errorf("line %s → %s: %w", f.from, f.to, err)
	}
	// Clearance is wanted above the ground and water, whose heights are
	// orthometric: the marks' heights above the geoid, whatever datum the
	// job reduces distances to. Without a geoid they are ellipsoidal, and
	// the title says so.
	hA, hB := markA.Orthometric, markB.Orthometric
	surface := "above the geoid (orthometric)"
	if j.Datum == reduce.DatumEllipsoid && (markA.Separation.Source == reduce.SeparationNone || markB.Separation.Source == reduce.SeparationNone) {
		hA, hB = markA.Ellipsoidal, markB.Ellipsoidal
		surface = "above the ellipsoid: the job gives no geoid, so clearances are not above ground or water heights"
	}
	u := float64(j.LengthUnit)
	s, err := reduce.NewSightline(line.Geodesic.Distance, hA+f.hi*u, hB+f.ht*u, line.Line.Radius, j.K)
	title := fmt.Sprintf("line of sight %s → %s, heights %s", f.from, f.to, surface)
	return s, j.LengthUnit, title, err
}

func or(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

func fmtLen(m float64, u units.LengthUnit) string { return lengthText(m, u, false) }

// readProfileFile reads a profile file in unit for a line of length metres;
// its warnings go to stderr.
func readProfileFile(path string, unit units.LengthUnit, length float64, stderr io.Writer) ([]reduce.ProfilePoint, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	pts, warnings, err := obsfile.ReadProfile(f, path, unit, length)
	for _, wn := range warnings {
		warnTo(stderr)(wn)
	}
	if err != nil {
		return nil, err
	}
	out := make([]reduce.ProfilePoint, len(pts))
	for i, p := range pts {
		out[i] = reduce.ProfilePoint{Distance: p.Distance, Height: p.Height}
	}
	return out, nil
}

func writeSightlineTable(w io.Writer, title string, s reduce.SightlineSummary, prof []reduce.PointClearance, u units.LengthUnit, minClearance float64) error {
	l := func(m float64) string { return fmtLen(m, u) + " " + u.String() }
	fmt.Fprintf(w, "%s\n", title)
	fmt.Fprintf(w, "distance %s, eye %s, target %s, R = %.1f m, k = %g (ray of curvature k/R)\n\n", l(s.Arc), l(s.HeightA), l(s.HeightB), s.Radius, s.K)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	verdict := "clears the surface"
	if !s.Clear {
		verdict = "does NOT clear the surface"
	}
	fmt.Fprintf(tw, "line of sight\t%s\n", verdict)
	fmt.Fprintf(tw, "lowest clearance\t%s at %s from the eye\n", l(s.LowestClearance), l(s.LowestAt))
	horizon := func(h, d float64) string {
		if h < 0 {
			return "— (below the surface)"
		}
		return l(d)
	}
	fmt.Fprintf(tw, "horizon of the eye\t%s\n", horizon(s.HeightA, s.HorizonA))
	fmt.Fprintf(tw, "horizon of the target\t%s\n", horizon(s.HeightB, s.HorizonB))
	if s.HeightA >= 0 {
		fmt.Fprintf(tw, "hidden by the Earth at the target\t%s of its %s (visible above the eye's grazing ray: %s)\n", l(s.HiddenAtB), l(s.HeightB), l(math.Max(0, s.Visible)))
	}
	drop, err := reduce.GrazingRayHeight(s.Arc, s.Radius, s.K)
	if err == nil {
		fmt.Fprintf(tw, "curvature and refraction over the line\t%s (rule (1 − k)L²/2R: %s)\n", l(drop), l(reduce.CurvatureDropApprox(s.Arc, s.Radius, s.K)))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if len(prof) > 0 {
		fmt.Fprintf(w, "\nprofile (lengths in %s; minimum clearance %s):\n", u, l(minClearance))
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprint(tw, "distance\tground\tray\tclearance\t\t\n")
		for _, p := range prof {
			flag := ""
			if p.Below {
				flag = "BELOW MINIMUM"
			}
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t\n", fmtLen(p.Distance, u), fmtLen(p.Height, u), fmtLen(p.Ray, u), fmtLen(p.Clearance, u), flag)
		}
		if err := tw.Flush(); err != nil {
			return err
		}
	}
	fmt.Fprintln(w, "\n"+cautionText)
	return nil
}

// sightlineRows are the points of the CSV: samples along the line, the
// profile points and the lowest point, in order of distance.
type sightlineRow struct {
	kind                   string
	distance, ray, surface float64 // surface: ground height where a profile point gives it
	clearance              float64
	hasGround, below       bool
}

func sightlineRows(s reduce.SightlineSummary, prof []reduce.PointClearance) ([]sightlineRow, error) {
	var rows []sightlineRow
	for i := 0; i <= sightlineSamples; i++ {
		x := s.Arc * float64(i) / sightlineSamples
		c, err := s.Clearance(x)
		if err != nil {
			return nil, err
		}
		rows = append(rows, sightlineRow{kind: "sample", distance: x, ray: c, clearance: c})
	}
	for _, p := range prof {
		rows = append(rows, sightlineRow{kind: "profile", distance: p.Distance, ray: p.Ray, surface: p.Height, clearance: p.Clearance, hasGround: true, below: p.Below})
	}
	rows = append(rows, sightlineRow{kind: "lowest", distance: s.LowestAt, ray: s.LowestClearance, clearance: s.LowestClearance, below: s.LowestClearance <= 0})
	slices.SortStableFunc(rows, func(a, b sightlineRow) int {
		switch {
		case a.distance < b.distance:
			return -1
		case a.distance > b.distance:
			return 1
		}
		return 0
	})
	return rows, nil
}

func writeSightlineCSV(w io.Writer, s reduce.SightlineSummary, prof []reduce.PointClearance, u units.LengthUnit) error {
	rows, err := sightlineRows(s, prof)
	if err != nil {
		return err
	}
	cw := csv.NewWriter(w)
	n := u.String()
	cw.Write([]string{"kind", "distance_" + n, "ray_height_" + n, "ground_height_" + n, "clearance_" + n, "below_minimum"})
	for _, r := range rows {
		ground := ""
		if r.hasGround {
			ground = lengthText(r.surface, u, true)
		}
		cw.Write([]string{r.kind, lengthText(r.distance, u, true), lengthText(r.ray, u, true), ground, lengthText(r.clearance, u, true), strconv.FormatBool(r.below)})
	}
	cw.Flush()
	return cw.Error()
}

// Plot size (points) and colours.
const (
	sightPlotWidth  = 720 * vg.Inch / 72
	sightPlotHeight = 360 * vg.Inch / 72
)

var (
	sightRayColor     = color.RGBA{R: 0x1f, G: 0x4e, B: 0x79, A: 0xff}
	sightSurfaceColor = color.RGBA{R: 0x7a, G: 0x5a, B: 0x2e, A: 0xff}
	sightGroundColor  = color.RGBA{R: 0x3a, G: 0x7d, B: 0x2e, A: 0xff}
	sightFlagColor    = color.RGBA{R: 0xb0, G: 0x00, B: 0x20, A: 0xff}
)

// sightlinePlot draws the line in the plane of the line: distance along the
// surface across, height above the straight chord between the two ends'
// foot points up, so that the Earth's bulge shows as an arc under the ray.
// The vertical scale is exaggerated, by the factor it returns.
func sightlinePlot(title string, s reduce.SightlineSummary, prof []reduce.PointClearance, u units.LengthUnit) (*plot.Plot, float64, error) {
	du := 1000.0 // distances in km, or in thousands of the length unit
	dName := "km"
	if u != units.Metre {
		du = 1000 * float64(u)
		dName = "thousand " + u.String()
	}
	half := s.Arc / (2 * s.Radius)
	bulge := func(x float64) float64 { return s.Radius * (math.Cos(x/s.Radius-half) - math.Cos(half)) }
	hv := func(m float64) float64 { v, _ := u.FromMetres(m); return v }
	var surface, ray plotter.XYs
	for i := 0; i <= sightlineSamples; i++ {
		x := s.Arc * float64(i) / sightlineSamples
		c, err := s.Clearance(x)
		if err != nil {
			return nil, 0, err
		}
		surface = append(surface, plotter.XY{X: x / du, Y: hv(bulge(x))})
		ray = append(ray, plotter.XY{X: x / du, Y: hv(bulge(x) + c)})
	}
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = "distance from the eye along the line (" + dName + ")"
	p.Legend.Top = true
	p.Legend.XOffs = -vg.Points(12)
	p.Legend.Padding = vg.Points(8) // room for a browser font wider than the metrics
	add := func(name string, xys plotter.XYs, c color.Color, width vg.Length, dashed bool) error {
		l, err := plotter.NewLine(xys)
		if err != nil {
			return err
		}
		l.Color, l.Width = c, width
		if dashed {
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		}
		p.Add(l)
		p.Legend.Add(name, l)
		return nil
	}
	if err := add("surface", surface, sightSurfaceColor, vg.Points(1.5), false); err != nil {
		return nil, 0, err
	}
	if err := add(fmt.Sprintf("ray, k = %g", s.K), ray, sightRayColor, vg.Points(1.5), false); err != nil {
		return nil, 0, err
	}
	if len(prof) > 0 {
		var ground, flagged plotter.XYs
		for _, pt := range prof {
			xy := plotter.XY{X: pt.Distance / du, Y: hv(bulge(pt.Distance) + pt.Height)}
			ground = append(ground, xy)
			if pt.Below {
				flagged = append(flagged, xy)
			}
		}
		if err := add("profile", ground, sightGroundColor, vg.Points(1), true); err != nil {
			return nil, 0, err
		}
		if len(flagged) > 0 {
			sc, err := plotter.NewScatter(flagged)
			if err != nil {
				return nil, 0, err
			}
			sc.Color, sc.Shape, sc.Radius = sightFlagColor, draw.CrossGlyph{}, vg.Points(4)
			p.Add(sc)
			p.Legend.Add("below minimum", sc)
		}
	}
	low, err := plotter.NewScatter(plotter.XYs{{X: s.LowestAt / du, Y: hv(bulge(s.LowestAt) + s.LowestClearance)}})
	if err != nil {
		return nil, 0, err
	}
	low.Color, low.Shape, low.Radius = sightRayColor, draw.CircleGlyph{}, vg.Points(3)
	p.Add(low)
	p.Legend.Add("lowest", low)
	p.Add(plotter.NewGrid())
	// vertical exaggeration: metres per unit of page across over metres
	// per unit of page up, taken on the whole drawing
	xr := (p.X.Max - p.X.Min) * du
	yr := (p.Y.Max - p.Y.Min) * float64(u)
	exaggeration := 1.0
	if yr > 0 {
		exaggeration = (xr / float64(sightPlotWidth)) / (yr / float64(sightPlotHeight))
	}
	p.Y.Label.Text = fmt.Sprintf("height above the ends' chord (%s)", u)
	p.Title.Text = fmt.Sprintf("%s\nvertical scale exaggerated about ×%s", title, roundExaggeration(exaggeration))
	return p, exaggeration, nil
}

// roundExaggeration writes a factor to two significant figures.
func roundExaggeration(f float64) string {
	if f <= 0 || math.IsInf(f, 0) || math.IsNaN(f) {
		return "1"
	}
	e := math.Pow(10, math.Floor(math.Log10(f))-1)
	return strconv.FormatFloat(math.Round(f/e)*e, 'f', -1, 64)
}

// writeSightlinePlot writes the plot as SVG, or as an HTML page holding
// the SVG, the numbers and the caution, by the file's extension.
// The file is written whole or not at all (outset.WriteFile), and never
// over one of the files to keep (the inputs); notes go to log.
func writeSightlinePlot(path, title string, s reduce.SightlineSummary, prof []reduce.PointClearance, u units.LengthUnit, minClearance float64, keep []outset.Keep, log io.Writer) error {
	p, ex, err := sightlinePlot(title, s, prof, u)
	if err != nil {
		return err
	}
	wt, err := p.WriterTo(sightPlotWidth, sightPlotHeight, "svg")
	if err != nil {
		return err
	}
	var svg bytes.Buffer
	if _, err := wt.WriteTo(&svg); err != nil {
		return err
	}
	var out []byte
	switch strings.ToLower(filepath.Ext(path)) {
	case ".svg":
		out = svg.Bytes()
	case ".html", ".htm":
		var b bytes.Buffer
		fmt.Fprintf(&b, "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>%s</title>\n", html.EscapeString(title))
		b.WriteString("<style>body{font-family:'Liberation Sans',Arial,sans-serif;max-width:60em;margin:2em auto;padding:0 1em}svg{width:100%;height:auto}pre{background:#f4f4f4;padding:1em;overflow-x:auto}</style></head><body>\n")
		fmt.Fprintf(&b, "<h1>%s</h1>\n", html.EscapeString(title))
		fmt.Fprintf(&b, "<p>The vertical scale is exaggerated about ×%s: heights are drawn above the straight chord between the two ends' foot points, so the Earth's curvature shows as the bulge of the surface.</p>\n", roundExaggeration(ex))
		b.WriteString("<figure>")
		b.Write(svgBody(svg.Bytes()))
		b.WriteString("</figure>\n<pre>")
		var table bytes.Buffer
		if err := writeSightlineTable(&table, title, s, prof, u, minClearance); err != nil {
			return err
		}
		b.WriteString(html.EscapeString(table.String()))
		b.WriteString("</pre>\n</body></html>\n")
		out = b.Bytes()
	default:
		return fmt.Errorf("-plot %q: want a file ending in .svg or .html", path)
	}
	return outset.WriteFile(path, out, keep, log)
}

// svgBody drops the XML declaration of an SVG document so that it can
// stand inside HTML.
func svgBody(svg []byte) []byte {
	if i := bytes.Index(svg, []byte("<svg")); i > 0 {
		return svg[i:]
	}
	return svg
}
