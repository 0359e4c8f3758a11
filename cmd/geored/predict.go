package main

import (
	"bufio"
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

func runPredict(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("predict", flag.ContinueOnError)
	var jf jobFlags
	jf.register(fs)
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
	j, err := jf.resolve(fs)
	if err != nil {
		return fail(stderr, "predict", err)
	}
	if len(j.Profiles) == 0 {
		return fail(stderr, "predict", errors.New("the job has no instrument profile: give [instrument.NAME] with wavelength_um, a reference, spec_mm and spec_ppm (or the instrument flags)"))
	}
	sights, err := readSightFile(*pairs, j.LengthUnit, stderr)
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
		r, err := w.predict(sg)
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

// cautionText is printed under every table.
const cautionText = "Results support, and do not replace, the judgement of a licensed surveyor;\nlocal regulations and standards govern."

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
	if w.plan, err = job.NewPlan(j, s.crs, s.geod, s.control); err != nil {
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
	m, ok := w.plan.Marks[id]
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

// A sight is one row of a pairs file: from, to, the heights of the
// instrument and the target over their marks (metres), and optionally the
// instrument profile, the prism constant and the air.
type sight struct {
	at                             sightSource
	from, to, instrument           string
	instrumentHeight, targetHeight float64
	prism                          float64
	hasPrism                       bool
	met                            reduce.Meteorology
}

// Pairs file columns.
var (
	sightRequired = []string{"from", "to", "instrument_height", "target_height"}
	sightColumns  = append(slices.Clone(sightRequired), "instrument", "prism_constant_mm",
		"temperature_c", "pressure_hpa", "humidity_pct", "temperature_c_to", "pressure_hpa_to", "humidity_pct_to")
)

func readSightFile(path string, unit units.LengthUnit, stderr io.Writer) ([]sight, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return readSights(f, path, unit, stderr)
}

// csvInput is a small CSV input read whole: its header, trimmed and
// lowercased, and its records with their lines; '#' comment lines and
// blank records are skipped.
type csvInput struct {
	file       string
	header     []string
	col        map[string]int
	headerLine int
	records    []csvRecord
}

type csvRecord struct {
	line   int
	fields []string
}

// readCSVInput reads a CSV input; wantHeader says what header an empty
// file lacks. A repeated column stops it; malformed CSV and records whose
// field count differs from the header's are returned as rowErrs, each
// with its line, and the other records are kept.
func readCSVInput(r io.Reader, file, wantHeader string) (in *csvInput, rowErrs []error, err error) {
	cr := csv.NewReader(bufio.NewReader(r))
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, nil, &obsfile.HeaderError{File: file, Line: 1, Reason: "the file is empty: want a header row " + wantHeader}
	}
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", file, err)
	}
	in = &csvInput{file: file, col: map[string]int{}}
	in.headerLine, _ = cr.FieldPos(0)
	for i, h := range header {
		name := strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\uFEFF")))
		if _, dup := in.col[name]; dup {
			return nil, nil, &obsfile.HeaderError{File: file, Line: in.headerLine, Reason: fmt.Sprintf("column %q appears twice", name)}
		}
		in.col[name] = i
		in.header = append(in.header, name)
	}
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				rowErrs = append(rowErrs, &obsfile.FieldError{File: file, Line: pe.Line, Column: pe.Column, Want: "well-formed CSV: " + pe.Err.Error(), Err: err})
				break
			}
			return nil, nil, fmt.Errorf("%s: %w", file, err)
		}
		line, _ := cr.FieldPos(0)
		if strings.TrimSpace(strings.Join(rec, "")) == "" {
			continue
		}
		if len(rec) != len(header) {
			rowErrs = append(rowErrs, &obsfile.FieldError{File: file, Line: line, Want: fmt.Sprintf("%d fields as in the header, got %d", len(header), len(rec))})
			continue
		}
		in.records = append(in.records, csvRecord{line: line, fields: slices.Clone(rec)})
	}
	return in, rowErrs, nil
}

