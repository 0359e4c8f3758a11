package report

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mathext"
)

// FitResiduals fits residual = constant + scale · distance to the lines
// (see fitPointOf for what each line brings) by weighted least squares,
// removing the worst line while its standardized residual from the fit
// exceeds critical, so that a few blunders do not bend the fit while a
// systematic error common to all lines (a wrong prism constant, a wrong
// ppm) stays in it. σ of the terms come from the a posteriori variance
// factor, and a term is significant when it exceeds Student's t at the α
// of critical — and only when the lines are evidence enough (see
// Fit.Evidence). It returns nil with fewer than three lines or without a
// spread of distances.
//
//	[Σw   Σwx ] [c]   [Σwy ]
//	[Σwx  Σwx²] [s] = [Σwxy],  s0² = Σw v² / (n − 2),  C = s0² N⁻¹
func FitResiduals(lines []Line, critical float64) *Fit {
	var pts []fitPoint
	leftOutObs, leftOutLines := 0, 0
	for i := range lines {
		p, obs, ok := fitPointOf(&lines[i])
		leftOutObs += obs
		if !ok {
			leftOutLines++
			continue
		}
		pts = append(pts, p)
	}
	f := fitLine(pts, critical)
	if f != nil {
		f.ObservationsLeftOut, f.LinesLeftOut = leftOutObs, leftOutLines
	}
	return f
}

// fitPointOf is line l as a point of the fit, and how many of its
// observations it leaves out; ok is false when the line leaves the fit.
//
// Its residual is that of the mean of its unflagged observations when its
// observations disagree among themselves (the line carries FlagSpread):
// the flagged ones are then the blunders. When they agree, every
// observation counts, flagged or not: a flag then says the line as a
// whole is off its control, which is what the fit looks for (a wrong
// prism constant or ppm flags every line alike), and a single line off
// on its own is what the fit's own test removes. Leaving out flagged
// observations regardless would take out all of a job whose every line
// carries a wrong prism constant, and bias a smaller one towards zero. A
// line whose observations disagree and are all flagged leaves the fit.
//
// Its weight is 1/σ² of one of its observations, not of their mean: the
// errors its repeated sets share (centring, heights, the control, the
// constants) do not average out, so a line observed in 12 sets is hardly
// better known than a line observed once, and must not weigh 12 times as
// much. The mean of n sets has
//
//	σ²_line = σ²_shared + σ²_own / n,   σ²_own / n ≤ σ²_line ≤ σ²_shared + σ²_own = σ²_obs,
//
// and the split is not known per job; σ_obs bounds it and makes the weights
// independent of how many sets were observed. The a posteriori variance
// factor then scales the whole to the scatter the lines show, so the σ of
// the terms do not rest on the split either. σ_obs is √(Σσ²/n), SigmaMM·√n
// (SigmaMM is √(Σσ²)/n, of the mean): the observations of one line have
// nearly the same σ, so that of all of them stands for the unflagged ones.
func fitPointOf(l *Line) (p fitPoint, leftOut int, ok bool) {
	if !(l.SigmaMM > 0) || l.Count == 0 {
		return fitPoint{}, l.FlaggedObservations, false
	}
	y := l.ResidualMM
	if l.FlaggedObservations > 0 && l.hasFlag(FlagSpread) {
		if l.FlaggedObservations >= l.Count {
			return fitPoint{}, l.FlaggedObservations, false
		}
		y, leftOut = l.UnflaggedResidualMM, l.FlaggedObservations
	}
	sigmaObs := l.SigmaMM * math.Sqrt(float64(l.Count))
	return fitPoint{x: l.Geodesic, y: y, w: 1 / (sigmaObs * sigmaObs)}, leftOut, true
}

// hasFlag reports whether the line carries flag f.
func (l *Line) hasFlag(f string) bool {
	for _, g := range l.Flags {
		if g == f {
			return true
		}
	}
	return false
}

// maxFitRounds bounds the rounds of removing blunders from the fit.
const maxFitRounds = 64

