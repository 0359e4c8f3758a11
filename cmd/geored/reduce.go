package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"hash"
	"io"
	"os"
	"path/filepath"
	"runtime/pprof"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/landxml"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/outset"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

const defaultOut = "geored-out"

// reduceNeeds are the settings a reduction cannot run without, reported
// together when missing.
var reduceNeeds = jobconfig.Needs{Points: true, Observations: true, Tolerance: true, Instrument: true}

// configHelp lists every setting of the job file with its unit.
const configHelp = `
Job file (TOML; -config). Paths are relative to the file. Every unit is in
the key's name:
  crs                  projected CRS, EPSG:nnnn or a PROJ string; its grid
                       in metres, US survey feet or international feet
  points               points CSV (easting, northing in the CRS's unit;
                       heights in length_unit)
  observations         list of observation CSVs
  out                  output folder
  length_unit          m | us-ft | intl-ft      (slope distances, heights)
  angle_unit           deg | dms | gon | rad    (zenith angles)
  reduction_datum      ellipsoid | sea-level
  geoid                geoid grid name or file, or "none"
  geoid_separation_m   one N for the job, metres
  refraction_k         coefficient of refraction (default 0.13)
  critical_value       critical |w| for each observation (default 3.29, α = 0.1 %)
  job_alpha            instead of critical_value: the chance of any false flag
                       in the whole job (e.g. 0.05); the critical value is then
                       Šidák's over the job's observation rows
  global_test_alpha    α of the global test of Σw²/n (default 0.05)
  workers              0 = every core
  default_instrument   profile for rows without an instrument column
  [tolerance]          class = "<accuracy class>" (listed below), or
                       constant_mm, ppm, rule = linear|rss (linear),
                       level = 95|1sigma (95)
  [default_atmosphere] temperature_c (°C), pressure_hpa (hPa), humidity_pct (%)
  [centring]           instrument_mm, target_mm, height_mm, control_mm (σ, mm),
                       zenith_arcsec (σ, ″; default 5), refraction_k_sigma
                       (σ of k; default 0.1)
  [instrument.NAME]    wavelength_um (µm); one of reference_atmosphere =
                       { temperature_c, pressure_hpa, humidity_pct },
                       reference_refractivity (N_ref, ppm), or modulation_hz
                       (Hz) with unit_length_m (m); additive_constant_mm,
                       scale_ppm (calibration); prism_constant_mm (targets);
                       field_ppm, field_prism_constant_mm (what the field
                       instrument applied); field_curvature_refraction =
                       none|vertical|both (none), field_refraction_k,
                       field_earth_radius_m (6378000): the curvature and
                       refraction correction the instrument applied to
                       horizontal_distance and vertical_distance, undone
                       exactly; spec_mm, spec_ppm, spec_rule =
                       linear|rss (rss), spec_level = 1sigma|95 (1sigma);
                       row_prism_constant = target|applied: what a row's
                       prism_constant_mm is (see Prism constants above)
  [limits]             what geored takes of any one input file at most, so
                       that a broken or hostile file stops with an error
                       naming the file and line, in bounded memory; the
                       defaults are far beyond any real survey file:
                       max_line_bytes (a row, bytes; 1048576), max_field_bytes
                       (a field, bytes; 65536), max_columns (a header's
                       columns; 1000), max_points (the points file's rows;
                       1000000); flags -max-line-bytes, -max-field-bytes,
                       -max-columns, -max-points
`

