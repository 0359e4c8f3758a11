package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"math"
	"os"
	"path/filepath"
	"runtime/debug"
	"slices"
	"strings"
	"syscall"
	"time"

	"github.com/geored/geored/io/history"
	"github.com/geored/geored/io/inbox"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/outset"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/reduce/job"
)

// nightlyFile is one inbox file's outcome in the run's summary.
type nightlyFile struct {
	Name    string   `json:"name"`
	Path    string   `json:"path"` // where it is now (archive, rejected, or still the inbox)
	SHA256  string   `json:"sha256"`
	Outcome string   `json:"outcome"` // reduced, rejected, duplicate, already-processed, left
	Reason  string   `json:"reason,omitempty"`
	Results string   `json:"results,omitempty"`
	Exit    int      `json:"exit_status"`
	Read    int      `json:"read"`
	Reduced int      `json:"reduced"`
	Flagged []string `json:"flagged_lines,omitempty"`
}

// nightlySummary is the run's summary.json (and summary.html).
type nightlySummary struct {
	Tool       string          `json:"tool"`
	Version    string          `json:"version"`
	Job        string          `json:"job"`
	Night      string          `json:"night"`
	Started    string          `json:"started"`
	History    string          `json:"history"`
	Files      []nightlyFile   `json:"files"`
	Alerts     []history.Alert `json:"alerts"` // of the nights whose alerts the run computed
	Notes      []string        `json:"notes,omitempty"`
	ExitStatus int             `json:"exit_status"`
	Caution    string          `json:"caution"`

	Plots []nightPlot `json:"-"` // summary.html's, beside the night's alerts
}

