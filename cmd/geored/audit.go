package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/geored/geored/io/baselines"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/outset"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/reduce/audit"
	"github.com/geored/geored/reduce/job"
)

const defaultAuditOut = "geored-audit"

func runAudit(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("audit", flag.ContinueOnError)
	var jf jobFlags
	jf.register(fs)
	quiet := fs.Bool("quiet", false, "print nothing but errors")
	var rawFiles fileList
	fs.Var(&rawFiles, "observations", "the subcontractor's raw observations (an observation CSV or a LandXML 1.2 file, as reduce reads them; - reads standard input), reduced with the job's settings and set beside the delivered distances stage by stage; may be given more than once, and replaces the job file's observations (config: observations)")
	fs.Usage = func() {
		fmt.Fprint(stderr, `Usage: geored audit [flags] baselines.csv ...

Checks a subcontractor's delivered baselines line by line against the
control points of the job (-config job.toml with crs, points and
[tolerance], or the flags): every delivered distance against the control
distance of its own kind, every GNSS vector's end against its end mark,
every independent loop of the vectors, repeated baselines, and lines
delivered both as a distance and a vector. A value that fails, or differs
by more than its σ allows, is matched against the usual reduction errors
and the one that fits is named. Writes to the output folder (-out, default
geored-audit): audit.csv (a row per delivered value with every check),
loops.csv (a row per independent loop of the vectors: its misclosure,
tolerance, marks and vectors, each vector its line in its baselines file,
"−" before one taken backwards, the file named before the first and where
it changes: "net.csv:12 −40 17"), rejects.csv, summary.json (with the
audit's input hash, and the earlier outputs a rerun replaces) and
report.html.

Baselines CSV columns: from, to, kind (grid, ellipsoid, ground, sea-level
or vector); distance and sigma for a distance; dx, dy, dz (geocentric, the
CRS datum's frame, start to end mark) with sigma_x, sigma_y, sigma_z or
cov_xx, cov_xy, cov_xz, cov_yy, cov_yz, cov_zz for a vector; optional id,
applied_ppm (ppm) and applied_prism_constant_mm (mm), which let the audit
test whether either was applied twice. Lengths in the job's length_unit,
covariances in its square.

Raw observations: where the subcontractor's raw observations are given
(the job file's observations, or -observations), geored reduces them with
the job's settings (its instrument profile, atmosphere, refraction, datum)
and sets each delivered distance whose marks a reduced line joins (either
direction) beside our own values: the raw and corrected slope distance,
the horizontal distance at the marks' mean height, the ellipsoid, sea
level and grid distances. Where the delivered value differs from ours of
its kind, the usual errors are matched with our stage values and the
stage that explains the difference is named, or "no known cause".

Raw observations are read as reduce reads them: the observation CSV (its
delimiter found as reduce finds it), or LandXML 1.2 (a file named *.xml, or
whose first character other than a blank is '<'); "-observations -" reads
them from standard input.

Critical value: |w| of a delivered value against the control, and of its
difference from our reduction, is tested against critical_value (default
3.29 for each test); with job_alpha instead, Šidák's critical value that
holds that α over all the audit's tests: one a delivered row, and one more
a delivered distance set beside our reduction of its raw observations.
Above it, or past the tolerance, the usual errors are matched, each within
the same critical value.

Kinds: grid is the plane distance between the projected marks; ellipsoid
the geodesic; ground the horizontal distance at the marks' mean ellipsoidal
height, s·(R + h_m)/R; sea-level the distance on the geoid, s·(R + N_m)/R.

Exit status: 0 every delivered value and loop passes, every delivered
distance agrees with our reduction of its raw observations, and no row
(delivered or raw) was rejected; 1 some fail, differ or were rejected (the
reasons go to stderr; rejects.csv has file, line, the row and the reason);
2 could not run (bad flags, settings or files, or no value could be
checked), 130 or 143 stopped by SIGINT or SIGTERM.

Flags:
`)
		fs.PrintDefaults()
		fmt.Fprintln(stderr, "\n"+cautionText)
	}
	files, ok, code := parseCommand(fs, args, stderr)
	if !ok {
		return code
	}
	if err := observationArgs(rawFiles); err != nil {
		return fail(stderr, "audit", err)
	}
	j, err := jf.resolveFor(fs, jobconfig.Needs{}, rawFiles)
	if err != nil {
		return fail(stderr, "audit", err)
	}
	// "-" reads standard input once: the audit's tests are counted from
	// the delivered rows, so job_alpha needs no copy of it.
	var obsIn observationInput
	if slices.Contains(j.Observations, stdinArg) {
		obsIn.stdin = os.Stdin
	}
	if j.Out == "" {
		j.Out = defaultAuditOut
	}
	ctx, stop := stopOnSignals()
	defer stop()
	sum, err := auditJob(ctx, j, jf.config, files, obsIn, !*quiet, stderr)
	if code, ok := stopped(stderr, "audit", j.Out, err); ok {
		return code
	}
	if err != nil {
		return fail(stderr, "audit", err)
	}
	if !*quiet {
		printAuditVerdict(stdout, sum, j.Out)
	}
	if sum.ExitStatus != exitOK {
		fmt.Fprintf(stderr, "geored audit: exit status %d, %s\n", sum.ExitStatus, sum.Verdict)
		for _, r := range sum.Reasons {
			fmt.Fprintf(stderr, "  %s\n", r)
		}
	}
	return sum.ExitStatus
}