// readSights reads a pairs file. Every bad value is reported, each with
// file, line, column, the value and what was wanted; unknown columns are
// warnings.
func readSights(r io.Reader, file string, unit units.LengthUnit, stderr io.Writer) ([]sight, error) {
	in, errs, err := readCSVInput(r, file, strings.Join(sightRequired, ","))
	if err != nil {
		return nil, err
	}
	for i, name := range in.header {
		if !slices.Contains(sightColumns, name) {
			fmt.Fprintf(stderr, "warning: %s:%d: unknown column %q (column %d) is ignored; known columns: %s\n", file, in.headerLine, name, i+1, strings.Join(sightColumns, ", "))
		}
	}
	var missing []string
	for _, n := range sightRequired {
		if _, ok := in.col[n]; !ok {
			missing = append(missing, n)
		}
	}
	if len(missing) > 0 {
		return nil, &obsfile.HeaderError{File: file, Line: in.headerLine, Reason: "missing required column(s) " + strings.Join(missing, ", ")}
	}
	for _, group := range [][]string{{"temperature_c", "pressure_hpa", "humidity_pct"}, {"temperature_c_to", "pressure_hpa_to", "humidity_pct_to"}} {
		n := 0
		for _, g := range group {
			if _, ok := in.col[g]; ok {
				n++
			}
		}
		if n != 0 && n != 3 {
			return nil, &obsfile.HeaderError{File: file, Line: in.headerLine, Reason: strings.Join(group, ", ") + " go together"}
		}
	}
	var out []sight
	for _, rec := range in.records {
		row := sightRow{file: file, line: rec.line, rec: rec.fields, col: in.col}
		sg, err := row.parse(unit)
		if err != nil {
			errs = append(errs, err)
			continue
		}
		out = append(out, sg)
	}
	if len(errs) > 0 {
		return nil, errors.Join(errs...)
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s: no sights after the header", file)
	}
	return out, nil
}

// sightRow is one record of a pairs file being parsed.
type sightRow struct {
	file string
	line int
	rec  []string
	col  map[string]int
}

func (r sightRow) get(name string) string {
	i, ok := r.col[name]
	if !ok {
		return ""
	}
	return strings.TrimSpace(r.rec[i])
}

func (r sightRow) bad(name, want string, cause error) error {
	i := r.col[name]
	return &obsfile.FieldError{File: r.file, Line: r.line, Column: i + 1, Field: name, Value: r.rec[i], Want: want, Err: cause}
}