func runNightly(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("nightly", flag.ContinueOnError)
	var jf jobFlags
	jf.register(fs)
	inboxDir := fs.String("inbox", "", "folder of new observation files (default: inbox beside the job file)")
	archive := fs.String("archive", "", "where a file goes once reduced and recorded (default: archive beside the job file)")
	rejected := fs.String("rejected", "", "where a file that could not be reduced goes, with its reason in the summary (default: rejected beside the job file)")
	results := fs.String("results", "", "folder of the dated results (default: results beside the job file)")
	hist := fs.String("history", "", "the history: a SQLite file (default: history.db beside the job file) or a PostgreSQL connection string (postgres://user@host/db)")
	jobName := fs.String("job", "", "the job's name in the history (default: the job folder's name)")
	night := fs.String("night", "", "the night the files are dated by, YYYY-MM-DD (default: the run's start, local time)")
	wait := fs.Bool("wait", false, "if another run holds the job folder, wait for it instead of refusing")
	quiet := fs.Bool("quiet", false, "print nothing but errors")
	jsonOut := fs.Bool("json", false, "print the run's summary (JSON) on stdout")
	fs.Usage = func() {
		fmt.Fprint(stderr, `Usage: geored nightly -config JOBFOLDER/job.toml [flags]

The unattended run of a job folder (its job file, its points file, an inbox
of new observation files), for cron or a systemd timer. Each inbox file not
yet processed — known by the SHA-256 of its content, not its name — is
reduced as geored reduce would into results/NIGHT/STEM-HASH8/, its
observations (a batch at a time, as they are reduced), lines and
per-instrument fits written to the history with its processed mark in one
transaction, and only then moved to the archive
(a file that cannot be reduced goes to rejected/, its reason in the
summary). A file already processed, under any name, is not reduced again.
A rerun after a crash finishes what was left: nothing lost, nothing
counted twice. One summary per run (summary.json, summary.html) goes to
results/NIGHT/run-HHMMSS-PID/.

The job folder is locked for the run: by a lock file beside it with SQLite,
in the database (an advisory lock keyed by host and folder) with
PostgreSQL; a lock left by a dead run is taken over with a note.

Drift alerts, after each night, from the history (once per night, kind
and subject; in the summary, the log and the exit status):
  instrument-constant, instrument-scale: over at least 6 nights with a
     fit of enough evidence, the Mann–Kendall test finds a trend at
     α = 0.01 and the Theil–Sen line is beyond the instrument's EDM
     specification (spec_mm, spec_ppm as 1σ) on the night; the slope per
     night is given with Sen's 99 % interval; with calibrated =
     "YYYY-MM-DD" in [instrument.NAME], over the nights since then
  mark-moved: the residuals of at least 4 lines at the mark, in two
     directions, each against the median of its own earlier nights (3 at
     least, since the mark last moved), fit one 2-D displacement beside a
     change common to them (least squares, σ from the lines, scaled up by
     the baselines' own scatter) and it passes χ²(2) at α = 0.001, with
     any one line left out as well; one bad line alone is a line flag
A night's alerts are recorded with it as a step of its own: a run
computes those of every night whose files are recorded and alerts not
(a run stopped between the two). summary.html plots each alert's series; `+"`"+`geored history`+"`"+` prints them as CSV.

Exit status:
  0  every new file reduced clean, or nothing new
  1  a file rejected, a reduced file needs a look (its reduce status 1),
     or an alert on the night
  2  could not run (bad flags or settings, the history unreachable, the
     job folder in use, a full disk): the files not done stay in the inbox
  130, 143  stopped by SIGINT or SIGTERM: the file being reduced stays in
     the inbox, those done are done

Flags:
`)
		fs.PrintDefaults()
		fmt.Fprintln(stderr, "\n"+cautionText)
	}
	if ok, code := parseFlags(fs, args, stderr); !ok {
		return code
	}
	if jf.config == "" {
		return fail(stderr, "nightly", errors.New("give the job file: -config JOBFOLDER/job.toml"))
	}
	j, err := jf.resolve(fs)
	if err != nil {
		return fail(stderr, "nightly", err)
	}
	jobDir, err := historyDefaults(jf.config, hist, jobName)
	if err != nil {
		return fail(stderr, "nightly", err)
	}
	def := func(v *string, name string) {
		if *v == "" {
			*v = filepath.Join(jobDir, name)
		}
	}
	def(inboxDir, "inbox")
	def(archive, "archive")
	def(rejected, "rejected")
	def(results, "results")
	start := time.Now()
	if *night == "" {
		*night = start.Format(time.DateOnly)
	} else if _, err := time.Parse(time.DateOnly, *night); err != nil {
		return fail(stderr, "nightly", fmt.Errorf("-night %q: want YYYY-MM-DD", *night))
	}
	// A night holds each file's line sums for the history and a batch
	// of its observations, strings and all, which the collector must
	// mark: at the GOGC=10 that suits reduce's pointer-free heap it
	// marked them over and over (a third of a run of 1,000,000
	// observations, when the night held all of them). GOGC, if set,
	// still rules.
	if os.Getenv("GOGC") == "" {
		defer debug.SetGCPercent(debug.SetGCPercent(100))
	}
	log := nightlyLogger(stderr, *quiet)
	ctx, stop := stopOnSignals()
	defer stop()
	hook := testHook(ctx, stderr)
	if hook == nil {
		hook = func(string) {}
	}

	// The lock: the job folder's flock with SQLite; with PostgreSQL the
	// database's advisory lock, so that servers sharing the database and
	// the folder's name apart are kept apart as well.
	store, err := history.Open(ctx, *hist)
	if err != nil {
		return fail(stderr, "nightly", err)
	}
	defer store.Close()
	if store.Dialect() == "postgres" {
		host, _ := os.Hostname()
		l, err := store.Lock(ctx, host+":"+jobDir, *wait)
		if err != nil {
			return fail(stderr, "nightly", err)
		}
		defer l.Release()
	} else {
		l, err := outset.Acquire(ctx, jobDir, outset.LockOptions{Wait: *wait, Log: stderr})
		if err != nil {
			return fail(stderr, "nightly", err)
		}
		defer l.Release()
	}
	run := &history.Run{Job: *jobName, Night: *night, Started: start, Version: version()}
	if err := store.BeginRun(ctx, run); err != nil {
		return fail(stderr, "nightly", err)
	}
	entries, err := inbox.Scan(*inboxDir)
	if err != nil {
		return fail(stderr, "nightly", err)
	}
	sum := &nightlySummary{Tool: "geored", Version: version(), Job: *jobName, Night: *night, Started: start.Format(time.RFC3339),
		History: store.String(), Caution: report.Caution}
	status := exitOK
	seen := map[string]string{}
	for _, e := range entries {
		nf := nightlyFile{Name: e.Name, Path: e.Path, SHA256: e.SHA256}
		if first, ok := seen[e.SHA256]; ok {
			nf.Outcome, nf.Reason = "duplicate", "the same content as "+first+" in this run"
		} else if there, ok, err := store.Processed(ctx, *jobName, e.SHA256); err != nil {
			return fail(stderr, "nightly", err)
		} else if ok {
			nf.Outcome, nf.Results = "already-processed", there.Results
			nf.Reason = fmt.Sprintf("%s on %s as %s", there.Status, there.Night, there.Name)
			if there.Name != e.Name {
				nf.Outcome = "duplicate"
			}
		}
		seen[e.SHA256] = e.Name
		if nf.Outcome != "" {
			// Its rows are in the history: finish its move (a crash
			// between the commit and the move), or put the copy away.
			dst := *archive
			if nf.Reason != "" && strings.HasPrefix(nf.Reason, history.StatusRejected) {
				dst = *rejected
			}
			p, err := inbox.Move(e, dst)
			if err != nil {
				return fail(stderr, "nightly", err)
			}
			nf.Path = p
			sum.Files = append(sum.Files, nf)
			logFile(log, nf)
			continue
		}
		code, err := nightlyOne(ctx, store, run, j, e, &nf, *results, hook)
		if code, ok := stopped(stderr, "nightly", nf.Results, err); ok {
			return code
		}
		if err != nil {
			nf.Outcome, nf.Reason = "left", err.Error()
			sum.Files = append(sum.Files, nf)
			logFile(log, nf)
			fmt.Fprintf(stderr, "geored nightly: %s: %v; it stays in the inbox\n", e.Path, err)
			status = exitFailed
			break
		}
		dst := *archive
		if nf.Outcome == "rejected" {
			dst = *rejected
		}
		hook("recorded:" + e.Name)
		p, err := inbox.Move(e, dst)
		if err != nil {
			return fail(stderr, "nightly", err)
		}
		nf.Path = p
		hook("moved:" + e.Name)
		logFile(log, nf)
		if code > status {
			status = code
		}
		sum.Files = append(sum.Files, nf)
	}
	// The alerts are a recorded step of their own: every night whose
	// files are recorded and whose alerts are not (tonight's, or a night
	// whose run stopped between the two) is computed, in order, and
	// recorded with its alerts in one transaction.
	due, err := store.AlertsDue(ctx, *jobName)
	if err != nil {
		return fail(stderr, "nightly", err)
	}
	if !slices.Contains(due, *night) {
		due = append(due, *night) // its alerts again, with their plots, for the summary
	}
	var notes driftNotes
	for _, n := range due {
		hook("alerts:" + n)
		alerts, plots, err := driftAlerts(ctx, store, j, *jobName, n, &notes)
		if err != nil {
			return fail(stderr, "nightly", fmt.Errorf("drift alerts of %s: %w", n, err))
		}
		if err := store.RecordAlerts(ctx, *jobName, n, run.ID, alerts); err != nil {
			return fail(stderr, "nightly", err)
		}
		sum.Plots = append(sum.Plots, plots...)
	}
	sum.Notes = notes.list()
	for _, n := range sum.Notes {
		log.Warn("note", "message", n)
	}
	if sum.Alerts, err = store.Alerts(ctx, *jobName); err != nil {
		return fail(stderr, "nightly", err)
	}
	sum.Alerts = nightAlerts(sum.Alerts, due)
	if len(sum.Alerts) > 0 && status == exitOK {
		status = exitFlagged
	}
	for _, a := range sum.Alerts {
		log.Warn("alert", "night", a.Night, "kind", a.Kind, "subject", a.Subject, "message", a.Message)
	}
	sum.ExitStatus = status
	if err := writeNightlySummary(ctx, filepath.Join(*results, *night, fmt.Sprintf("run-%s-%d", start.Format("150405"), os.Getpid())), sum, hook); err != nil {
		return fail(stderr, "nightly", err)
	}
	if *jsonOut {
		b, _ := json.Marshal(sum)
		fmt.Fprintf(stdout, "%s\n", b)
	} else if !*quiet {
		for _, f := range sum.Files {
			fmt.Fprintf(stdout, "%-18s %s %s", f.Outcome, f.SHA256[:8], f.Name)
			if f.Reason != "" {
				fmt.Fprintf(stdout, ": %s", f.Reason)
			}
			fmt.Fprintln(stdout)
		}
		fmt.Fprintf(stdout, "exit status %d: %d files\n", status, len(sum.Files))
	}
	return status
}