func runReduce(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("reduce", flag.ContinueOnError)
	var jf jobFlags
	jf.register(fs)
	strict := fs.Bool("strict", false, "any rejected row makes the run fail (exit 2)")
	quiet := fs.Bool("quiet", false, "print nothing but errors")
	jsonOut := fs.Bool("json", false, "print a one-line machine summary (JSON) on stdout")
	cpuProfile := fs.String("cpuprofile", "", "write a CPU profile (pprof) of the run to this file")
	memProfile := fs.String("memprofile", "", "write a heap profile (pprof) to this file when the run ends: what it allocated, and what it held at the last collection")
	wait := fs.Bool("wait", false, "if another run is writing into the output folder, wait for it to end instead of refusing")
	fs.Usage = func() {
		fmt.Fprint(stderr, `Usage: geored reduce [flags] [observations.csv ...]

Observation files named on the command line replace the job file's
observations list (they are read relative to the working folder, the job
file's own paths relative to the job file); "-" reads observations from
standard input. Flags may come before or after the files; "--" ends the
flags, so that a file named "-x" can be given.

Reduces observed slope distances to the ellipsoid and the map grid, compares
each with the inverse between the control points, and writes to the output
folder: reduced.csv (every stage of every observation), lines.csv (per line,
either direction), rejects.csv (rows that could not be reduced, with the
reason), summary.json and report.html.

Observation CSV columns: from, to, and slope_distance with zenith_angle or
horizontal_distance with vertical_distance (required: a row gives one pair,
whole; a file may have both pairs' columns);
instrument_height, target_height, temperature_c, pressure_hpa, humidity_pct
(instrument end), temperature_c_to, pressure_hpa_to, humidity_pct_to (target
end), prism_constant_mm (the target's, mm), field_prism_constant_mm (applied
by the instrument on the shot, mm), instrument, obs_id (optional).

A horizontal_distance and vertical_distance are the instrument's own
reduction of its slope distance S (its ppm and prism constant applied) at
its zenith angle z, with no curvature or refraction correction: hd = S sin z
and vd = S cos z, from the instrument's axis to the reflector, vd positive
up (not the mark-to-mark height difference). They are turned back into
S = sqrt(hd² + vd²) and z = atan2(hd, vd) exactly, and reduced as a slope
distance: constants and velocity corrections on S, refraction k on z.
reduced.csv's route says which: heights, zenith, horizontal heights, or
horizontal (the target's height from vd and k).

A file named *.xml, or whose first character other than a blank is '<', is
LandXML 1.2: its Survey's InstrumentSetup, TargetSetup and RawObservation
elements, in the units of its Units element, which must be the job's
length_unit and angle_unit; with no points file, its CgPoints are the control.

Prism constants: each row has the target's true constant, which the
reduction adds, and the one the instrument applied on the shot, which it
first takes out of the raw distance. reduced.csv records both
(prism_constant_mm, field_prism_constant_mm) and where each came from
(prism_source, field_prism_source):
  target's  row: the row's prism_constant_mm; else profile: the profile's
            prism_constant_mm
  applied   row: the row's field_prism_constant_mm; else row-prism: with
            row_prism_constant = "applied" (the instrument applied each
            row's own constant, and the two cancel), the row's
            prism_constant_mm; else profile: the profile's
            field_prism_constant_mm (with row_prism_constant = "target",
            a row's prism_constant_mm is the target's alone)
Without row_prism_constant, a row whose prism_constant_mm differs from the
profile's field_prism_constant_mm and which gives no field_prism_constant_mm
is rejected: the two readings give two distances, and its reason names both
and the setting to add. So is a row whose field_prism_constant_mm
contradicts row_prism_constant = "applied".

Exit status, the same in summary.json, -json and report.html:
  0  rows were reduced, none rejected, none flagged, and the global test of
     the variance factor is not too large
  1  something needs a look: rows rejected, observations or lines flagged
     (|w| over the critical value, over the tolerance, a line's spread), the
     fit finds a significant constant or scale, or the global test failed
     high; the reasons go to stderr
  2  could not run (bad flags, settings or input files, an output folder
     in use or not geored's, a full disk), no row could be reduced (an
     empty file, every row rejected), or -strict and a row was rejected
  130, 143  stopped by SIGINT (Ctrl-C) or SIGTERM: the run's temporary
     files are removed and the output folder is as it was (128 + the
     signal's number, as a shell reports a killed process); a second
     signal kills geored at once, and the next run removes what it left

The outputs are written as one set: into a hidden folder beside the output
folder, then swapped in whole with a manifest.json listing each file's size
and SHA-256, so the folder holds the whole earlier set or the whole new one,
whatever stops the run. The output folder is geored's alone: a folder that
holds other files, or any input, is refused. A second run into the same
folder refuses, naming the first one's PID (or waits, with -wait); a run
removes the temporaries a killed run left, and says so on stderr even with
-quiet.
Flags are decided by the critical value: by default 3.29 for each
observation (α = 0.1 %), so a large job raises some by chance (the report
says how many to expect); job_alpha instead holds α for the whole job.

Flags:
`)
		fs.PrintDefaults()
		fmt.Fprint(stderr, configHelp)
		fmt.Fprint(stderr, accuracyClassHelp())
		fmt.Fprintln(stderr, "\n"+cautionText)
	}
	obsArgs, ok, code := parseCommand(fs, args, stderr)
	if !ok {
		return code
	}
	if err := observationArgs(obsArgs); err != nil {
		return fail(stderr, "reduce", err)
	}
	j, err := jf.resolveFor(fs, reduceNeeds, obsArgs)
	if err != nil {
		return fail(stderr, "reduce", err)
	}
	var obsIn observationInput
	if slices.Contains(j.Observations, stdinArg) {
		obsIn.stdin = os.Stdin
		if j.HasJobAlpha {
			f, done, err := bufferStdin(os.Stdin)
			if err != nil {
				return fail(stderr, "reduce", err)
			}
			defer done()
			obsIn.stdin = f
		}
	}
	if j.Out == "" {
		j.Out = defaultOut
	}
	keep := []outset.Keep{{Role: "the job file", Path: jf.config}, {Role: "the CPU profile", Path: *cpuProfile}, {Role: "the heap profile", Path: *memProfile}}
	// Before anything is written, the profiles too.
	if err := outset.CheckInputs(j.Out, append(slices.Clone(keep), jobInputs(j)...)); err != nil {
		return fail(stderr, "reduce", err)
	}
	if *cpuProfile != "" {
		stop, err := startCPUProfile(*cpuProfile)
		if err != nil {
			return fail(stderr, "reduce", err)
		}
		defer stop()
	}
	if *memProfile != "" {
		defer func() {
			if err := writeHeapProfile(*memProfile); err != nil {
				fmt.Fprintf(stderr, "geored reduce: %v\n", err)
			}
		}()
	}
	ctx, stop := stopOnSignals()
	defer stop()
	opts := reduceOptions{strict: *strict, progress: !*quiet && isTerminal(stderr), obsIn: obsIn}
	if !*quiet {
		opts.warn = stderr
	}
	opts.set = setOptions(ctx, stderr, keep, *wait)
	sum, err := reduceJob(ctx, j, opts)
	if code, ok := stopped(stderr, "reduce", j.Out, err); ok {
		return code
	}
	if err != nil {
		return fail(stderr, "reduce", err)
	}
	if *jsonOut {
		b, _ := json.Marshal(machineSummary(sum, j.Out))
		fmt.Fprintf(stdout, "%s\n", b)
	} else if !*quiet {
		printVerdict(stdout, sum, j.Out)
	}
	// What needs a look goes to stderr too, where a scheduler's mail
	// and a terminal see it; a failure is said even with -quiet.
	if sum.ExitStatus == exitFailed || (sum.ExitStatus == exitFlagged && !*quiet) {
		printReasons(stderr, "reduce", sum, j.Out)
	}
	return sum.ExitStatus
}