// auditJob audits the baselines files against the job's control and
// writes the outputs.
func auditJob(ctx context.Context, j *jobconfig.Job, jobFile string, files []string, obsIn observationInput, verbose bool, stderr io.Writer) (*report.AuditSummary, error) {
	if !j.HasTolerance {
		return nil, errors.New("the job has no tolerance: give [tolerance] class, or constant_mm and ppm (or -tolerance)")
	}
	if j.Points == "" {
		return nil, errors.New("no points file: give points in the config or -points")
	}
	if len(files) == 0 {
		return nil, errors.New("no baselines file: name one or more after the flags")
	}
	s, err := openJobSession(j)
	if err != nil {
		return nil, err
	}
	defer s.close()
	sum := &report.AuditSummary{Tool: "geored", Version: version(), ProjVersion: projVersion(), Caution: report.Caution,
		Tolerance: j.ToleranceText, Critical: j.Critical, CRS: j.CRS, CRSName: s.crs.Name(),
		Ellipsoid: s.crs.Ellipsoid().String(), Geoid: s.geoidGrid, LengthUnit: j.LengthUnit.String()}
	if s.geoidGrid == "none" && j.HasConstantN {
		sum.Geoid = fmt.Sprintf("constant N = %g m", j.ConstantN)
	}
	warn := func(text string) {
		sum.Warnings = append(sum.Warnings, text)
		if verbose {
			fmt.Fprintf(stderr, "warning: %s\n", text)
		}
	}
	pointsData, err := os.ReadFile(j.Points)
	if err != nil {
		return nil, err
	}
	nPoints, err := s.loadPoints(bytes.NewReader(pointsData), j.Points, func(w obsfile.Warning) { warn(w.String()) })
	if err != nil {
		return nil, err
	}
	sum.Inputs = append(sum.Inputs, inputFile("points", j.Points, pointsData, nPoints))
	// The baselines, read whole (they are small beside the raw
	// observations), then our reduction of the raw observations: the
	// critical value under job_alpha depends on how many tests both make.
	type delivered struct {
		data []byte
		res  *baselines.Result
	}
	var dels []delivered
	for _, path := range files {
		data, err := os.ReadFile(path)
		if err != nil {
			return nil, err
		}
		res, err := baselines.ReadDelimited(bytes.NewReader(data), path, j.LengthUnit, j.Delimiter)
		if err != nil {
			return nil, err
		}
		sum.Inputs = append(sum.Inputs, inputFile("baselines", path, data, res.Read))
		for _, w := range res.Warnings {
			warn(w.String())
		}
		dels = append(dels, delivered{data, res})
	}
	var raw *job.RawLines
	if len(j.Observations) > 0 {
		if raw, err = reduceRaw(ctx, j, s, obsIn, sum, warn); err != nil {
			return nil, err
		}
	}
	if j.HasJobAlpha {
		n := 0
		for _, d := range dels {
			n += auditTests(d.res, raw)
		}
		if err := j.SetTests(n); err != nil {
			return nil, err
		}
		sum.Critical, sum.JobAlpha, sum.Tests = j.Critical, j.JobAlpha, n
	}
	rules := audit.Settings{Tolerance: j.Tolerance, ToleranceText: j.ToleranceText, Critical: j.Critical, ControlSigma: controlSigma(j)}
	sum.ControlSigma = rules.ControlSigma

	var checks []checked
	for _, d := range dels {
		data, res := d.data, d.res
		sum.Counts.Read += res.Read
		for _, r := range res.Rejects {
			sum.Counts.Rejected++
			if r.Raw == "" {
				// A row the CSV reader could not split into fields
				// (the wrong number of them): the line as written.
				r.Raw = lineText(data, r.Line)
			}
			sum.Rejects = append(sum.Rejects, report.AuditReject{File: r.File, Line: r.Line, Raw: r.Raw, Reason: r.Reason})
		}
		for i := range res.Baselines {
			b := &res.Baselines[i]
			c, err := checkBaseline(s, b, rules, raw, warn)
			if err != nil {
				sum.Counts.Rejected++
				sum.Rejects = append(sum.Rejects, report.AuditReject{File: b.File, Line: b.Line, Raw: b.Raw, Reason: err.Error()})
				continue
			}
			checks = append(checks, c)
		}
	}
	if err := crossCheck(checks, rules); err != nil {
		return nil, err
	}
	for _, c := range checks {
		sum.Add(c.row)
	}
	if err := addLoops(sum, checks, rules); err != nil {
		return nil, err
	}
	report.DecideAudit(sum)
	if ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	sum.InputHash = auditInputHash(sum, settings(j, s.crs, s.geoidGrid, false))
	keep := append(jobInputs(j), outset.Keep{Role: "the job file", Path: jobFile})
	for _, f := range files {
		keep = append(keep, outset.Keep{Role: "a baselines file", Path: f})
	}
	return sum, writeAudit(ctx, j, sum, keep, stderr)
}