// nightAlerts are the alerts of nights.
func nightAlerts(all []history.Alert, nights []string) []history.Alert {
	var out []history.Alert
	for _, a := range all {
		if slices.Contains(nights, a.Night) {
			out = append(out, a)
		}
	}
	return out
}

// couldNotRun reports whether a reduce error is the machine's (a full
// disk, a folder in use or unwritable), which leaves the file in the
// inbox for the next run, rather than the file's, which rejects it.
func couldNotRun(err error) bool {
	var held *outset.HeldError
	return errors.As(err, &held) || errors.Is(err, syscall.ENOSPC) || errors.Is(err, syscall.EIO) ||
		errors.Is(err, syscall.EROFS) || errors.Is(err, syscall.EACCES) || errors.Is(err, syscall.EDQUOT)
}

// nightlyOne reduces one inbox file into its results folder and records
// it in the history with its processed mark, in one transaction. It
// returns the file's status for the run.
func nightlyOne(ctx context.Context, store *history.Store, run *history.Run, j0 *jobconfig.Job, e inbox.Entry, nf *nightlyFile, results string, hook func(string)) (int, error) {
	j := *j0
	j.Observations = []string{e.Path}
	j.Out = filepath.Join(results, run.Night, e.Key())
	nf.Results = j.Out
	if err := os.MkdirAll(filepath.Dir(j.Out), 0o755); err != nil {
		return exitFailed, err
	}
	// The record is begun before the reduce, so that each observation
	// goes to the store as it is reduced, a batch at a time, in the
	// transaction that the file's processed mark commits.
	f := history.File{Job: run.Job, SHA256: e.SHA256, Name: e.Name, Night: run.Night, RunID: run.ID, Results: j.Out, Status: history.StatusReduced}
	rec, err := store.BeginRecord(ctx, &f)
	if err != nil {
		return exitFailed, err
	}
	defer rec.Abort()
	c := collector{ctx: ctx, rec: rec}
	opt := reduceOptions{each: c.add}
	opt.set = setOptions(ctx, io.Discard, nil, false)
	opt.set.Hook = hook
	s, err := reduceJob(ctx, &j, opt)
	if errors.As(err, new(signalStop)) || (err != nil && couldNotRun(err)) {
		return exitFailed, err
	}
	if c.err != nil {
		return exitFailed, c.err // the history, not the file
	}
	code := exitOK
	switch {
	case err != nil:
		f.Status, f.Reason, f.Exit, f.Results = history.StatusRejected, err.Error(), exitFailed, ""
		nf.Results = ""
		code = exitFlagged
	case s.ExitStatus == exitFailed:
		f.Status, f.Reason = history.StatusRejected, s.Verdict+": "+strings.Join(s.Reasons, "; ")
		code = exitFlagged
	default:
		f.Status = history.StatusReduced
		code = s.ExitStatus
	}
	if s != nil {
		b, _ := json.Marshal(s.Settings)
		f.InputHash, f.Settings, f.Exit = s.InputHash, string(b), s.ExitStatus
		f.Read, f.Reduced, f.Rejected = s.Counts.Read, s.Counts.Reduced, s.Counts.Rejected
		for _, l := range s.Lines {
			if l.Flagged() {
				nf.Flagged = append(nf.Flagged, l.From+" – "+l.To+": "+strings.Join(l.Flags, ", "))
			}
		}
	}
	nf.Outcome, nf.Reason, nf.Exit, nf.Read, nf.Reduced = f.Status, f.Reason, f.Exit, f.Read, f.Reduced
	hook("reduced:" + e.Name)
	if f.Status != history.StatusReduced {
		// A rejected file's mark alone: its rows are rolled back.
		rec.Abort()
		_, err = store.Record(ctx, &f, nil, nil, nil)
	} else {
		_, err = rec.Finish(ctx, c.lines(), c.fits(j.Critical))
	}
	if err != nil {
		return exitFailed, err
	}
	return code, nil
}