// maxWarnings is how many warnings a run shows one by one.
const maxWarnings = 100

// maxReasonRejects is how many rejected rows' reasons the terminal shows.
const maxReasonRejects = 5

// printReasons says on w why a run's status is not 0: the verdict, its
// reasons, the first rejected rows and the worst flagged lines.
func printReasons(w io.Writer, cmd string, s *report.Summary, out string) {
	fmt.Fprintf(w, "geored %s: exit status %d, %s\n", cmd, s.ExitStatus, s.Verdict)
	for _, r := range s.Reasons {
		fmt.Fprintf(w, "  %s\n", r)
	}
	for i, r := range s.FirstRejects {
		if i == maxReasonRejects {
			fmt.Fprintf(w, "  … %d more rejected rows in %s\n", s.Counts.Rejected-i, filepath.Join(out, "rejects.csv"))
			break
		}
		fmt.Fprintf(w, "  rejected %s\n", r.Reason)
	}
	shown := 0
	for _, l := range s.Lines {
		if !l.Flagged() || shown == maxReasonRejects {
			break
		}
		fmt.Fprintf(w, "  flagged line %s – %s: %+.1f mm, max |w| %.1f, %s\n", l.From, l.To, l.ResidualMM, l.MaxAbsW, strings.Join(l.Flags, ", "))
		shown++
	}
}

type reduceOptions struct {
	strict     bool
	progress   bool
	warn       io.Writer         // nil: silent
	inputs     []job.Source      // observations given as readers (the embedded demo)
	points     io.Reader         // points given as a reader (the embedded demo) ...
	pointsName string            // ... and its name
	set        outset.Options    // the output set's; reduceJob adds the inputs to Keep
	each       func(*job.Result) // if set, sees every result (the nightly run's history); it must copy what it keeps
	obsIn      observationInput  // what an observation file "-" reads
}

// reduceFiles are the files of reduce's output set, besides its manifest.
var reduceFiles = []string{"reduced.csv", "lines.csv", "rejects.csv", "summary.json", "report.html"}