// auditTests is the number of |w| tests that a baselines file's rows
// make, each against the critical value: one for every row read (a
// delivered value against the control; a row rejected later counts, as
// reduce counts every row before its run), and one more for every
// delivered distance set beside our reduction of its line's raw
// observations (raw may be nil).
func auditTests(res *baselines.Result, raw *job.RawLines) int {
	n := res.Read
	if raw == nil {
		return n
	}
	for i := range res.Baselines {
		b := &res.Baselines[i]
		if _, ok, _ := raw.Ours(b.From, b.To); ok && !b.IsVector {
			n++
		}
	}
	return n
}

// auditInputHash is the SHA-256 over the audit's inputs' hashes (not
// their paths), the job's settings as reduce records them (they reduce the
// raw observations) and the audit's own: the identity of the audit.
func auditInputHash(sum *report.AuditSummary, st report.Settings) string {
	h := sha256.New()
	for _, in := range sum.Inputs {
		fmt.Fprintf(h, "%s %s\n", in.Role, in.SHA256)
	}
	b, _ := json.Marshal(struct {
		Settings     report.Settings
		Critical     float64
		ControlSigma float64
		Tests        int
	}{st, sum.Critical, sum.ControlSigma, sum.Tests})
	h.Write(b)
	return hex.EncodeToString(h.Sum(nil))
}

// lineText is line n (1-based) of data without its line end, "" past
// the end.
func lineText(data []byte, n int) string {
	for i := 1; i < n; i++ {
		j := bytes.IndexByte(data, '\n')
		if j < 0 {
			return ""
		}
		data = data[j+1:]
	}
	if j := bytes.IndexByte(data, '\n'); j >= 0 {
		data = data[:j]
	}
	return string(bytes.TrimSuffix(data, []byte("\r")))
}

// checked is one delivered value and its checks.
type checked struct {
	b    *audit.Baseline
	line audit.LineControl
	vec  *audit.VectorCheck
	dist *audit.DistanceCheck
	row  report.AuditRow
}