// What the fit needs before it says anything of the instrument.
const (
	// MinFitLines is the fewest lines (after those left out and removed)
	// for a diagnosis: 6 lines leave 4 degrees of freedom, so that one bad
	// line can still be found by the test and leave 3 checks, and the
	// a posteriori σ of the terms is not a guess (its relative σ is
	// 1/√(2·dof), 35 % at 4).
	MinFitLines = 6
	// MinFitLengthRatio is the least ratio of the longest line to the
	// shortest in the fit. A constant moves every residual alike and a
	// scale in proportion to the length, so the two can be told apart
	// only over lengths that differ: for lines at two lengths x and r·x
	// in equal numbers and weights the correlation of the two estimates
	// is −(1 + r)/√(2(1 + r²)), −0.89 at r = 3 and −0.95 at r = 2.
	MinFitLengthRatio = 3.0
	// MaxFitLeverage bounds the leverage (hat value) h of every line in
	// the fit: h is the share of a line's own residual that its fitted
	// value follows, and above 0.5 the line largely decides the fit
	// itself — a single long line among short ones sets the scale alone,
	// and a blunder on it becomes a false diagnosis. The bound is Huber's
	// (Robust Statistics, Wiley, 1981, §7.2: h > 0.5 is to be avoided)
	// [memory]; Belsley, Kuh and Welsch's 2p/n (Regression Diagnostics,
	// 1980) [memory] would refuse most small jobs whose lengths are spread
	// well.
	MaxFitLeverage = 0.5
)

// Evidence values of a Fit: EvidenceEnough, or why there is not enough
// for a diagnosis.
const (
	EvidenceEnough       = "enough"
	EvidenceFewLines     = "too_few_lines" // fewer than MinFitLines lines in the fit
	EvidenceNarrowSpread = "narrow_spread" // longest under MinFitLengthRatio × shortest
	EvidenceHighLeverage = "high_leverage" // a line's leverage over MaxFitLeverage
)

// fitPoint is one line for the fit: distance m, residual mm, weight 1/mm².
type fitPoint struct{ x, y, w float64 }

// fitLine is FitResiduals on prepared points; it reorders pts.
func fitLine(pts []fitPoint, critical float64) *Fit {
	rejected := 0
	for round := 0; ; round++ {
		if len(pts) < 3 {
			return nil
		}
		var sw, swx, swxx, swy, swxy float64
		for _, p := range pts {
			sw += p.w
			swx += p.w * p.x
			swxx += p.w * p.x * p.x
			swy += p.w * p.y
			swxy += p.w * p.x * p.y
		}
		det := sw*swxx - swx*swx
		if !(det > 1e-12*sw*swxx) { // all lines of (nearly) one length
			return nil
		}
		c := (swxx*swy - swx*swxy) / det
		s := (sw*swxy - swx*swy) / det
		// fitVar is the fit's variance at x, relative to the a priori
		// σ; a line's leverage is w·fitVar.
		fitVar := func(x float64) float64 { return (swxx - 2*x*swx + x*x*sw) / det }
		// t is a line's standardized residual from the fit: |v| over the
		// σ of v, which is σ² less the fit's variance at x. It is
		// computed again where it is needed rather than kept, which would
		// cost 8 bytes a line at the summary's peak.
		t := func(p fitPoint) float64 {
			v := p.y - (c + s*p.x)
			if qv := 1/p.w - fitVar(p.x); qv > 0 {
				return math.Abs(v) / math.Sqrt(qv)
			}
			return 0
		}
		var vpv float64
		worstT := 0.0
		for _, p := range pts {
			v := p.y - (c + s*p.x)
			vpv += p.w * v * v
			worstT = math.Max(worstT, t(p))
		}
		n := len(pts)
		s0sq := vpv / float64(n-2)
		// Data snooping with the a priori σ (Baarda): the a posteriori
		// factor would be inflated by the very blunder being sought. Each
		// round drops the worst line and any nearly as bad (over half its
		// test value), so that many blunders cost few rounds; after 64
		// rounds the fit stands as it is.
		if worstT > critical && n > 3 && round < maxFitRounds {
			cut := math.Max(critical, worstT/2)
			kept := pts[:0]
			for _, p := range pts {
				if t(p) <= cut {
					kept = append(kept, p)
				}
			}
			rejected += n - len(kept)
			pts = kept
			continue
		}
		sc := math.Sqrt(s0sq * swxx / det)
		ss := math.Sqrt(s0sq*sw/det) * 1e3 // mm per m → ppm
		f := &Fit{N: n, LinesRejected: rejected, ConstantMM: c, ConstantSigma: sc, ScalePPM: s * 1e3, ScaleSigma: ss,
			VarianceFactor: s0sq, Critical: studentCritical(critical, n-2)}
		f.ShortestM, f.LongestM = math.Inf(1), 0
		for _, p := range pts {
			f.ShortestM, f.LongestM = math.Min(f.ShortestM, p.x), math.Max(f.LongestM, p.x)
			f.MaxLeverage = math.Max(f.MaxLeverage, p.w*fitVar(p.x))
		}
		switch {
		case n < MinFitLines:
			f.Evidence = EvidenceFewLines
		case !(f.LongestM >= MinFitLengthRatio*f.ShortestM):
			f.Evidence = EvidenceNarrowSpread
		case !(f.MaxLeverage <= MaxFitLeverage):
			f.Evidence = EvidenceHighLeverage
		default:
			f.Evidence = EvidenceEnough
		}
		if f.Evidence == EvidenceEnough {
			f.ConstantSignificant = sc > 0 && math.Abs(c)/sc > f.Critical
			f.ScaleSignificant = ss > 0 && math.Abs(f.ScalePPM)/ss > f.Critical
		}
		return f
	}
}