// reduceJob runs a job into its output folder and returns the summary.
// The outputs are one set (outset), committed at the end; a run stopped by
// ctx or failed leaves the folder as it was.
func reduceJob(ctx context.Context, j *jobconfig.Job, opt reduceOptions) (sum *report.Summary, err error) {
	if !j.HasTolerance {
		return nil, errors.New("the job has no tolerance: give [tolerance] class, or constant_mm and ppm (or -tolerance)")
	}
	if len(j.Profiles) == 0 {
		return nil, errors.New("the job has no instrument profile: give [instrument.NAME] with wavelength_um, a reference, spec_mm and spec_ppm (or the instrument flags)")
	}
	var xmlPoints string // the LandXML file whose CgPoints are the control
	if j.Points == "" && opt.points == nil {
		if xmlPoints, err = landxmlPoints(j); err != nil {
			return nil, err
		}
		if xmlPoints == "" {
			return nil, errors.New("no points file: give points in the config or -points")
		}
	}
	if len(j.Observations) == 0 && len(opt.inputs) == 0 {
		return nil, errors.New("no observation files: name them after the flags or in the config's observations")
	}
	opt.set.Keep = append(slices.Clone(opt.set.Keep), jobInputs(j)...)
	out, err := outset.Begin(ctx, j.Out, opt.set)
	if err != nil {
		return nil, err
	}
	defer out.Abort()
	defer func() {
		if err != nil && !errors.As(err, new(signalStop)) && !out.Committed() {
			err = fmt.Errorf("%w; %s is as it was before this run", err, j.Out)
		}
	}()
	s, err := openJobSession(j)
	if err != nil {
		return nil, err
	}
	defer s.close()

	sum = &report.Summary{Tool: "geored", Version: version(), ProjVersion: projVersion(), Caution: report.Caution}
	// Warnings past the first maxWarnings are counted, and said once
	// at the end of the run, on stderr and in summary.json alike.
	var moreWarnings int
	warn := func(w obsfile.Warning) {
		if len(sum.Warnings) == maxWarnings {
			moreWarnings++
			return
		}
		sum.Warnings = append(sum.Warnings, w.String())
		if opt.warn != nil {
			fmt.Fprintf(opt.warn, "warning: %s\n", w)
		}
	}

	// Points: streamed, hashed as they are read.
	pointsName, points := j.Points, opt.points
	pointsHash := sha256.New()
	if xmlPoints != "" {
		f, err := os.Open(xmlPoints)
		if err != nil {
			return nil, err
		}
		defer f.Close()
		pointsName, points = xmlPoints, landxml.NewPoints(io.TeeReader(f, pointsHash), xmlPoints, landxmlOptions(j), s.gridUnit)
	} else if points == nil {
		f, err := os.Open(j.Points)
		if err != nil {
			return nil, err
		}
		defer f.Close()
		points = f
	} else {
		pointsName = opt.pointsName
	}
	if xmlPoints == "" {
		points = io.TeeReader(points, pointsHash)
	}
	// The points go straight into the plan, which keeps of each what the
	// run needs (about 120 bytes a point), not the file's rows.
	planned := job.NewPlanBuilder(j.Settings(), s.crs, s.geod, pointsName, s.proj, s.seps)
	warnings, err := obsfile.EachPoint(points, pointsName, s.pointOptions(), planned.Add)
	for _, w := range warnings {
		warn(w)
	}
	if err != nil {
		return nil, plainLandXMLError(err)
	}
	if err := planned.Resolved(); err != nil {
		return nil, err
	}
	if j.HasJobAlpha {
		// The critical value that holds α for the whole job depends on
		// how many observations it tests: count the rows first.
		n, err := countObservationRows(j, opt.inputs, opt.obsIn)
		if err != nil {
			return nil, err
		}
		if err := j.SetTests(n); err != nil {
			return nil, err
		}
		sum.Testing = report.Testing{Scope: report.ScopeJob, JobAlpha: j.JobAlpha, Tests: n}
	}
	plan, err := planned.Plan()
	if err != nil {
		return nil, err
	}
	sum.Inputs = append(sum.Inputs, report.InputFile{Role: "points", Path: pointsName, SHA256: hex.EncodeToString(pointsHash.Sum(nil)), Rows: plan.Points()})

	// Observation sources, hashed and counted as they stream.
	var sources []job.Source
	var hashes []hash.Hash
	var total int64
	var read atomic.Int64
	xml := landxmlSources{}
	for _, path := range j.Observations {
		h := sha256.New()
		f, src, err := xml.open(path, opt.obsIn, j, func(r io.Reader) io.Reader { return io.TeeReader(&countingReader{r: r, n: &read}, h) })
		if err != nil {
			return nil, err
		}
		defer f.Close()
		if st, err := f.Stat(); err == nil && st.Mode().IsRegular() {
			total += st.Size()
		}
		hashes = append(hashes, h)
		sources = append(sources, src)
	}
	for _, src := range opt.inputs {
		h := sha256.New()
		hashes = append(hashes, h)
		sources = append(sources, job.Source{Name: src.Name, Reader: io.TeeReader(src.Reader, h)})
	}

	reduced, err := out.Create("reduced.csv")
	if err != nil {
		return nil, err
	}
	rejects, err := out.Create("rejects.csv")
	if err != nil {
		return nil, err
	}
	u := report.Units{Length: j.LengthUnit, Angle: j.AngleUnit}
	reduced.Write(report.AppendHeader(nil, report.ReducedHeader(u)))
	rejects.Write(report.AppendHeader(nil, report.RejectsHeader))

	plan.Format = func(dst []byte, r *job.Result) []byte {
		if r.Rejected {
			return report.AppendRejectRow(dst, r)
		}
		return report.AppendReducedRow(dst, r, u)
	}
	agg := report.NewAggregator(j.Critical, j.Tolerance, j.HasTolerance, plan)
	agg.SetGlobalTestAlpha(j.GlobalAlpha)
	var perSource sourceCounter
	var rows atomic.Int64
	stop := startProgress(opt.progress, &read, &rows, total)
	hook := opt.set.Hook
	var opened openedFiles
	err = job.Run(ctx, plan, sources, opened.opener(j), warn, func(r *job.Result) error {
		if len(xml) > 0 {
			xml.fix(r, u)
		}
		if err := agg.Add(r); err != nil {
			return err
		}
		if opt.each != nil {
			opt.each(r)
		}
		if rows.Add(1) == 1 && hook != nil {
			hook("row")
		}
		if r.Rejected {
			perSource.add(r.File)
			_, err := rejects.Write(r.Row)
			return err
		}
		perSource.add(r.Obs.File)
		_, err := reduced.Write(r.Row)
		return err
	})
	stop()
	xml.warnings(sources, warn)
	if moreWarnings > 0 {
		more := fmt.Sprintf("%d more warnings, not shown", moreWarnings)
		sum.Warnings = append(sum.Warnings, more)
		if opt.warn != nil {
			fmt.Fprintf(opt.warn, "warning: %s\n", more)
		}
	}
	if err != nil {
		return nil, plainLandXMLError(err)
	}
	plan.EndRuns() // the summary and lines.csv need the lines, not finding them
	// The big files are written: they go to disk while the summary is made.
	reduced.StartSync()
	rejects.StartSync()
	for i, src := range sources {
		in := report.InputFile{Role: "observations", Path: src.Name, SHA256: hex.EncodeToString(hashes[i].Sum(nil)), Rows: perSource.count(src.Name)}
		opened.dialect(&in, xml)
		sum.Inputs = append(sum.Inputs, in)
	}
	sum.Settings = settings(j, s.crs, s.geoidGrid, opt.strict)
	sum.Settings.GridUnit = s.gridUnit.String()
	sum.InputHash = inputHash(sum)
	if r := out.Replaces(); r != nil {
		sum.Replaces = &report.Replaced{Created: r.Created.Format(time.RFC3339), InputHash: r.InputHash}
	}
	agg.Finish(sum)
	report.Decide(sum, opt.strict)

	lines, err := out.Create("lines.csv")
	if err != nil {
		return nil, err
	}
	// lines.csv is written beside the summary and the report; an early
	// return waits for it before the outputs are discarded.
	var linesErr error
	var linesWG sync.WaitGroup
	linesWG.Go(func() {
		linesErr = agg.WriteLines(lines, u)
		lines.StartSync()
	})
	defer linesWG.Wait()
	js, err := out.Create("summary.json")
	if err != nil {
		return nil, err
	}
	if err := report.WriteJSON(js, sum); err != nil {
		return nil, err
	}
	html, err := out.Create("report.html")
	if err != nil {
		return nil, err
	}
	if err := report.WriteHTML(html, sum); err != nil {
		return nil, err
	}
	if linesWG.Wait(); linesErr != nil {
		return nil, linesErr
	}
	if err := out.Commit(outset.Identity{Tool: "geored", Command: "reduce", InputHash: sum.InputHash}); err != nil {
		return nil, err
	}
	return sum, nil
}

