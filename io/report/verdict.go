package report

import (
	"fmt"
	"math"
	"strconv"

	"github.com/geored/geored/reduce"
)

// Exit statuses of a reduce run (Decide).
const (
	StatusClean  = 0 // rows were reduced, none rejected, none flagged, the global test not too large
	StatusLook   = 1 // something needs a look: rejected rows, flagged results, a failed global test
	StatusFailed = 2 // could not run, nothing could be reduced, or -strict and a row was rejected
)

// globalTest is reduce.GlobalTest as the summary keeps it. Its inputs
// come from the aggregator and are valid (n ≥ 1, a finite sum, α in
// (0, 1)); should they not be, the outcome says so.
func globalTest(sumW2 float64, n int, alpha float64) *GlobalTest {
	g, err := reduce.GlobalTest(sumW2, n, alpha)
	if err != nil {
		return &GlobalTest{N: n, VarianceFactor: math.NaN(), Alpha: alpha, Outcome: "not computed: " + err.Error()}
	}
	return &GlobalTest{N: g.N, VarianceFactor: g.VarianceFactor, Alpha: g.Alpha, Lower: g.Lower, Upper: g.Upper, Outcome: g.Outcome}
}

// Decide sets the summary's exit status, verdict, reasons and notes from
// its counts and tests; every output (the process status, summary.json,
// -json and report.html) reads them from here, so they cannot disagree.
//
//	2  no row could be reduced (an empty file, every row rejected), or
//	   strict and a row was rejected
//	1  rows were rejected, observations or lines flagged (|w| over the
//	   critical value, over the tolerance, a line's spread), the fit of
//	   residuals against distance finds a significant constant or scale
//	   on enough evidence, or the global test's variance factor is too
//	   large
//	0  otherwise: rows reduced, none rejected, none flagged
//
// A variance factor too small (σ overstated) is a note, not a flag: the
// observations are better than the job says.
func Decide(s *Summary, strict bool) {
	c := s.Counts
	s.Reasons, s.Notes = nil, nil
	g := s.Testing.Global
	switch {
	case c.Read == 0:
		s.ExitStatus = StatusFailed
		s.Reasons = append(s.Reasons, "the observation files hold no rows")
	case c.Reduced == 0:
		s.ExitStatus = StatusFailed
		s.Reasons = append(s.Reasons, fmt.Sprintf("none of the %d rows could be reduced", c.Read))
	}
	if c.Rejected > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d rows rejected (rejects.csv)", c.Rejected, c.Read))
		if strict && s.ExitStatus != StatusFailed {
			s.ExitStatus = StatusFailed
			s.Reasons = append(s.Reasons, "-strict: a rejected row fails the run")
		}
	}
	if c.Flagged > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d reduced observations flagged", c.Flagged, c.Reduced))
	}
	if c.FlaggedLines > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d lines flagged", c.FlaggedLines, c.Lines))
	}
	if f := s.Fit; f != nil && f.Enough() {
		if f.ConstantSignificant {
			s.Reasons = append(s.Reasons, fmt.Sprintf("the fit of residuals against distance finds a constant of %s ± %s mm: a wrong prism or additive constant?", fixed(f.ConstantMM, 1), fixed(f.ConstantSigma, 1)))
		}
		if f.ScaleSignificant {
			s.Reasons = append(s.Reasons, fmt.Sprintf("the fit of residuals against distance finds a scale of %s ± %s ppm: a wrong ppm, atmosphere or scale?", fixed(f.ScalePPM, 2), fixed(f.ScaleSigma, 2)))
		}
	}
	if g != nil {
		switch g.Outcome {
		case reduce.GlobalTooLarge:
			s.Reasons = append(s.Reasons, fmt.Sprintf("global test failed: variance factor %s above its upper bound %s (α %s): the residuals are larger than their σ allow",
				fixed(g.VarianceFactor, 3), fixed(g.Upper, 3), strconv.FormatFloat(g.Alpha, 'g', -1, 64)))
		case reduce.GlobalTooSmall:
			s.Notes = append(s.Notes, fmt.Sprintf("global test: variance factor %s below its lower bound %s (α %s): the residuals are smaller than their σ say; the instrument specification or centring σ may be pessimistic",
				fixed(g.VarianceFactor, 3), fixed(g.Lower, 3), strconv.FormatFloat(g.Alpha, 'g', -1, 64)))
		}
	}
	if t := s.Testing; t.Outliers > 0 && t.Scope == ScopeObservation && t.ExpectedByChance >= 1 {
		s.Notes = append(s.Notes, fmt.Sprintf("%d observations have |w| over %s; chance alone would give about %s of %d at α %s each (job_alpha sets a critical value for the whole job)",
			t.Outliers, fixed(t.Critical, 2), fixed(t.ExpectedByChance, 1), c.Reduced, strconv.FormatFloat(t.AlphaPerObservation, 'g', 3, 64)))
	}
	if s.ExitStatus != StatusFailed {
		s.ExitStatus = StatusClean
		if len(s.Reasons) > 0 {
			s.ExitStatus = StatusLook
		}
	}
	switch s.ExitStatus {
	case StatusClean:
		s.Verdict = "clean: every row was reduced and no result is flagged"
	case StatusLook:
		s.Verdict = "needs a look: some rows or results need attention"
	default:
		s.Verdict = "failed: no row could be reduced"
		if c.Reduced > 0 {
			s.Verdict = "failed: rows were rejected and -strict is set"
		}
	}
}

// Test scopes (Testing.Scope).
const (
	ScopeObservation = "observation"
	ScopeJob         = "job"
)
