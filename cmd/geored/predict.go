package main

import (
	"encoding/csv"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/golang/geo/s1"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// predictFlags are the job flags predict uses: the marks, the units, the
// air and the instrument; not the tests, the tolerance or the outputs.
var predictFlags = append(append(slices.Clone(siteFlags), "angle-unit", "default-atmosphere"), instrumentFlags...)

func runPredict(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("predict", flag.ContinueOnError)
	var jf jobFlags
	jf.registerOnly(fs, predictFlags...)
	pairs := fs.String("pairs", "", "CSV of the sights to predict: from,to,instrument_height,target_height[,instrument][,prism_constant_mm]\n[,temperature_c,pressure_hpa,humidity_pct][,temperature_c_to,pressure_hpa_to,humidity_pct_to] (required)")
	asCSV := fs.Bool("csv", false, "print CSV with full precision instead of a table")
	fs.Usage = func() {
		fmt.Fprint(stderr, `Usage: geored predict -pairs FILE [-config job.toml] [flags]

Runs the reduction backwards: from the control points, the instrument and
target heights, the air and the instrument profile, the slope distance,
zenith angle and horizontal distance an instrument should read on each sight
(as displayed with its own field ppm and prism constant, and bare, without
them), with the grid bearing and the geodetic azimuth. Reducing what it
prints gives back the control distances.

Heights in the pairs file are in the job's length unit; lengths and angles
are printed in the job's units. Exit status: 0 done, 2 could not run.

Flags:
`)
		fs.PrintDefaults()
		fmt.Fprint(stderr, configHelp)
		fmt.Fprintln(stderr, "\n"+cautionText)
	}
	if ok, code := parseFlags(fs, args, stderr); !ok {
		return code
	}
	if *pairs == "" {
		return fail(stderr, "predict", errors.New("-pairs FILE is required"))
	}
	j, err := jf.resolveFor(fs, jobconfig.Needs{Points: true, Instrument: true}, nil)
	if err != nil {
		return fail(stderr, "predict", err)
	}
	sights, err := readSightFile(*pairs, j.LengthUnit, j.Delimiter, stderr)
	if err != nil {
		return fail(stderr, "predict", err)
	}
	w, err := openJobWorld(j, stderr)
	if err != nil {
		return fail(stderr, "predict", err)
	}
	defer w.close()
	var rows []predictedSight
	var errs []error
	for _, sg := range sights {
		r, err := w.predict(*pairs, sg)
		if err != nil {
			errs = append(errs, err)
			continue
		}
		rows = append(rows, r)
	}
	if len(errs) > 0 {
		return fail(stderr, "predict", errors.Join(errs...))
	}
	if *asCSV {
		err = writePredictCSV(stdout, rows, j.LengthUnit, j.AngleUnit)
	} else {
		err = writePredictTable(stdout, w, rows)
	}
	if err != nil {
		return fail(stderr, "predict", err)
	}
	return exitOK
}

// jobWorld is a job's CRS, geodesic, control and marks, opened once.
type jobWorld struct {
	job  *jobconfig.Job
	sess *session
	plan *job.Plan
}

// openJobWorld opens the job's CRS and geoid and resolves its points file.
func openJobWorld(j *jobconfig.Job, stderr io.Writer) (*jobWorld, error) {
	if j.Points == "" {
		return nil, errors.New("no points file: give points in the config or -points")
	}
	s, err := openJobSession(j)
	if err != nil {
		return nil, err
	}
	w := &jobWorld{job: j, sess: s}
	if err := s.loadPointFile(j.Points, warnTo(stderr)); err != nil {
		s.close()
		return nil, err
	}
	if w.plan, err = job.NewPlan(j.Settings(), s.crs, s.geod, s.control); err != nil {
		s.close()
		return nil, err
	}
	return w, nil
}

func (w *jobWorld) close() { w.sess.close() }

// mark returns a control point and its height on the job's datum.
func (w *jobWorld) mark(id, role string, at sightSource) (job.Control, reduce.MarkHeight, error) {
	c, ok := w.sess.control[id]
	if !ok {
		return c, reduce.MarkHeight{}, fmt.Errorf("%s: %s %q is not in %s", at, role, id, w.job.Points)
	}
	m, ok := w.plan.Mark(id)
	if !ok {
		return c, m, fmt.Errorf("%s: %s %q has no height on the reduction datum (%s) in %s", at, role, id, w.job.Datum, w.job.Points)
	}
	return c, m, nil
}

// sightSource is where a sight was read.
type sightSource struct {
	file string
	line int
}

func (s sightSource) String() string {
	if s.line == 0 { // a flag
		return s.file
	}
	return s.file + ":" + strconv.Itoa(s.line)
}

// readSightFile reads a pairs file with heights in unit, delimited as the
// job says; its warnings go to stderr.
func readSightFile(path string, unit units.LengthUnit, delim obsfile.Delimiter, stderr io.Writer) ([]obsfile.Sight, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	sights, warnings, err := obsfile.ReadSights(f, path, unit, delim)
	for _, wn := range warnings {
		warnTo(stderr)(wn)
	}
	return sights, err
}

// predictedSight is one sight's prediction with its line.
type predictedSight struct {
	sight   obsfile.Sight
	profile string
	prof    jobconfig.Profile
	line    job.InverseLine
	pred    reduce.Prediction
}

// predict predicts one sight of the pairs file.
func (w *jobWorld) predict(pairs string, sg obsfile.Sight) (predictedSight, error) {
	at := sightSource{pairs, sg.Line}
	name := sg.Instrument
	if name == "" {
		name = w.job.DefaultInstrument
	}
	prof, ok := w.job.Profiles[name]
	switch {
	case !ok && name == "":
		return predictedSight{}, fmt.Errorf("%s: no instrument column and no default_instrument in the job (profiles: %s)", at, strings.Join(w.job.ProfileNames(), ", "))
	case !ok:
		return predictedSight{}, fmt.Errorf("%s: instrument %q has no [instrument.%s] profile in the job (profiles: %s)", at, name, name, strings.Join(w.job.ProfileNames(), ", "))
	}
	a, markA, err := w.mark(sg.From, "station", at)
	if err != nil {
		return predictedSight{}, err
	}
	b, markB, err := w.mark(sg.To, "target", at)
	if err != nil {
		return predictedSight{}, err
	}
	if !sg.AtInstrument.Has && !sg.AtTarget.Has && !w.job.HasDefaultAtmosphere {
		return predictedSight{}, fmt.Errorf("%s: the row gives no temperature, pressure and humidity, and the job has no default_atmosphere", at)
	}
	line, err := job.Inverse(a, b, w.sess.geod, w.sess.proj)
	if err != nil {
		return predictedSight{}, fmt.Errorf("%s: line %s → %s: %w", at, sg.From, sg.To, err)
	}
	// What the instrument will apply to a target of another constant than
	// the one set in it is what row_prism_constant says.
	prisms, conflict := prof.Prisms(sg.PrismConstant, sg.HasPrismConstant, 0, false)
	if conflict != jobconfig.PrismsKnown {
		mm := func(m float64) float64 { return math.Round(m*1e6) / 1e3 } // to the µm
		return predictedSight{}, fmt.Errorf(`%s: prism_constant_mm %g mm differs from field_prism_constant_mm %g mm of [instrument.%s], and the job does not say which the instrument applies: say which with row_prism_constant = "target" or "applied"`,
			at, mm(sg.PrismConstant), mm(prof.Chain.Field.PrismConstant), name)
	}
	obs := reduce.Observation{InstrumentHeight: sg.InstrumentHeight, TargetHeight: sg.TargetHeight, PrismConstant: prisms.Target,
		FieldPrismConstant: prisms.Applied, HasFieldPrismConstant: true,
		Meteorology: job.Meteorology(sg.AtInstrument, sg.AtTarget)}
	p, err := reduce.Predict(obs, prof.Chain, line.Line, markA, markB)
	if err != nil {
		return predictedSight{}, fmt.Errorf("%s: %s → %s: %w", at, sg.From, sg.To, err)
	}
	return predictedSight{sight: sg, profile: name, prof: prof, line: line, pred: p}, nil
}

// angleDecimals are the decimals that resolve 0.01″ or better in each unit
// for people, and 1e-7″ or better for machines.
func angleDecimals(u units.AngleUnit, full bool) int {
	switch {
	case u == units.PackedDMS && full:
		return 6
	case u == units.PackedDMS:
		return 2
	case u == units.Radians && full:
		return 13
	case u == units.Radians:
		return 8
	case full:
		return 11
	}
	return 6
}

// angleText writes an angle in the job's unit: d°m′s″ for packed DMS in a
// table, the unit's own form elsewhere.
func angleText(a s1.Angle, u units.AngleUnit, full bool) string {
	if u == units.PackedDMS && !full {
		return dms(a, angleDecimals(u, full))
	}
	s, err := units.FormatAngle(a, u, angleDecimals(u, full))
	if err != nil {
		return "?"
	}
	return s
}

// lengthText writes metres in unit u: to 0.1 mm of a metre for people,
// shortest round trip for machines.
func lengthText(m float64, u units.LengthUnit, full bool) string {
	v, err := u.FromMetres(m)
	if err != nil {
		return "?"
	}
	if full {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(v, 'f', 4, 64)
}

func writePredictTable(w io.Writer, jw *jobWorld, rows []predictedSight) error {
	j := jw.job
	lu, au := j.LengthUnit, j.AngleUnit
	crs := jw.sess.crs
	fmt.Fprintf(w, "CRS %s — datum %s, ellipsoid %s; reduction datum %s; k = %g\n", crs, crs.Datum(), crs.Ellipsoid(), j.Datum, j.K)
	fmt.Fprintf(w, "lengths in %s, angles in %s; zenith angles face left, bearings and azimuths clockwise from north\n\n", lu, au)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprint(tw, "from\tto\tinstrument\tHI\tHT\tslope shown\tzenith angle\thorizontal shown\tslope bare\thorizontal bare\tfield ppm\tatm. ppm\tgrid bearing\tazimuth\t\n")
	for _, r := range rows {
		p := r.pred
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%.1f\t%.1f\t%s\t%s\t\n",
			r.sight.From, r.sight.To, r.profile,
			lengthText(r.sight.InstrumentHeight, lu, false), lengthText(r.sight.TargetHeight, lu, false),
			lengthText(p.Displayed.Slope, lu, false), angleText(p.Observation.Zenith, au, false), lengthText(p.Displayed.Horizontal, lu, false),
			lengthText(p.Bare.Slope, lu, false), lengthText(p.Bare.Horizontal, lu, false),
			r.prof.Chain.Field.PPM, p.FirstVelocity.PPM,
			angleText(r.line.GridBearing, au, false), angleText(geodesic.NormalizeAzimuth(r.line.Geodesic.Azimuth1), au, false))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintln(w, "\nshown: as the instrument stores and displays it, with its field ppm and field prism constant applied;")
	fmt.Fprintln(w, "bare: the same without them. horizontal = slope · sin(zenith), without the instrument's own earth")
	fmt.Fprintln(w, "curvature correction (with it where the profile's field_curvature_refraction is \"both\"). atm. ppm:")
	fmt.Fprintln(w, "N_ref − N_L of the air given (IAG 1999), which an instrument set to it would apply.")
	fmt.Fprintln(w, cautionText)
	return nil
}

func writePredictCSV(w io.Writer, rows []predictedSight, lu units.LengthUnit, au units.AngleUnit) error {
	cw := csv.NewWriter(w)
	l, a := lu.ColumnSuffix(), au.ColumnSuffix()
	cw.Write([]string{"from", "to", "instrument", "instrument_height_" + l, "target_height_" + l,
		"slope_distance_" + l, "zenith_angle_" + a, "horizontal_distance_" + l,
		"slope_distance_bare_" + l, "horizontal_distance_bare_" + l,
		"field_ppm", "field_prism_constant_mm", "prism_constant_mm", "atmosphere", "atmospheric_ppm",
		"chord_" + l, "refraction_angle_" + a, "chord_zenith_angle_" + a,
		"geodesic_" + l, "grid_distance_" + l, "grid_bearing_" + a, "geodetic_azimuth_" + a})
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	for _, r := range rows {
		p := r.pred
		f := r.prof.Chain.Field
		cw.Write([]string{r.sight.From, r.sight.To, r.profile,
			lengthText(r.sight.InstrumentHeight, lu, true), lengthText(r.sight.TargetHeight, lu, true),
			lengthText(p.Displayed.Slope, lu, true), angleText(p.Observation.Zenith, au, true), lengthText(p.Displayed.Horizontal, lu, true),
			lengthText(p.Bare.Slope, lu, true), lengthText(p.Bare.Horizontal, lu, true),
			g(f.PPM), g(p.Instrument.FieldPrismConstant * 1000), g(p.Instrument.PrismConstant * 1000), p.FirstVelocity.Source.String(), g(p.FirstVelocity.PPM),
			lengthText(p.Geometry.Slope, lu, true), angleText(p.Geometry.Refraction, au, true), angleText(p.ChordZenith, au, true),
			lengthText(r.line.Geodesic.Distance, lu, true), lengthText(r.line.GridDistance, lu, true),
			angleText(r.line.GridBearing, au, true), angleText(geodesic.NormalizeAzimuth(r.line.Geodesic.Azimuth1), au, true)})
	}
	cw.Flush()
	return cw.Error()
}