// jobInputs are the job's input files, which its outputs must not touch.
func jobInputs(j *jobconfig.Job) []outset.Keep {
	keep := []outset.Keep{{Role: "the points file", Path: j.Points}}
	for _, o := range j.Observations {
		keep = append(keep, outset.Keep{Role: "the observations file", Path: o})
	}
	if j.Geoid != "" && j.Geoid != "none" && strings.ContainsRune(j.Geoid, filepath.Separator) {
		keep = append(keep, outset.Keep{Role: "the geoid grid", Path: j.Geoid})
	}
	return keep
}

// countObservationRows counts the data rows of the observation files and
// of the inputs given as readers, which must then be seekable: they are
// read again by the run.
func countObservationRows(j *jobconfig.Job, inputs []job.Source, obsIn observationInput) (int, error) {
	n := 0
	for _, path := range j.Observations {
		if path == stdinArg {
			// standard input, copied to a file by runReduce: counted here
			// and read again by the run
			k, err := countAndRewind(stdinName, obsIn.stdin, j)
			if err != nil {
				return 0, err
			}
			n += k
			continue
		}
		f, err := os.Open(path)
		if err != nil {
			return 0, err
		}
		k, err := countObsRows(f, path, j)
		f.Close()
		if err != nil {
			return 0, err
		}
		n += k
	}
	for _, src := range inputs {
		rs, ok := src.Reader.(io.ReadSeeker)
		if !ok {
			return 0, fmt.Errorf("%s: job_alpha needs to count the rows before the run, and this input cannot be read twice", src.Name)
		}
		k, err := countAndRewind(src.Name, rs, j)
		if err != nil {
			return 0, err
		}
		n += k
	}
	return n, nil
}

