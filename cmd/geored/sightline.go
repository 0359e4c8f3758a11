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
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
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
	jf.registerOnly(fs, siteFlags...)
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
	fs.Float64Var(&f.minClearance, "min-clearance", 0, "clearance the ray must keep over the surface and over every profile point, in the length unit (0: it must pass above them)")
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

The line clears when the ray keeps the minimum clearance (-min-clearance)
over the surface all along and over every profile point, and passes above
them: a ray that touches a point or the surface is blocked by it. The
headline, the table, the plot's title and the exit status give that one
verdict; when the line does not clear, the headline says what fails (the
surface, or how many profile points, the worst by how much and where), and
with -csv it is printed on stderr.

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
	if !(f.minClearance >= 0) {
		return fail(stderr, "sightline", fmt.Errorf("-min-clearance %g: want a clearance of zero or more, in %s", f.minClearance, unit))
	}
	var pts []reduce.ProfilePoint
	if f.profile != "" {
		if pts, err = readProfileFile(f.profile, unit, sl.Arc, stderr); err != nil {
			return fail(stderr, "sightline", err)
		}
	}
	// the verdict, once: the headline, the table, the CSV, the plot and
	// the exit status all read it
	chk, err := sl.Check(pts, f.minClearance*float64(unit))
	if err != nil {
		return fail(stderr, "sightline", err)
	}
	verdict := sightVerdict(chk, unit)
	if f.csv {
		err = writeSightlineCSV(stdout, chk, unit)
		if err == nil && !chk.Clear() {
			fmt.Fprintf(stderr, "geored sightline: %s\n", verdict)
		}
	} else {
		err = writeSightlineTable(stdout, title, verdict, chk, unit)
	}
	if err != nil {
		return fail(stderr, "sightline", err)
	}
	if f.plot != "" {
		keep := []outset.Keep{{Role: "the job file", Path: jf.config}, {Role: "the points file", Path: f.pointsFile}, {Role: "the profile file", Path: f.profile}}
		if err := writeSightlinePlot(f.plot, title, verdict, chk, unit, keep, stderr); err != nil {
			return fail(stderr, "sightline", err)
		}
	}
	if !chk.Clear() {
		return exitFlagged
	}
	return exitOK
}