// A collector keeps what the history needs of each result of one file:
// the observation, added to the file's record as it comes, and per
// instrument and line the sums of its mean.
type collector struct {
	ctx   context.Context
	rec   *history.Recording
	err   error             // the record's first error: the rest are not added
	names map[string]string // interned point and instrument names
	sums  map[lineKey]*lineSum
	order []lineKey
}

type lineKey struct {
	instrument string
	line       int32
}

type lineSum struct {
	from, to               string
	n, flagged             int
	geodesic, sumR, sumVar float64
}

func (c *collector) intern(s string) string {
	if v, ok := c.names[s]; ok {
		return v
	}
	if c.names == nil {
		c.names = map[string]string{}
	}
	v := strings.Clone(s)
	c.names[v] = v
	return v
}

func (c *collector) add(r *job.Result) {
	if r.Rejected {
		return
	}
	e := &r.Reduction.EllipsoidResidual
	o := history.Observation{LineNo: r.Obs.Line, ObsID: strings.Clone(r.Obs.ObsID), From: c.intern(r.Obs.From), To: c.intern(r.Obs.To),
		Instrument: c.intern(r.Profile), Slope: r.Obs.SlopeDistance, Arc: r.Reduction.Geometry.Arc, Geodesic: e.Reference,
		ResidualMM: e.Residual * 1e3, SigmaMM: e.Sigma * 1e3, W: e.Standardized, Flagged: e.Outlier || e.OutOfTolerance}
	if c.err == nil {
		c.err = c.rec.Add(c.ctx, &o)
	}
	k := lineKey{o.Instrument, r.LineID}
	if c.sums == nil {
		c.sums = map[lineKey]*lineSum{}
	}
	l, ok := c.sums[k]
	if !ok {
		l = &lineSum{from: o.From, to: o.To, geodesic: o.Geodesic}
		c.sums[k] = l
		c.order = append(c.order, k)
	}
	l.n++
	l.sumR += o.ResidualMM
	l.sumVar += o.SigmaMM * o.SigmaMM
	if o.Flagged {
		l.flagged++
	}
}