// countAndRewind counts the data rows of rs and seeks back to its start.
func countAndRewind(name string, rs io.ReadSeeker, j *jobconfig.Job) (int, error) {
	if rs == nil || rs == (*os.File)(nil) {
		return 0, fmt.Errorf("%s: job_alpha needs to count the rows before the run, and this input cannot be read twice", name)
	}
	k, err := countObsRows(rs, name, j)
	if err != nil {
		return 0, err
	}
	if _, err := rs.Seek(0, io.SeekStart); err != nil {
		return 0, fmt.Errorf("%s: %w", name, err)
	}
	return k, nil
}

// settings records the job's settings as used.
func settings(j *jobconfig.Job, crs *geodesic.CRS, geoidGrid string, strict bool) report.Settings {
	geoid := geoidGrid // a grid's name, or "none"
	if geoidGrid == "none" && j.HasConstantN {
		geoid = fmt.Sprintf("constant N = %g m", j.ConstantN)
	}
	atm := "none"
	if j.HasDefaultAtmosphere {
		a := j.DefaultAtmosphere
		atm = fmt.Sprintf("%g °C, %g hPa, %g %%", a.TemperatureC, a.PressureHPa, a.HumidityPct)
	}
	st := report.Settings{CRS: j.CRS, CRSName: crs.Name(), Datum: crs.Datum(), Ellipsoid: crs.Ellipsoid().String(),
		ReductionDatum: j.Datum.String(), LengthUnit: j.LengthUnit.String(), AngleUnit: j.AngleUnit.String(), Geoid: geoid,
		RefractionK: j.K, CriticalValue: j.Critical, GlobalAlpha: j.GlobalAlpha, Tolerance: j.ToleranceText, DefaultAtmos: atm, Strict: strict}
	if j.HasJobAlpha {
		st.JobAlpha = j.JobAlpha
	}
	for _, n := range j.ProfileNames() {
		p, in := j.Profiles[n], j.Instruments[n]
		rowPrism := p.RowPrism.String()
		if rowPrism == "" {
			rowPrism = "not given"
		}
		c := p.Chain.Field.Curvature
		ins := report.InstrumentSettings{
			Name: n, WavelengthUM: p.Chain.Carrier.WavelengthUM, ReferenceRefractivity: p.Chain.Carrier.ReferenceRefractivity,
			AdditiveConstantMM: in.AdditiveConstantMM, ScalePPM: in.ScalePPM, PrismConstantMM: in.PrismConstantMM,
			AppliedPPM: in.FieldPPM, AppliedPrismMM: in.FieldPrismConstantMM, RowPrismConstant: rowPrism,
			FieldCurvatureRefraction: c.Mode.String(), Spec: jobconfig.SpecText(p.Chain.Budget.Instrument),
			SerialNumber: strings.TrimSpace(in.SerialNumber)}
		if c.Mode != reduce.FieldCurvatureNone {
			ins.FieldRefractionK, ins.FieldEarthRadiusM = &c.K, &c.Radius
		}
		st.Instruments = append(st.Instruments, ins)
	}
	return st
}

