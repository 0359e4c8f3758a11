package main

import (
	"context"
	"fmt"
	"html/template"
	"math"
	"os"
	"slices"
	"sort"
	"time"

	"github.com/geored/geored/io/history"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/reduce/drift"
)

// Alert kinds.
const (
	alertConstant = "instrument-constant"
	alertScale    = "instrument-scale"
	alertMark     = "mark-moved"
)

// nightNumber is a night's number of days since 1970-01-01.
func nightNumber(night string) (float64, error) {
	t, err := time.Parse(time.DateOnly, night)
	if err != nil {
		return 0, fmt.Errorf("night %q in the history: want YYYY-MM-DD", night)
	}
	return float64(t.Unix() / 86400), nil
}

// nightFit is one night's fit of one instrument: the weighted mean of the
// fits of the night's files with enough evidence (weights 1/σ²).
type nightFit struct {
	Night              string
	X                  float64
	ConstantMM, SigmaC float64
	ScalePPM, SigmaS   float64
}

// instrumentNights are the nights up to night of each instrument's fits
// with enough evidence, by instrument.
func instrumentNights(fits []history.FitPoint, night string) (map[string][]nightFit, error) {
	type acc struct{ wc, c, ws, s float64 }
	by := map[string]map[string]*acc{}
	for _, f := range fits {
		if f.Night > night || f.Evidence != report.EvidenceEnough || !(f.ConstantSigmaMM > 0) || !(f.ScaleSigmaPPM > 0) {
			continue
		}
		if by[f.Instrument] == nil {
			by[f.Instrument] = map[string]*acc{}
		}
		a := by[f.Instrument][f.Night]
		if a == nil {
			a = &acc{}
			by[f.Instrument][f.Night] = a
		}
		wc, ws := 1/(f.ConstantSigmaMM*f.ConstantSigmaMM), 1/(f.ScaleSigmaPPM*f.ScaleSigmaPPM)
		a.wc += wc
		a.c += wc * f.ConstantMM
		a.ws += ws
		a.s += ws * f.ScalePPM
	}
	out := map[string][]nightFit{}
	for inst, nights := range by {
		for n, a := range nights {
			x, err := nightNumber(n)
			if err != nil {
				return nil, err
			}
			out[inst] = append(out[inst], nightFit{Night: n, X: x, ConstantMM: a.c / a.wc, SigmaC: 1 / math.Sqrt(a.wc),
				ScalePPM: a.s / a.ws, SigmaS: 1 / math.Sqrt(a.ws)})
		}
		sort.Slice(out[inst], func(i, j int) bool { return out[inst][i].X < out[inst][j].X })
	}
	return out, nil
}

// sinceCalibration are the nights of ns from the day the instrument was
// calibrated on (YYYY-MM-DD; "" for all of them), and the words that say
// so in an alert: a calibration changes the constants the job applies,
// and the fits of the nights before it belong to another line.
func sinceCalibration(ns []nightFit, calibrated string) ([]nightFit, string) {
	if calibrated == "" {
		return ns, ""
	}
	i := sort.Search(len(ns), func(i int) bool { return ns[i].Night >= calibrated })
	return ns[i:], " since its calibration on " + calibrated
}

// specBounds are an instrument's EDM specification a (mm) and b (ppm) as
// one standard deviation: the bounds its calibration may drift to.
func specBounds(p jobconfig.Profile) (mm, ppm float64, err error) {
	spec := p.Chain.Budget.Instrument
	a, err := spec.Sigma(0)
	if err != nil {
		return 0, 0, err
	}
	f := 1.0
	if spec.Constant > 0 {
		f = a / spec.Constant
	}
	return a * 1e3, spec.PPM * f, nil
}

// A nightPlot is a plot of the summary beside an alert: the series that
// raised it.
type nightPlot struct {
	Title string
	SVG   template.HTML
}