// number reads a finite number of column name within [lo, hi].
func (r sightRow) number(name, want string, lo, hi float64) (float64, error) {
	v, err := strconv.ParseFloat(r.get(name), 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v < lo || v > hi {
		return 0, r.bad(name, want, err)
	}
	return v, nil
}

func (r sightRow) parse(unit units.LengthUnit) (sight, error) {
	sg := sight{at: sightSource{r.file, r.line}, from: r.get("from"), to: r.get("to"), instrument: r.get("instrument")}
	switch {
	case sg.from == "":
		return sg, r.bad("from", "the id of the instrument's mark", nil)
	case sg.to == "":
		return sg, r.bad("to", "the id of the target's mark", nil)
	case sg.from == sg.to:
		return sg, r.bad("to", fmt.Sprintf("a target other than the station %q", sg.from), nil)
	}
	limit := 100 / float64(unit)
	for _, h := range []struct {
		name string
		dst  *float64
	}{{"instrument_height", &sg.instrumentHeight}, {"target_height", &sg.targetHeight}} {
		v, err := r.number(h.name, fmt.Sprintf("a height over the mark in %s within ±%.4g", unit, limit), -limit, limit)
		if err != nil {
			return sg, err
		}
		*h.dst = v * float64(unit)
	}
	if _, ok := r.col["prism_constant_mm"]; ok && r.get("prism_constant_mm") != "" {
		v, err := r.number("prism_constant_mm", "a prism constant in mm within ±1000", -1000, 1000)
		if err != nil {
			return sg, err
		}
		sg.prism, sg.hasPrism = v/1000, true
	}
	var err error
	if sg.met.Instrument, sg.met.HaveInstrument, err = r.atmosphere(""); err != nil {
		return sg, err
	}
	if sg.met.Target, sg.met.HaveTarget, err = r.atmosphere("_to"); err != nil {
		return sg, err
	}
	return sg, nil
}

// atmosphere reads temperature_c, pressure_hpa and humidity_pct (with the
// suffix): all three or none.
func (r sightRow) atmosphere(suffix string) (reduce.Atmosphere, bool, error) {
	names := [3]string{"temperature_c" + suffix, "pressure_hpa" + suffix, "humidity_pct" + suffix}
	if _, ok := r.col[names[0]]; !ok {
		return reduce.Atmosphere{}, false, nil
	}
	blank := 0
	for _, n := range names {
		if r.get(n) == "" {
			blank++
		}
	}
	if blank == 3 {
		return reduce.Atmosphere{}, false, nil
	}
	for _, n := range names {
		if r.get(n) == "" {
			return reduce.Atmosphere{}, false, r.bad(n, "a value: temperature, pressure and humidity are given together or not at all", nil)
		}
	}
	var a reduce.Atmosphere
	var err error
	if a.TemperatureC, err = r.number(names[0], "a temperature in -60..60 °C", -60, 60); err != nil {
		return a, false, err
	}
	if a.PressureHPa, err = r.number(names[1], "a pressure in 500..1100 hPa", 500, 1100); err != nil {
		return a, false, err
	}
	if a.HumidityPct, err = r.number(names[2], "a relative humidity in 0..100 %", 0, 100); err != nil {
		return a, false, err
	}
	return a, true, nil
}

// predictedSight is one sight's prediction with its line.
type predictedSight struct {
	sight   sight
	profile string
	prof    jobconfig.Profile
	line    job.InverseLine
	pred    reduce.Prediction
}

func (w *jobWorld) predict(sg sight) (predictedSight, error) {
	name := sg.instrument
	if name == "" {
		name = w.job.DefaultInstrument
	}
	prof, ok := w.job.Profiles[name]
	switch {
	case !ok && name == "":
		return predictedSight{}, fmt.Errorf("%s: no instrument column and no default_instrument in the job (profiles: %s)", sg.at, strings.Join(w.job.ProfileNames(), ", "))
	case !ok:
		return predictedSight{}, fmt.Errorf("%s: instrument %q has no [instrument.%s] profile in the job (profiles: %s)", sg.at, name, name, strings.Join(w.job.ProfileNames(), ", "))
	}
	a, markA, err := w.mark(sg.from, "station", sg.at)
	if err != nil {
		return predictedSight{}, err
	}
	b, markB, err := w.mark(sg.to, "target", sg.at)
	if err != nil {
		return predictedSight{}, err
	}
	if !sg.met.HaveInstrument && !sg.met.HaveTarget && !w.job.HasDefaultAtmosphere {
		return predictedSight{}, fmt.Errorf("%s: the row gives no temperature, pressure and humidity, and the job has no default_atmosphere", sg.at)
	}
	line, err := job.Inverse(a, b, w.sess.geod, w.sess.proj)
	if err != nil {
		return predictedSight{}, fmt.Errorf("%s: line %s → %s: %w", sg.at, sg.from, sg.to, err)
	}
	prism := prof.PrismConstant
	if sg.hasPrism {
		prism = sg.prism
	}
	obs := reduce.Observation{InstrumentHeight: sg.instrumentHeight, TargetHeight: sg.targetHeight, PrismConstant: prism, Meteorology: sg.met}
	p, err := reduce.Predict(obs, prof.Chain, line.Line, markA, markB)
	if err != nil {
		return predictedSight{}, fmt.Errorf("%s: %s → %s: %w", sg.at, sg.from, sg.to, err)
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
			r.sight.from, r.sight.to, r.profile,
			lengthText(r.sight.instrumentHeight, lu, false), lengthText(r.sight.targetHeight, lu, false),
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
	fmt.Fprintln(w, "curvature correction. atm. ppm: N_ref − N_L of the air given (IAG 1999), which an instrument set to it")
	fmt.Fprintln(w, "would apply.")
	fmt.Fprintln(w, cautionText)
	return nil
}

func writePredictCSV(w io.Writer, rows []predictedSight, lu units.LengthUnit, au units.AngleUnit) error {
	cw := csv.NewWriter(w)
	l, a := lu.String(), au.String()
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
		cw.Write([]string{r.sight.from, r.sight.to, r.profile,
			lengthText(r.sight.instrumentHeight, lu, true), lengthText(r.sight.targetHeight, lu, true),
			lengthText(p.Displayed.Slope, lu, true), angleText(p.Observation.Zenith, au, true), lengthText(p.Displayed.Horizontal, lu, true),
			lengthText(p.Bare.Slope, lu, true), lengthText(p.Bare.Horizontal, lu, true),
			g(f.PPM), g(f.PrismConstant * 1000), g(p.Instrument.PrismConstant * 1000), p.FirstVelocity.Source.String(), g(p.FirstVelocity.PPM),
			lengthText(p.Geometry.Slope, lu, true), angleText(p.Geometry.Refraction, au, true), angleText(p.ChordZenith, au, true),
			lengthText(r.line.Geodesic.Distance, lu, true), lengthText(r.line.GridDistance, lu, true),
			angleText(r.line.GridBearing, au, true), angleText(geodesic.NormalizeAzimuth(r.line.Geodesic.Azimuth1), au, true)})
	}
	cw.Flush()
	return cw.Error()
}