// inputHash is the SHA-256 over the inputs' hashes (not their paths) and
// the settings: the identity of the job.
func inputHash(s *report.Summary) string {
	h := sha256.New()
	for _, in := range s.Inputs {
		fmt.Fprintf(h, "%s %s\n", in.Role, in.SHA256)
	}
	b, _ := json.Marshal(s.Settings)
	h.Write(b)
	return hex.EncodeToString(h.Sum(nil))
}

// sourceCounter counts rows by file name; rows come in runs from one
// file, so it looks the name up only when it changes.
type sourceCounter struct {
	rows     map[string]*int
	last     string
	lastRows *int
}

func (c *sourceCounter) add(name string) {
	if c.lastRows == nil || name != c.last {
		if c.rows == nil {
			c.rows = map[string]*int{}
		}
		n, ok := c.rows[name]
		if !ok {
			n = new(int)
			c.rows[name] = n
		}
		c.last, c.lastRows = name, n
	}
	*c.lastRows++
}

func (c *sourceCounter) count(name string) int {
	if n, ok := c.rows[name]; ok {
		return *n
	}
	return 0
}

type countingReader struct {
	r io.Reader
	n *atomic.Int64
}

func (c *countingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n.Add(int64(n))
	return n, err
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

// startProgress prints rows per second and the share of bytes read on the
// terminal every half second; the returned function stops it.
func startProgress(on bool, read, rows *atomic.Int64, total int64) func() {
	if !on {
		return func() {}
	}
	done := make(chan struct{})
	finished := make(chan struct{})
	start := time.Now()
	go func() {
		defer close(finished)
		t := time.NewTicker(500 * time.Millisecond)
		defer t.Stop()
		for {
			select {
			case <-done:
				fmt.Fprint(os.Stderr, "\r\033[K")
				return
			case <-t.C:
				el := time.Since(start).Seconds()
				pct := 0.0
				if total > 0 {
					pct = 100 * float64(read.Load()) / float64(total)
				}
				fmt.Fprintf(os.Stderr, "\r\033[Kreducing: %5.1f %% of bytes, %d rows, %.0f rows/s", pct, rows.Load(), float64(rows.Load())/el)
			}
		}
	}()
	return func() { close(done); <-finished }
}

// machineSummary is the one-line JSON of -json.
func machineSummary(s *report.Summary, out string) map[string]any {
	m := map[string]any{
		"exit_status": s.ExitStatus, "verdict": s.Verdict, "reasons": s.Reasons, "read": s.Counts.Read, "reduced": s.Counts.Reduced, "rejected": s.Counts.Rejected,
		"flagged": s.Counts.Flagged, "lines": s.Counts.Lines, "flagged_lines": s.Counts.FlaggedLines,
		"outliers": s.Testing.Outliers, "expected_outliers_by_chance": s.Testing.ExpectedByChance, "critical_value": s.Testing.Critical,
		"input_hash": s.InputHash, "out": out, "report": filepath.Join(out, "report.html"),
	}
	if g := s.Testing.Global; g != nil {
		m["global_test"] = g.Outcome
		m["variance_factor"] = g.VarianceFactor
	}
	if f := s.Fit; f != nil {
		m["fit_evidence"] = f.Evidence
	}
	return m
}

// printVerdict prints the run's outcome for a person.
func printVerdict(w io.Writer, s *report.Summary, out string) {
	c := s.Counts
	fmt.Fprintf(w, "exit status %d, %s\n", s.ExitStatus, s.Verdict)
	fmt.Fprintf(w, "read %d rows: %d reduced, %d rejected; %d of %d lines flagged, %d observations flagged\n",
		c.Read, c.Reduced, c.Rejected, c.FlaggedLines, c.Lines, c.Flagged)
	if g := s.Testing.Global; g != nil {
		fmt.Fprintf(w, "global test: variance factor %.3f over %d observations, bounds %.3f..%.3f at α %g: %s", g.VarianceFactor, g.N, g.Lower, g.Upper, g.Alpha, g.Outcome)
		if g.UnflaggedN < g.N && g.UnflaggedN > 0 {
			fmt.Fprintf(w, " (%.3f without the %d flagged)", g.UnflaggedVarianceFactor, g.N-g.UnflaggedN)
		}
		fmt.Fprintln(w)
	}
	if e := s.Residuals.Ellipsoid; e.N > 0 {
		fmt.Fprintf(w, "residuals (reduced − control, ellipsoid): mean %.1f mm, rms %.1f mm, max |w| %.2f\n", e.MeanMM, e.RMSMM, e.MaxAbsW)
	}
	if f := s.Fit; f != nil {
		fmt.Fprintf(w, "fit over %d lines: constant %.1f ± %.1f mm, scale %.2f ± %.2f ppm", f.N, f.ConstantMM, f.ConstantSigma, f.ScalePPM, f.ScaleSigma)
		switch {
		case !f.Enough():
			fmt.Fprintf(w, "; not enough evidence for a diagnosis: %s", f.EvidenceReason())
		case f.ConstantSignificant && f.ScaleSignificant:
			fmt.Fprint(w, "; both significant: check the prism and additive constants and the ppm")
		case f.ConstantSignificant:
			fmt.Fprint(w, "; the constant is significant: check the prism and additive constants")
		case f.ScaleSignificant:
			fmt.Fprint(w, "; the scale is significant: check the ppm and the atmosphere")
		default:
			fmt.Fprint(w, "; neither term significant")
		}
		fmt.Fprintln(w)
		if lo := f.LeftOut(); lo != "" {
			fmt.Fprintf(w, "  left out of the fit: %s\n", lo)
		}
	}
	for _, l := range s.Lines {
		if !l.Flagged() {
			break
		}
		fmt.Fprintf(w, "  flagged %s – %s: %+.1f mm (%+.1f ppm), max |w| %.1f, %s\n", l.From, l.To, l.ResidualMM, l.ResidualPPM, l.MaxAbsW, strings.Join(l.Flags, ", "))
	}
	fmt.Fprintf(w, "outputs in %s; report: %s\n", out, filepath.Join(out, "report.html"))
	fmt.Fprintln(w, report.Caution)
}

// startCPUProfile profiles the run into path; the returned function ends
// the profile.
func startCPUProfile(path string) (func(), error) {
	f, err := os.Create(path)
	if err != nil {
		return nil, err
	}
	if err := pprof.StartCPUProfile(f); err != nil {
		f.Close()
		return nil, err
	}
	return func() { pprof.StopCPUProfile(); f.Close() }, nil
}

// writeHeapProfile writes the heap profile as of the last collection.
func writeHeapProfile(path string) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := pprof.Lookup("heap").WriteTo(f, 0); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// obsOpener opens the run's observation files, and LandXML files as the
// CSV stream that io/landxml makes of them, with io/obsfile's chunker in
// the job's units, limits and delimiter.
func obsOpener(j *jobconfig.Job) job.Opener { return (*openedFiles)(nil).opener(j) }

// openedFiles keeps the readers of the observation files a run opened,
// for the dialect each was read in (summary.json's inputs).
type openedFiles struct {
	mu sync.Mutex
	m  map[string]*obsfile.ObsChunker
}

// opener opens each observation source as the observation CSV, and keeps
// its reader in f where f is not nil.
func (f *openedFiles) opener(j *jobconfig.Job) job.Opener {
	opt := j.ObsOptions()
	return func(src job.Source) (job.ChunkSource, []obsfile.Warning, error) {
		o := opt
		// A LandXML file's stream: its CSV columns are not the file's.
		_, o.NoColumns = src.Reader.(*landxml.Observations)
		c, warnings, err := obsfile.NewObsChunker(src.Reader, src.Name, o)
		if err != nil {
			return nil, warnings, err // not a nil *ObsChunker in the interface
		}
		if f != nil {
			f.mu.Lock()
			if f.m == nil {
				f.m = map[string]*obsfile.ObsChunker{}
			}
			f.m[src.Name] = c
			f.mu.Unlock()
		}
		return c, warnings, nil
	}
}

// dialect fills in how the observation file in was read: LandXML (its
// stream in xml), or the CSV with its delimiter and decimal mark.
func (f *openedFiles) dialect(in *report.InputFile, xml landxmlSources) {
	if _, ok := xml[in.Path]; ok {
		in.Format = "landxml"
		return
	}
	f.mu.Lock()
	c := f.m[in.Path]
	f.mu.Unlock()
	if c == nil {
		return // not opened: the run stopped before it
	}
	in.Format = "csv"
	d, m := c.Dialect()
	in.Delimiter = d.String()
	if m != 0 {
		in.DecimalMark = string(rune(m))
	}
}