// checkBaseline checks one delivered value against control, and a
// distance beside our reduction of its line's raw observations where raw
// has them (raw may be nil); an error is a row that cannot be checked (an
// unknown mark, a height missing).
func checkBaseline(s *session, b *audit.Baseline, st audit.Settings, raw *job.RawLines, warn func(string)) (checked, error) {
	where := fmt.Sprintf("%s:%d", b.File, b.Line)
	a, ok := s.control[b.From]
	if !ok {
		return checked{}, fmt.Errorf("%s: start mark %q is not in the points file %s", where, b.From, s.pointFile)
	}
	e, ok := s.control[b.To]
	if !ok {
		return checked{}, fmt.Errorf("%s: end mark %q is not in the points file %s", where, b.To, s.pointFile)
	}
	c := checked{b: b}
	if b.IsVector {
		vc, err := job.AuditVector(b.Vector, a, e, s.geod, s.proj)
		if err != nil {
			return c, fmt.Errorf("%s: vector %s → %s: %w", where, b.From, b.To, err)
		}
		chk, err := audit.CheckVector(b.Vector, vc, st)
		if err != nil {
			return c, fmt.Errorf("%s: vector %s → %s: %w", where, b.From, b.To, err)
		}
		c.line, c.vec, c.row = vc.Line, &chk, report.VectorRow(b, &chk)
		return c, nil
	}
	lc, _, err := job.AuditLine(a, e, s.geod, s.proj)
	if err != nil {
		return c, fmt.Errorf("%s: line %s → %s: %w", where, b.From, b.To, err)
	}
	chk, err := audit.CheckDistance(b.Distance, lc, st)
	if err != nil {
		return c, fmt.Errorf("%s: %s %s → %s: %w", where, b.What(), b.From, b.To, err)
	}
	c.line, c.dist, c.row = lc, &chk, report.DistanceRow(b, &chk)
	if raw == nil {
		return c, nil
	}
	ours, ok, err := raw.Ours(b.From, b.To)
	if ok && err == nil {
		var rc audit.RawCheck
		if rc, err = audit.CompareRaw(b.Distance, ours, st); err == nil {
			c.row.AddRaw(&rc)
		}
	}
	if err != nil {
		warn(fmt.Sprintf("%s: %s %s → %s is not set beside our reduction of its raw observations: %v", where, b.What(), b.From, b.To, err))
	}
	return c, nil
}

// crossCheck compares each distance with the first vector delivered
// between the same marks (either way), taken to the distance's kind.
func crossCheck(checks []checked, st audit.Settings) error {
	type pair struct{ a, b string }
	key := func(a, b string) pair {
		if a > b {
			a, b = b, a
		}
		return pair{a, b}
	}
	vectors := map[pair]*checked{}
	for i := range checks {
		if c := &checks[i]; c.vec != nil {
			if _, ok := vectors[key(c.b.From, c.b.To)]; !ok {
				vectors[key(c.b.From, c.b.To)] = c
			}
		}
	}
	for i := range checks {
		c := &checks[i]
		v, ok := vectors[key(c.b.From, c.b.To)]
		if c.dist == nil || !ok {
			continue
		}
		val, err := c.line.FromEllipsoid(c.dist.Kind, v.vec.Ellipsoid, v.vec.Grid)
		if err != nil {
			continue // the kind needs what the job lacks; the distance's own check says so
		}
		tol, err := st.Tolerance.At(val)
		if err != nil {
			return err
		}
		c.row.CrossValue, c.row.CrossDiff = val, c.dist.Delivered-val
		c.row.CrossPass = "pass"
		if math.Abs(c.row.CrossDiff) > tol {
			c.row.CrossPass = "fail"
		}
	}
	return nil
}

// addLoops audits every independent loop of the vectors.
func addLoops(sum *report.AuditSummary, checks []checked, st audit.Settings) error {
	var edges []audit.Edge
	var at []*checked
	for i := range checks {
		if c := &checks[i]; c.vec != nil {
			edges = append(edges, audit.Edge{Index: len(edges), From: c.b.From, To: c.b.To, Delta: c.b.Vector.Delta, Cov: c.b.Vector.Cov})
			at = append(at, c)
		}
	}
	loops, err := audit.Loops(edges, st)
	if err != nil {
		return err
	}
	for n, l := range loops {
		al := report.AuditLoop{Number: n + 1, Repeat: l.Repeat, Length: l.Length, MM: l.MM, PPM: l.PPM, Sigma: l.Sigma,
			DX: l.Misclosure.X, DY: l.Misclosure.Y, DZ: l.Misclosure.Z, Tolerance: l.Tolerance, Margin: l.Margin, Pass: l.Pass}
		var marks []string
		for k, stp := range l.Steps {
			c := at[stp.Index]
			from, to := c.b.From, c.b.To
			if stp.Reversed {
				from, to = to, from
			}
			if k == 0 {
				marks = append(marks, from)
			}
			marks = append(marks, to)
			al.Vectors = append(al.Vectors, report.LoopStep{File: c.b.File, Line: c.b.Line, Reversed: stp.Reversed})
		}
		al.Marks = strings.Join(marks, " → ")
		sum.AddLoop(al)
	}
	return nil
}