// lines are the per-instrument line means, σ of the mean √(Σσ²)/n as
// the summary's.
func (c *collector) lines() []history.Line {
	out := make([]history.Line, 0, len(c.order))
	for _, k := range c.order {
		l := c.sums[k]
		out = append(out, history.Line{Instrument: k.instrument, From: l.from, To: l.to, N: l.n, Geodesic: l.geodesic,
			ResidualMM: l.sumR / float64(l.n), SigmaMM: math.Sqrt(l.sumVar) / float64(l.n), Flagged: l.flagged})
	}
	return out
}

// fits are reduce's fit of residual = constant + scale · distance
// (report.FitResiduals), over each instrument's lines on their own.
func (c *collector) fits(critical float64) []history.Fit {
	by := map[string][]report.Line{}
	var names []string
	for _, l := range c.lines() {
		if _, ok := by[l.Instrument]; !ok {
			names = append(names, l.Instrument)
		}
		by[l.Instrument] = append(by[l.Instrument], report.Line{From: l.From, To: l.To, Count: l.N, Geodesic: l.Geodesic,
			ResidualMM: l.ResidualMM, SigmaMM: l.SigmaMM, FlaggedObservations: l.Flagged})
	}
	var out []history.Fit
	for _, n := range names {
		f := report.FitResiduals(by[n], critical)
		if f == nil {
			continue
		}
		out = append(out, history.Fit{Instrument: n, N: f.N, ConstantMM: f.ConstantMM, ConstantSigmaMM: f.ConstantSigma,
			ScalePPM: f.ScalePPM, ScaleSigmaPPM: f.ScaleSigma, Evidence: f.Evidence})
	}
	return out
}

// writeNightlySummary writes the run's summary.json and summary.html as
// one output set.
func writeNightlySummary(ctx context.Context, dir string, s *nightlySummary, hook func(string)) error {
	if err := os.MkdirAll(filepath.Dir(dir), 0o755); err != nil {
		return err
	}
	set, err := outset.Begin(ctx, dir, outset.Options{Hook: hook})
	if err != nil {
		return err
	}
	defer set.Abort()
	js, err := set.Create("summary.json")
	if err != nil {
		return err
	}
	enc := json.NewEncoder(js)
	enc.SetIndent("", "  ")
	if err := enc.Encode(s); err != nil {
		return err
	}
	h, err := set.Create("summary.html")
	if err != nil {
		return err
	}
	if err := nightlyHTML.Execute(h, s); err != nil {
		return err
	}
	return set.Commit(outset.Identity{Tool: "geored", Command: "nightly"})
}

// nightlyLogger is the run's structured log on stderr: JSON records when
// stderr is not a terminal (a scheduler's journal), text otherwise;
// -quiet keeps warnings and errors only.
func nightlyLogger(stderr io.Writer, quiet bool) *slog.Logger {
	opt := &slog.HandlerOptions{Level: slog.LevelInfo}
	if quiet {
		opt.Level = slog.LevelWarn
	}
	if isTerminal(stderr) {
		return slog.New(slog.NewTextHandler(stderr, opt))
	}
	return slog.New(slog.NewJSONHandler(stderr, opt))
}

// logFile logs one inbox file's outcome: a warning when it was rejected
// or left in the inbox.
func logFile(log *slog.Logger, f nightlyFile) {
	level := slog.LevelInfo
	if f.Outcome == history.StatusRejected || f.Outcome == "left" {
		level = slog.LevelWarn
	}
	log.Log(context.Background(), level, "file", "path", f.Path, "name", f.Name, "sha256", f.SHA256, "outcome", f.Outcome, "reason", f.Reason)
}