// sightVerdict writes the verdict of c as a sentence: "clears …" or
// "does NOT clear …" with what fails: the surface (its lowest clearance
// and where), and how many profile points, the worst by how much and at
// what distance from the eye.
func sightVerdict(c reduce.SightlineCheck, u units.LengthUnit) string {
	l := func(m float64) string { return fmtLen(m, u) + " " + u.String() }
	by := ""
	if c.MinClearance > 0 {
		by = " by the minimum clearance of " + l(c.MinClearance)
	}
	n := len(c.Profile)
	points := func(k int) string {
		if n == 1 {
			return "the profile point"
		}
		if k == n {
			return fmt.Sprintf("all %d profile points", n)
		}
		return fmt.Sprintf("%d of %d profile points", k, n)
	}
	if c.Clear() {
		if n == 0 {
			return "clears the surface" + by
		}
		return "clears the surface and " + points(n) + by
	}
	var fails []string
	if c.SurfaceFails {
		what := fmt.Sprintf("the surface: the ray runs lowest at %s from the eye, %s ", l(c.LowestAt), l(math.Abs(c.LowestClearance)))
		switch {
		case c.LowestClearance > 0:
			what += fmt.Sprintf("above it, %s short of the minimum", l(c.MinClearance-c.LowestClearance))
		case c.LowestClearance < 0:
			what += "under it"
		default:
			what = fmt.Sprintf("the surface: the ray touches it at %s from the eye", l(c.LowestAt))
		}
		fails = append(fails, what)
	}
	if c.Failing > 0 {
		w := c.Profile[c.Worst]
		what := points(c.Failing) + by + ": the worst, at " + l(w.Distance) + " from the eye, "
		if c.Failing == 1 {
			what = points(c.Failing) + by + ": at " + l(w.Distance) + " from the eye, it "
		}
		switch {
		case w.Clearance == 0:
			what += "reaches the ray"
		case w.Blocks:
			what += fmt.Sprintf("stands %s above the ray", l(-w.Clearance))
		default:
			what += "has a clearance of " + l(w.Clearance)
		}
		if c.MinClearance > 0 {
			what += fmt.Sprintf(" (%s short)", l(c.MinClearance-w.Clearance))
		}
		switch {
		case c.Blocking == 1 && c.Failing > 1:
			what += "; one of them blocks the ray"
		case c.Blocking > 1:
			what += fmt.Sprintf("; %d of them block the ray", c.Blocking)
		}
		fails = append(fails, what)
	}
	return "does NOT clear " + strings.Join(fails, "; nor ")
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
	j, err := jf.resolveFor(fs, jobconfig.Needs{Points: true}, nil)
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

// readProfileFile reads a profile file in unit for a line of length metres,
// its delimiter found from its header; its warnings go to stderr.
func readProfileFile(path string, unit units.LengthUnit, length float64, stderr io.Writer) ([]reduce.ProfilePoint, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	pts, warnings, err := obsfile.ReadProfile(f, path, unit, length, obsfile.DelimiterAuto)
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

// Flags of a profile point that fails the minimum clearance, in the table.
const (
	flagBelowMinimum = "BELOW MINIMUM"
	flagBlocksRay    = "BLOCKS THE RAY"
)

func writeSightlineTable(w io.Writer, title, verdict string, c reduce.SightlineCheck, u units.LengthUnit) error {
	l := func(m float64) string { return fmtLen(m, u) + " " + u.String() }
	fmt.Fprintf(w, "%s\n", title)
	fmt.Fprintf(w, "distance %s, eye %s, target %s, R = %.1f m, k = %g (ray of curvature k/R)\n\n", l(c.Arc), l(c.HeightA), l(c.HeightB), c.Radius, c.K)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "line of sight\t%s\n", verdict)
	fmt.Fprintf(tw, "lowest clearance\t%s at %s from the eye\n", l(c.LowestClearance), l(c.LowestAt))
	horizon := func(h, d float64) string {
		if h < 0 {
			return "— (below the surface)"
		}
		return l(d)
	}
	fmt.Fprintf(tw, "horizon of the eye\t%s\n", horizon(c.HeightA, c.HorizonA))
	fmt.Fprintf(tw, "horizon of the target\t%s\n", horizon(c.HeightB, c.HorizonB))
	if c.HeightA >= 0 {
		fmt.Fprintf(tw, "hidden by the Earth at the target\t%s of its %s (visible above the eye's grazing ray: %s)\n", l(c.HiddenAtB), l(c.HeightB), l(math.Max(0, c.Visible)))
	}
	drop, err := reduce.GrazingRayHeight(c.Arc, c.Radius, c.K)
	if err == nil {
		fmt.Fprintf(tw, "curvature and refraction over the line\t%s (rule (1 − k)L²/2R: %s)\n", l(drop), l(reduce.CurvatureDropApprox(c.Arc, c.Radius, c.K)))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if len(c.Profile) > 0 {
		fmt.Fprintf(w, "\nprofile (lengths in %s; minimum clearance %s):\n", u, l(c.MinClearance))
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprint(tw, "distance\tground\tray\tclearance\t\t\n")
		for _, p := range c.Profile {
			flag := ""
			switch {
			case p.Blocks:
				flag = flagBlocksRay
			case p.Below:
				flag = flagBelowMinimum
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
// profile points and the lowest point, in order of distance. A row is
// flagged below the minimum by the verdict's rule (reduce.FailsClearance),
// the samples and the lowest point over the surface as the profile
// points over the ground: a row is flagged if and only if the line does
// not clear.
type sightlineRow struct {
	kind                   string
	distance, ray, surface float64 // surface: ground height where a profile point gives it
	clearance              float64
	hasGround, below       bool
	blocks                 bool
}

func sightlineRows(c reduce.SightlineCheck) ([]sightlineRow, error) {
	var rows []sightlineRow
	for i := 0; i <= sightlineSamples; i++ {
		x := c.Arc * float64(i) / sightlineSamples
		h, err := c.Clearance(x)
		if err != nil {
			return nil, err
		}
		rows = append(rows, sightlineRow{kind: "sample", distance: x, ray: h, clearance: h,
			below: reduce.FailsClearance(h, c.MinClearance), blocks: h <= 0})
	}
	for _, p := range c.Profile {
		rows = append(rows, sightlineRow{kind: "profile", distance: p.Distance, ray: p.Ray, surface: p.Height, clearance: p.Clearance, hasGround: true, below: p.Below, blocks: p.Blocks})
	}
	rows = append(rows, sightlineRow{kind: "lowest", distance: c.LowestAt, ray: c.LowestClearance, clearance: c.LowestClearance,
		below: c.SurfaceFails, blocks: c.LowestClearance <= 0})
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

func writeSightlineCSV(w io.Writer, c reduce.SightlineCheck, u units.LengthUnit) error {
	rows, err := sightlineRows(c)
	if err != nil {
		return err
	}
	cw := csv.NewWriter(w)
	n := u.ColumnSuffix()
	cw.Write([]string{"kind", "distance_" + n, "ray_height_" + n, "ground_height_" + n, "clearance_" + n, "below_minimum", "blocks_ray"})
	for _, r := range rows {
		ground := ""
		if r.hasGround {
			ground = lengthText(r.surface, u, true)
		}
		cw.Write([]string{r.kind, lengthText(r.distance, u, true), lengthText(r.ray, u, true), ground, lengthText(r.clearance, u, true), strconv.FormatBool(r.below), strconv.FormatBool(r.blocks)})
	}
	cw.Flush()
	return cw.Error()
}

// Plot size (points) and colours.
const (
	sightPlotWidth  = 720 * vg.Inch / 72
	sightPlotHeight = 420 * vg.Inch / 72
)

var (
	sightRayColor     = color.RGBA{R: 0x1f, G: 0x4e, B: 0x79, A: 0xff}
	sightSurfaceColor = color.RGBA{R: 0x7a, G: 0x5a, B: 0x2e, A: 0xff}
	sightGroundColor  = color.RGBA{R: 0x3a, G: 0x7d, B: 0x2e, A: 0xff}
	sightFlagColor    = color.RGBA{R: 0xb0, G: 0x00, B: 0x20, A: 0xff}
	// Liberation Sans, whose metrics lay the plot out, is Arial's in
	// width; a viewer without either draws its sans-serif, which may run
	// wider (DejaVu Sans, by up to a quarter), so widths are measured with
	// sightFontSlack to spare.
	sightSans         = font.Font{Typeface: "Liberation", Variant: "Sans"}
	sightFontFallback = "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;"
)

const sightFontSlack = 1.3

// sightPlotQuantity is what the plot's vertical axis shows, in its
// label and in the title alike.
func sightPlotQuantity(u units.LengthUnit) string {
	return fmt.Sprintf("height above the chord of the surface (%s)", u)
}

// sightPlotScale says how far the vertical scale is exaggerated.
func sightPlotScale(exaggeration float64) string {
	return "vertical scale exaggerated about ×" + roundExaggeration(exaggeration)
}

// sightLegendEntry is one entry of the plot's legend.
type sightLegendEntry struct {
	name  string
	thumb plot.Thumbnailer
}

// sightlinePlot draws the line in the plane of the line as an SVG:
// distance along the surface across, height above the straight chord
// between the surface points under the eye and under the target up, so
// that the Earth's bulge shows as an arc under the ray; the profile
// points stand on the bulge at their heights above the surface. The
// title carries the verdict, the line and the vertical quantity (the
// same words as the vertical axis's label), and the legend is drawn in a
// band under the plot, off the data. The vertical scale is exaggerated,
// by the factor it returns (metres across over metres up per point of
// the data area).
func sightlinePlot(title, verdict string, c reduce.SightlineCheck, u units.LengthUnit) ([]byte, float64, error) {
	du := 1000.0 // distances in km, or in thousands of the length unit
	dName := "km"
	if u != units.Metre {
		du = 1000 * float64(u)
		dName = "thousand " + u.String()
	}
	half := c.Arc / (2 * c.Radius)
	bulge := func(x float64) float64 { return c.Radius * (math.Cos(x/c.Radius-half) - math.Cos(half)) }
	hv := func(m float64) float64 { v, _ := u.FromMetres(m); return v }
	var surface, ray, keep plotter.XYs
	for i := 0; i <= sightlineSamples; i++ {
		x := c.Arc * float64(i) / sightlineSamples
		h, err := c.Clearance(x)
		if err != nil {
			return nil, 0, err
		}
		surface = append(surface, plotter.XY{X: x / du, Y: hv(bulge(x))})
		ray = append(ray, plotter.XY{X: x / du, Y: hv(bulge(x) + h)})
		keep = append(keep, plotter.XY{X: x / du, Y: hv(bulge(x) + h - c.MinClearance)})
	}
	p := plot.New()
	for _, f := range []struct {
		font *font.Font
		size font.Length
	}{
		{&p.Title.TextStyle.Font, 12}, {&p.X.Label.TextStyle.Font, 11}, {&p.Y.Label.TextStyle.Font, 11},
		{&p.X.Tick.Label.Font, 10}, {&p.Y.Tick.Label.Font, 10},
	} {
		*f.font = font.From(sightSans, f.size)
	}
	p.BackgroundColor = nil // the whole page is filled once, legend band included
	p.X.Label.Text = "distance from the eye along the line (" + dName + ")"
	var legend []sightLegendEntry
	line := func(name string, xys plotter.XYs, col color.Color, width vg.Length, dashed bool) error {
		l, err := plotter.NewLine(xys)
		if err != nil {
			return err
		}
		l.Color, l.Width = col, width
		if dashed {
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		}
		p.Add(l)
		legend = append(legend, sightLegendEntry{name, l})
		return nil
	}
	mark := func(name string, xys plotter.XYs, col color.Color, shape draw.GlyphDrawer, radius vg.Length) error {
		if len(xys) == 0 {
			return nil
		}
		sc, err := plotter.NewScatter(xys)
		if err != nil {
			return err
		}
		sc.Color, sc.Shape, sc.Radius = col, shape, radius
		p.Add(sc)
		legend = append(legend, sightLegendEntry{name, sc})
		return nil
	}
	if err := line("surface", surface, sightSurfaceColor, vg.Points(1.5), false); err != nil {
		return nil, 0, err
	}
	if err := line(fmt.Sprintf("ray, k = %g", c.K), ray, sightRayColor, vg.Points(1.5), false); err != nil {
		return nil, 0, err
	}
	if c.MinClearance > 0 {
		if err := line("ray less the minimum clearance of "+fmtLen(c.MinClearance, u)+" "+u.String(), keep, sightRayColor, vg.Points(0.75), true); err != nil {
			return nil, 0, err
		}
	}
	if len(c.Profile) > 0 {
		var ground, below, blocks plotter.XYs
		for _, pt := range c.Profile {
			xy := plotter.XY{X: pt.Distance / du, Y: hv(bulge(pt.Distance) + pt.Height)}
			ground = append(ground, xy)
			switch {
			case pt.Blocks:
				blocks = append(blocks, xy)
			case pt.Below:
				below = append(below, xy)
			}
		}
		lp, sc, err := plotter.NewLinePoints(ground)
		if err != nil {
			return nil, 0, err
		}
		lp.Color, lp.Width, lp.Dashes = sightGroundColor, vg.Points(1), []vg.Length{vg.Points(4), vg.Points(3)}
		sc.Color, sc.Shape, sc.Radius = sightGroundColor, draw.CircleGlyph{}, vg.Points(1.5)
		p.Add(lp, sc)
		legend = append(legend, sightLegendEntry{"profile", sightThumbs{lp, sc}})
		if err := mark("below the minimum clearance", below, sightFlagColor, draw.CrossGlyph{}, vg.Points(5)); err != nil {
			return nil, 0, err
		}
		if err := mark("blocks the ray", blocks, sightFlagColor, draw.PyramidGlyph{}, vg.Points(4)); err != nil {
			return nil, 0, err
		}
	}
	lowName, lowColor := "lowest clearance over the surface", color.Color(sightRayColor)
	if c.SurfaceFails {
		lowName, lowColor = "lowest clearance over the surface, failing", sightFlagColor
	}
	if err := mark(lowName, plotter.XYs{{X: c.LowestAt / du, Y: hv(bulge(c.LowestAt) + c.LowestClearance)}}, lowColor, draw.CircleGlyph{}, vg.Points(3)); err != nil {
		return nil, 0, err
	}
	p.Add(plotter.NewGrid())

	vc, err := draw.NewFormattedCanvas(sightPlotWidth, sightPlotHeight, "svg")
	if err != nil {
		return nil, 0, err
	}
	page := draw.New(vc)
	page.SetColor(color.White)
	page.Fill(page.Rectangle.Path())
	// the legend's band under the plot, then the plot above it. The
	// exaggeration is measured on the data area, which the title's and
	// the label's lines shape, and they carry the exaggeration: lay them
	// out until the number no longer changes (twice, unless a new digit
	// moves a line).
	band := sightLegendBand(legend, page.Max.X-page.Min.X)
	// (and room on the right for a wider font's last tick label)
	area := draw.Crop(page, 0, -8, band.height, 0)
	quantity := sightPlotQuantity(u)
	var data draw.Canvas
	exaggeration := 1.0
	for range 4 {
		var lines []string
		for _, l := range []string{"line of sight " + verdict, title, quantity + " between the ends, " + sightPlotScale(exaggeration)} {
			lines = append(lines, wrapText(p.Title.TextStyle, l, float64(area.Max.X-area.Min.X-24)/sightFontSlack)...)
		}
		p.Title.Text = strings.Join(lines, "\n")
		p.Y.Label.Text = quantity + "\n" + sightPlotScale(exaggeration)
		data = p.DataCanvas(area)
		ex := 1.0
		if xr, yr := (p.X.Max-p.X.Min)*du, (p.Y.Max-p.Y.Min)*float64(u); yr > 0 && data.Max.Y > data.Min.Y {
			ex = (xr / float64(data.Max.X-data.Min.X)) / (yr / float64(data.Max.Y-data.Min.Y))
		}
		if roundExaggeration(ex) == roundExaggeration(exaggeration) {
			break
		}
		exaggeration = ex
	}
	p.Draw(area)
	band.draw(draw.Crop(page, 0, 0, 0, band.height-(page.Max.Y-page.Min.Y)), data.Min.X)
	var svg bytes.Buffer
	if _, err := vc.WriteTo(&svg); err != nil {
		return nil, 0, err
	}
	return bytes.ReplaceAll(svg.Bytes(), []byte("font-family:Liberation Sans;"), []byte(sightFontFallback)), exaggeration, nil
}

// sightThumbs draws several thumbnails as one legend entry's.
type sightThumbs []plot.Thumbnailer

func (t sightThumbs) Thumbnail(c *draw.Canvas) {
	for _, th := range t {
		th.Thumbnail(c)
	}
}

// sightBand is the legend laid out in rows under the plot: each entry's
// offset across from the band's left and its row from the top.
type sightBand struct {
	entries []sightLegendEntry
	x       []vg.Length
	row     []int
	rowH    vg.Length
	height  vg.Length
}

// sightLegendBand lays the legend's entries out left to right in rows of
// at most width, and says how tall the band is.
func sightLegendBand(entries []sightLegendEntry, width vg.Length) sightBand {
	l := sightLegend()
	const gap, margin = 18, 48 // points between entries; the band's left margin and more on the right
	b := sightBand{entries: entries, rowH: l.TextStyle.Rectangle("M").Max.Y + 6}
	x, row := vg.Length(0), 0
	for _, e := range entries {
		w := l.ThumbnailWidth + l.TextStyle.Rectangle(" "+e.name).Size().X*sightFontSlack
		if x > 0 && x+w > width-2*margin {
			x, row = 0, row+1
		}
		b.x, b.row = append(b.x, x), append(b.row, row)
		x += w + gap
	}
	b.height = vg.Length(row+1)*b.rowH + 12
	return b
}

// draw draws the band on c (its height), the rows starting at left.
func (b sightBand) draw(c draw.Canvas, left vg.Length) {
	for i, e := range b.entries {
		l := sightLegend()
		l.Left, l.Top = true, true
		l.Add(e.name, e.thumb)
		top := c.Max.Y - 4 - vg.Length(b.row[i])*b.rowH
		x := left + b.x[i]
		l.Draw(draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: x, Y: top - b.rowH}, Max: vg.Point{X: c.Max.X, Y: top}}})
	}
}

// sightLegend is an empty legend in the plot's font.
func sightLegend() plot.Legend {
	l := plot.NewLegend()
	l.TextStyle.Font = font.From(sightSans, 11)
	return l
}

// wrapText breaks s at spaces into lines no wider than width (points)
// in the style, of about even length.
func wrapText(sty text.Style, s string, width float64) []string {
	lines := wrapGreedy(sty, s, width)
	if n := len(lines); n > 1 {
		if even := wrapGreedy(sty, s, 1.1*float64(sty.Rectangle(s).Size().X)/float64(n)); len(even) == n {
			return even
		}
	}
	return lines
}

// wrapGreedy fills each line with as many words as fit in width.
func wrapGreedy(sty text.Style, s string, width float64) []string {
	var lines []string
	cur := ""
	for _, w := range strings.Fields(s) {
		next := w
		if cur != "" {
			next = cur + " " + w
		}
		if cur != "" && float64(sty.Rectangle(next).Size().X) > width {
			lines = append(lines, cur)
			next = w
		}
		cur = next
	}
	return append(lines, cur)
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
// the verdict, the SVG, the numbers and the caution, by the file's
// extension. The file is written whole or not at all (outset.WriteFile),
// and never over one of the files to keep (the inputs); notes go to log.
func writeSightlinePlot(path, title, verdict string, c reduce.SightlineCheck, u units.LengthUnit, keep []outset.Keep, log io.Writer) error {
	svg, ex, err := sightlinePlot(title, verdict, c, u)
	if err != nil {
		return err
	}
	var out []byte
	switch strings.ToLower(filepath.Ext(path)) {
	case ".svg":
		out = svg
	case ".html", ".htm":
		var b bytes.Buffer
		fmt.Fprintf(&b, "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>%s</title>\n", html.EscapeString(title))
		b.WriteString("<style>body{font-family:'Liberation Sans',Arial,sans-serif;max-width:60em;margin:2em auto;padding:0 1em}svg{width:100%;height:auto}pre{background:#f4f4f4;padding:1em;overflow-x:auto}.fails{color:#b00020}</style></head><body>\n")
		fmt.Fprintf(&b, "<h1>%s</h1>\n", html.EscapeString(title))
		class := "clears"
		if !c.Clear() {
			class = "fails"
		}
		fmt.Fprintf(&b, "<p class=\"verdict %s\"><strong>The line of sight %s.</strong></p>\n", class, html.EscapeString(verdict))
		fmt.Fprintf(&b, "<p>The plot shows the %s, from under the eye to under the target, with the %s: the Earth's curvature shows as the bulge of the surface, and the ground of the profile stands on it.</p>\n", html.EscapeString(sightPlotQuantity(u)), html.EscapeString(sightPlotScale(ex)))
		b.WriteString("<figure>")
		b.Write(svgBody(svg))
		b.WriteString("</figure>\n<pre>")
		var table bytes.Buffer
		if err := writeSightlineTable(&table, title, verdict, c, u); err != nil {
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