// controlSigma is the σ of a distance between control marks from the
// job's [centring] control_mm, which every profile carries; 0 without a
// profile.
func controlSigma(j *jobconfig.Job) float64 {
	if p, ok := j.Profiles[j.DefaultInstrument]; ok {
		return p.Chain.Budget.Control
	}
	for _, n := range j.ProfileNames() {
		return j.Profiles[n].Chain.Budget.Control
	}
	return 0
}

func inputFile(role, path string, data []byte, rows int) report.InputFile {
	h := sha256.Sum256(data)
	return report.InputFile{Role: role, Path: path, SHA256: hex.EncodeToString(h[:]), Rows: rows}
}

// auditFiles are the files of audit's output set, besides its manifest.
var auditFiles = []string{"audit.csv", "loops.csv", "rejects.csv", "summary.json", "report.html"}

// writeAudit writes the outputs as one set (outset), committed together;
// keep lists the inputs, which the output folder must not hold.
func writeAudit(ctx context.Context, j *jobconfig.Job, sum *report.AuditSummary, keep []outset.Keep, stderr io.Writer) error {
	out, err := outset.Begin(ctx, j.Out, outset.Options{Keep: keep, Earlier: auditFiles, Log: stderr})
	if err != nil {
		return err
	}
	defer out.Abort()
	if r := out.Replaces(); r != nil {
		sum.Replaces = &report.Replaced{Created: r.Created.Format(time.RFC3339), InputHash: r.InputHash}
	}
	write := func(name string, f func(io.Writer) error) error {
		w, err := out.Create(name)
		if err != nil {
			return err
		}
		return f(w)
	}
	tol := func(d float64) float64 {
		t, err := j.Tolerance.At(d)
		if err != nil {
			return 0
		}
		return t
	}
	for _, o := range []struct {
		name string
		f    func(io.Writer) error
	}{
		{"audit.csv", func(w io.Writer) error { return report.WriteAuditCSV(w, sum, j.LengthUnit) }},
		{"loops.csv", func(w io.Writer) error { return report.WriteLoopsCSV(w, sum) }},
		{"rejects.csv", func(w io.Writer) error { return report.WriteAuditRejectsCSV(w, sum) }},
		{"summary.json", func(w io.Writer) error { return report.WriteAuditJSON(w, sum) }},
		{"report.html", func(w io.Writer) error { return report.WriteAuditHTML(w, sum, tol) }},
	} {
		if err := write(o.name, o.f); err != nil {
			return err
		}
	}
	return out.Commit(outset.Identity{Tool: "geored", Command: "audit", InputHash: sum.InputHash})
}

// printAuditVerdict prints the audit's outcome for a person.
func printAuditVerdict(w io.Writer, s *report.AuditSummary, out string) {
	c := s.Counts
	fmt.Fprintf(w, "exit status %d, %s\n", s.ExitStatus, s.Verdict)
	fmt.Fprintf(w, "read %d rows: %d checked (%d distances, %d vectors), %d rejected; %d pass, %d fail; %d loops, %d fail\n",
		c.Read, c.Checked, c.Distances, c.Vectors, c.Rejected, c.Passed, c.Failed, c.Loops, c.LoopsFailed)
	fmt.Fprintf(w, "tolerance: %s\n", s.Tolerance)
	for _, r := range s.Failing {
		stage := ""
		if r.Stage != "" {
			stage = " (stage " + r.Stage + ")"
		}
		fmt.Fprintf(w, "  fails %s → %s %s (%s:%d): %+.1f mm, tolerance %.1f mm: %s%s\n", r.From, r.To, r.What, r.File, r.Line, r.Residual*1e3, r.Tolerance*1e3, r.Cause, stage)
	}
	for _, l := range s.FailingLoops {
		fmt.Fprintf(w, "  loop %d fails: %.1f mm over %.0f m, tolerance %.1f mm: %s\n", l.Number, l.MM, l.Length, l.Tolerance*1e3, l.Marks)
	}
	fmt.Fprintf(w, "outputs in %s; report: %s\n", out, filepath.Join(out, "report.html"))
	fmt.Fprintln(w, report.Caution)
}