// studentCritical is the critical value of Student's t with dof degrees
// of freedom at the two-sided α of the normal critical value critical,
// α = 2(1 − Φ(critical)): a term over its σ from the a posteriori
// variance factor follows t, not the normal law, and with few lines its
// tails are far wider (8.61 at 4 degrees of freedom for α = 0.001, 3.29
// for the normal law). From P(|T| > t) = I_{ν/(ν+t²)}(ν/2, 1/2), with I
// the regularised incomplete beta function:
//
//	t = √(ν (1 − x) / x),   x = I⁻¹(ν/2, 1/2; α)
func studentCritical(critical float64, dof int) float64 {
	alpha := math.Erfc(critical / math.Sqrt2)
	nu := float64(dof)
	x := mathext.InvRegIncBeta(nu/2, 0.5, alpha)
	return math.Sqrt(nu * (1 - x) / x)
}

// EvidenceReason says in words why the fit is not evidence enough for a
// diagnosis; "" when it is.
func (f *Fit) EvidenceReason() string {
	switch f.Evidence {
	case EvidenceEnough:
		return ""
	case EvidenceFewLines:
		return fmt.Sprintf("only %d lines are in the fit, and a diagnosis needs at least %d", f.N, MinFitLines)
	case EvidenceNarrowSpread:
		return fmt.Sprintf("the lines run from %s m to %s m only, and telling a constant from a scale needs the longest at least %s times the shortest",
			fixed(f.ShortestM, 0), fixed(f.LongestM, 0), fixed(MinFitLengthRatio, 0))
	case EvidenceHighLeverage:
		return fmt.Sprintf("one line decides the fit by itself (leverage %s, over %s), as a single long line among short ones does",
			fixed(f.MaxLeverage, 2), fixed(MaxFitLeverage, 1))
	}
	return "the fit does not say whether its lines are evidence enough"
}

// LeftOut says in words what the fit left out, or "" when nothing.
func (f *Fit) LeftOut() string {
	var parts []string
	if f.ObservationsLeftOut > 0 {
		parts = append(parts, fmt.Sprintf("%d flagged observation(s) from the means of lines whose observations disagree", f.ObservationsLeftOut))
	}
	if f.LinesLeftOut > 0 {
		parts = append(parts, fmt.Sprintf("%d line(s) whose observations disagree and are all flagged", f.LinesLeftOut))
	}
	if f.LinesRejected > 0 {
		parts = append(parts, fmt.Sprintf("%d line(s) removed by the fit's own test", f.LinesRejected))
	}
	return strings.Join(parts, "; ")
}