// driftAlerts computes the night's alerts from the history: each
// instrument's trend and each mark's displacement (package drift), and
// returns them with their plots; what it could not look at goes to notes.
func driftAlerts(ctx context.Context, store *history.Store, j *jobconfig.Job, job, night string, notes *driftNotes) ([]history.Alert, []nightPlot, error) {
	fits, err := store.InstrumentSeries(ctx, job, "")
	if err != nil {
		return nil, nil, err
	}
	nights, err := instrumentNights(fits, night)
	if err != nil {
		return nil, nil, err
	}
	var out []history.Alert
	var plots []nightPlot
	names := make([]string, 0, len(nights))
	for n := range nights {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, inst := range names {
		ns := nights[inst]
		if len(ns) == 0 || ns[len(ns)-1].Night != night {
			continue // no fit tonight: nothing new to say
		}
		p, ok := j.Profiles[inst]
		if !ok {
			notes.noProfile(inst)
			continue
		}
		ns, since := sinceCalibration(ns, j.Instruments[inst].Calibrated)
		if len(ns) == 0 {
			continue
		}
		bmm, bppm, err := specBounds(p)
		if err != nil {
			return nil, nil, fmt.Errorf("instrument %s: %w", inst, err)
		}
		for _, k := range []struct {
			kind, what, unit string
			bound            float64
			v, sigma         func(nightFit) float64
		}{
			{alertConstant, "additive constant", "mm", bmm, func(f nightFit) float64 { return f.ConstantMM }, func(f nightFit) float64 { return f.SigmaC }},
			{alertScale, "scale", "ppm", bppm, func(f nightFit) float64 { return f.ScalePPM }, func(f nightFit) float64 { return f.SigmaS }},
		} {
			s := make([]drift.Value, len(ns))
			for i, f := range ns {
				s[i] = drift.Value{X: f.X, V: k.v(f)}
			}
			tr := drift.InstrumentTrend(s, k.bound, drift.TrendAlpha)
			if !tr.Alert {
				continue
			}
			msg := fmt.Sprintf("%s of %s drifting %s %s/night (%.0f %% interval %s to %s, Theil–Sen over %d nights%s); Mann–Kendall P = %.2g (α = %g); the trend line is at %s %s on %s, beyond the EDM specification's ±%.2f %s",
				k.what, inst, signedFixed(tr.Line.Slope, 3), k.unit, 100*tr.Line.Confidence, signedFixed(tr.Line.Lower, 3), signedFixed(tr.Line.Upper, 3),
				len(ns), since, tr.MannKendall.P, drift.TrendAlpha, signedFixed(tr.Last, 2), k.unit, night, k.bound, k.unit)
			out = append(out, history.Alert{Night: night, Kind: k.kind, Subject: inst, Message: msg})
			fit := report.NightSeries{Name: "the night's fit, ±σ"}
			for _, f := range ns {
				fit.X, fit.Y, fit.Err = append(fit.X, f.X), append(fit.Y, k.v(f)), append(fit.Err, k.sigma(f))
			}
			x0, x1 := ns[0].X, ns[len(ns)-1].X
			line := report.NightSeries{Name: fmt.Sprintf("Theil–Sen: %s %s/night", signedFixed(tr.Line.Slope, 3), k.unit),
				X: []float64{x0, x1}, Y: []float64{tr.Line.At(x0), tr.Line.At(x1)}, Trend: true}
			svg, err := report.NightPlot(fmt.Sprintf("%s of %s", k.what, inst), fmt.Sprintf("%s (%s)", k.what, k.unit), []report.NightSeries{fit, line})
			if err != nil {
				return nil, nil, err
			}
			plots = append(plots, nightPlot{Title: fmt.Sprintf("%s of %s, night by night, and its trend", k.what, inst), SVG: svg})
		}
	}
	marks, markPlots, err := markAlerts(ctx, store, j, job, night)
	if err != nil {
		return nil, nil, err
	}
	out = append(out, marks...)
	plots = append(plots, markPlots...)
	return out, plots, nil
}

// driftNotes are what a run's drift alerts could not look at, each said
// once per run.
type driftNotes struct {
	noProfiles []string
}

// noProfile notes an instrument of the history the job has no profile
// for: its trend has no specification to be judged against.
func (n *driftNotes) noProfile(inst string) {
	if !slices.Contains(n.noProfiles, inst) {
		n.noProfiles = append(n.noProfiles, inst)
	}
}

// list is the notes as the summary's sentences.
func (n *driftNotes) list() []string {
	var out []string
	for _, inst := range n.noProfiles {
		out = append(out, fmt.Sprintf("instrument %s is in the history but the job has no [instrument.%s] profile: its trend is not searched for drift", inst, inst))
	}
	return out
}

// markWindowNights is how far back a mark's lines are read: its
// baselines are the median of at most these nights.
const markWindowNights = 60

// markAlerts finds the marks that moved on night, over the nights of the
// last markWindowNights: the residuals of the
// lines at each mark against their own baselines (drift.MarkShifts), in
// the directions of the lines from the job's control. The residuals are
// taken as they are, not less the night's fit of their instrument: a
// moved mark's lines pull that fit, which would then move every other
// line; a drifting constant is taken by the change common to a mark's
// lines that drift.MarkShifts fits beside the displacement.
func markAlerts(ctx context.Context, store *history.Store, j *jobconfig.Job, job, night string) ([]history.Alert, []nightPlot, error) {
	t, err := time.Parse(time.DateOnly, night)
	if err != nil {
		return nil, nil, err
	}
	since := t.AddDate(0, 0, -markWindowNights).Format(time.DateOnly)
	lines, err := store.LinesBetween(ctx, job, since, night)
	if err != nil {
		return nil, nil, err
	}
	grid, err := controlGrid(j)
	if err != nil {
		return nil, nil, err
	}
	// Per mark, night and other end: the weighted mean of the night's
	// residuals of that line (its instruments, its files).
	type acc struct{ w, r float64 }
	type key struct{ mark, night, other string }
	sums := map[key]*acc{}
	marks := map[string]bool{}
	for _, l := range lines {
		if !(l.SigmaMM > 0) {
			continue
		}
		r := l.ResidualMM
		for _, e := range [][2]string{{l.From, l.To}, {l.To, l.From}} {
			k := key{e[0], l.Night, e[1]}
			a := sums[k]
			if a == nil {
				a = &acc{}
				sums[k] = a
			}
			w := 1 / (l.SigmaMM * l.SigmaMM)
			a.w += w
			a.r += w * r
			marks[e[0]] = true
		}
	}
	byMark := map[string]map[string][]drift.MarkLine{}
	for k, a := range sums {
		m, o := grid[k.mark], grid[k.other]
		if m == nil || o == nil {
			continue
		}
		dE, dN := o[0]-m[0], o[1]-m[1]
		d := math.Hypot(dE, dN)
		if d == 0 {
			continue
		}
		if byMark[k.mark] == nil {
			byMark[k.mark] = map[string][]drift.MarkLine{}
		}
		byMark[k.mark][k.night] = append(byMark[k.mark][k.night], drift.MarkLine{Other: k.other, E: dE / d, N: dN / d,
			ResidualMM: a.r / a.w, SigmaMM: 1 / math.Sqrt(a.w)})
	}
	var names []string
	for m := range byMark {
		names = append(names, m)
	}
	sort.Strings(names)
	var out []history.Alert
	var plots []nightPlot
	for _, m := range names {
		var ns []drift.MarkNight
		for n, ls := range byMark[m] {
			x, err := nightNumber(n)
			if err != nil {
				return nil, nil, err
			}
			sort.Slice(ls, func(i, j int) bool { return ls[i].Other < ls[j].Other })
			ns = append(ns, drift.MarkNight{X: x, Night: n, Lines: ls})
		}
		sort.Slice(ns, func(i, j int) bool { return ns[i].X < ns[j].X })
		if len(ns) == 0 || ns[len(ns)-1].Night != night {
			continue
		}
		for _, s := range drift.MarkShifts(ns, drift.MarkAlpha) {
			if s.Night != night {
				continue
			}
			msg := fmt.Sprintf("mark %s moved on %s: %.1f mm towards %.0f° grid (east %s ± %.1f mm, north %s ± %.1f mm), χ² = %.1f on 2 degrees of freedom, P = %.2g (α = %g), from %d lines against their baselines",
				m, night, s.DistanceMM(), s.Bearing(), signedFixed(s.EastMM, 1), s.SigmaEastMM, signedFixed(s.NorthMM, 1), s.SigmaNorthMM, s.Chi2, s.P, drift.MarkAlpha, s.Lines)
			out = append(out, history.Alert{Night: night, Kind: alertMark, Subject: m, Message: msg})
			svg, err := report.NightPlot("lines at "+m, "residual of the night's mean (mm)", markSeries(ns))
			if err != nil {
				return nil, nil, err
			}
			plots = append(plots, nightPlot{Title: "the residuals of the lines at " + m + ", night by night", SVG: svg})
		}
	}
	return out, plots, nil
}

// markSeries are a mark's lines' residuals over its nights, one series
// per line, ±σ.
func markSeries(ns []drift.MarkNight) []report.NightSeries {
	idx := map[string]int{}
	var out []report.NightSeries
	for _, n := range ns {
		for _, l := range n.Lines {
			i, ok := idx[l.Other]
			if !ok {
				i = len(out)
				idx[l.Other] = i
				out = append(out, report.NightSeries{Name: "to " + l.Other})
			}
			s := &out[i]
			s.X, s.Y, s.Err = append(s.X, n.X), append(s.Y, l.ResidualMM), append(s.Err, l.SigmaMM)
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out
}

// controlGrid is the job's control points' grid coordinates by id (in
// the grid's unit: only directions are taken from them).
func controlGrid(j *jobconfig.Job) (map[string]*[2]float64, error) {
	s, err := openJobSession(j)
	if err != nil {
		return nil, err
	}
	defer s.close()
	f, err := os.Open(j.Points)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	if _, err := s.loadPoints(f, j.Points, func(w obsfile.Warning) {}); err != nil {
		return nil, err
	}
	out := make(map[string]*[2]float64, len(s.control))
	for id, c := range s.control {
		out[id] = &[2]float64{c.Grid.Easting, c.Grid.Northing}
	}
	return out, nil
}

// signedFixed is x with its sign and decimals.
func signedFixed(x float64, decimals int) string { return fmt.Sprintf("%+.*f", decimals, x) }
