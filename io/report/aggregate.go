package report

import (
	"fmt"
	"io"
	"math"
	"runtime"
	"slices"
	"sort"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/golang/geo/s1"
	"gonum.org/v1/gonum/mathext"

	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// An Aggregator gathers, in input order, what the summary and lines.csv
// say about a run: counts, residual statistics, one record per line
// (either direction) and the fit of residuals against distance. It holds
// one small pointer-free record per line, in the order first observed,
// and a few sums, never the observations.
type Aggregator struct {
	critical  float64
	tolerance reduce.DistanceSpec
	hasTol    bool
	control   LineSource
	// globalAlpha is the α of the global test of the variance factor.
	globalAlpha float64

	counts Counts
	// res are the residuals' statistics and histograms, [0] of the
	// unflagged observations and [1] of the flagged ones.
	res [2]residualAcc
	// worst are the worst flagged observations (MaxFlaggedObservations).
	worst worstObservations
	// The global test's sums: Σw² of every reduced observation and of the
	// unflagged ones, with their counts, and the outliers (|w| over the
	// critical value).
	sumW2, unflaggedW2 float64
	unflaggedN         int
	outliers           int
	firstRejects       []Reject // the first MaxFirstRejects rejected rows
	lines              lineAccs
	order              lineOrder // the lines' numbers (job.Result.LineID) in the order first observed
	flagged            []uint64  // bit i: line order.at(i) is flagged, once Finish has run
}

// lineOrder is a list of line numbers in chunks, so that growing never
// copies it (a copy would hold the old and the new array at once).
type lineOrder struct {
	chunks []*[lineAccChunk]int32
	n      int
}

func (o *lineOrder) add(id int32) {
	if o.n%lineAccChunk == 0 {
		o.chunks = append(o.chunks, new([lineAccChunk]int32))
	}
	o.chunks[o.n/lineAccChunk][o.n%lineAccChunk] = id
	o.n++
}

func (o *lineOrder) len() int { return o.n }

func (o *lineOrder) at(i int) int32 { return o.chunks[i/lineAccChunk][i%lineAccChunk] }

// lineAccs are the lines' records by number (job.Result.LineID), in
// chunks made as numbers come, so that growing never copies them. A
// record with no observations is a line not (yet) observed. A line
// observed more than once has a second record too (lineMore and its
// counts), numbered as they come and kept alike.
//
// A chunk keeps the records' 12-byte heads and their 32 bytes of sums in
// two arrays, so that a record costs 44 bytes, not the 48 of one struct
// padded to its eight-byte alignment.
type lineAccs struct {
	chunks []*lineAccBlock
	more   []*lineMoreBlock
	nMore  uint32
}

type lineAccBlock struct {
	head [lineAccChunk]lineHead
	sums [lineAccChunk]lineFirst
}

type lineMoreBlock struct {
	more   [lineAccChunk]lineMore
	counts [lineAccChunk]lineCounts
}

const lineAccChunk = 4096

// get returns line id's record, making its chunk if need be.
func (s *lineAccs) get(id int32) lineAcc {
	c := int(id) / lineAccChunk
	for c >= len(s.chunks) {
		s.chunks = append(s.chunks, nil)
	}
	if s.chunks[c] == nil {
		s.chunks[c] = new(lineAccBlock)
	}
	b, i := s.chunks[c], int(id)%lineAccChunk
	return lineAcc{&b.head[i], &b.sums[i]}
}

// moreOf is the second record of l and its counts, nil while l has one
// observation (and Add found it need not keep its |w|).
func (s *lineAccs) moreOf(l lineAcc) (*lineMore, *lineCounts) {
	i := l.bits & lineState
	if i < stateMore {
		return nil, nil
	}
	i -= stateMore
	b := s.more[i/lineAccChunk]
	return &b.more[i%lineAccChunk], &b.counts[i%lineAccChunk]
}

// addMore gives l, which has one observation, its second record: the
// sums and counts of that one observation, as Aggregator.Add would have
// made them, and its |w|, absW. Past MaxLinesObservedMore records it
// returns nil and ErrTooManyLines.
func (s *lineAccs) addMore(l lineAcc, absW float64) (*lineMore, *lineCounts, error) {
	i := s.nMore
	if i > lineState-stateMore {
		return nil, nil, ErrTooManyLines
	}
	if i%lineAccChunk == 0 {
		s.more = append(s.more, new(lineMoreBlock))
	}
	s.nMore++
	c := lineCounts{dirN: [2]int32{1, 0}}
	if l.bits&lineState == stateOneFlagged {
		c.flagged = 1
	}
	l.bits = l.bits&^lineState | (i + stateMore)
	b := s.more[i/lineAccChunk]
	m := &b.more[i%lineAccChunk]
	*m = lineMore{min: l.mean, max: l.mean, maxAbsW: absW}
	if c.flagged == 0 {
		m.unflaggedMean = l.mean
	}
	b.counts[i%lineAccChunk] = c
	return m, &b.counts[i%lineAccChunk], nil
}

// MaxLinesObservedMore is how many lines observed more than once (or
// whose one |w| must be kept) the summary can hold: the record number
// fits in a line's 29 state bits.
const MaxLinesObservedMore = lineState - stateMore + 1

// ErrTooManyLines is Aggregator.Add's error past MaxLinesObservedMore.
var ErrTooManyLines = fmt.Errorf("the job has more than %d lines observed more than once, more than the summary can hold: split it into jobs of fewer lines", MaxLinesObservedMore)

// counts are l's observations either way and its flagged ones.
func (s *lineAccs) counts(l lineAcc) lineCounts {
	switch l.bits & lineState {
	case stateNone:
		return lineCounts{}
	case stateOne:
		return lineCounts{dirN: [2]int32{1, 0}}
	case stateOneFlagged:
		return lineCounts{dirN: [2]int32{1, 0}, flagged: 1}
	}
	_, c := s.moreOf(l)
	return *c
}

// at returns the record of the line at position i in the order first
// observed, and its number.
func (a *Aggregator) at(i int) (lineAcc, int32) {
	id := a.order.at(i)
	b, j := a.lines.chunks[id/lineAccChunk], id%lineAccChunk
	return lineAcc{&b.head[j], &b.sums[j]}, id
}

// A LineSource gives the control a run reduced against: a line's
// geometry by its number and end points (job.Result's LineID and Points),
// and a point's id and mark height on the reduction datum by its number;
// *job.Plan is one.
type LineSource interface {
	KnownLine(id, from, to int32) (reduce.Line, bool)
	PointID(i int32) string
	MarkHeight(i int32) float64
}

// NewAggregator prepares for a job with the given critical value for |w|
// and tolerance (hasTolerance false: no tolerance test); the lines' control
// geometry comes from control, when the summary is made.
func NewAggregator(critical float64, tolerance reduce.DistanceSpec, hasTolerance bool, control LineSource) *Aggregator {
	return &Aggregator{critical: critical, tolerance: tolerance, hasTol: hasTolerance, control: control, globalAlpha: DefaultGlobalTestAlpha}
}

// DefaultGlobalTestAlpha is the α of the global test unless
// SetGlobalTestAlpha says otherwise: 5 %, common practice for the
// overall test of a network.
const DefaultGlobalTestAlpha = 0.05

// SetGlobalTestAlpha sets the α of the global test of the variance
// factor (0 < α < 1).
func (a *Aggregator) SetGlobalTestAlpha(alpha float64) { a.globalAlpha = alpha }

// lineAcc accumulates one line's observations: its head and first sums,
// 44 bytes in the chunk. What only a line observed more than once needs
// is in its lineMore and lineCounts (68 bytes more): of one observation,
// the counts are 1 and 0 and whether it is flagged (a state of the head's
// bits), the mean is the arc, its smallest and largest and the mean of
// the unflagged, the sum of squared deviations is 0, and the largest |w|
// is its |w|, which oneAbsW computes again from the arc, σ and the
// control (Add keeps it in a lineMore where that would not give it to
// the bit).
type lineAcc struct {
	*lineHead
	*lineFirst
}

// lineHead is a line's ends and bits.
type lineHead struct {
	from, to int32 // point numbers, in the direction first observed
	// bits: lineOutlier, lineOutOfTol, lineHeightOff, and under lineState
	// stateNone, stateOne, stateOneFlagged or stateMore + the number of
	// the line's lineMore.
	bits uint32
}

// lineFirst are a line's sums that every observed line has.
type lineFirst struct {
	mean   float64 // Welford: mean reduced arc
	sumVar float64 // Σσ² of the observations
	// The sums for reciprocal zenith angles of the direction first
	// observed (lineMore has the other's): mark-to-mark zenith angle
	// (rad) and chord S3 (m).
	zenith, slope float64
}

// lineCounts are the observations of a line observed more than once.
type lineCounts struct {
	dirN    [2]int32 // observations from → to as first seen, and the other way
	flagged int32    // observations flagged (Aggregator.obsFlagged)
}

// lineMore is the rest of a line's sums once it has two observations.
type lineMore struct {
	m2            float64 // Welford: sum of squared deviations of the arcs
	unflaggedMean float64 // mean reduced arc of the unflagged observations
	min, max      float64
	// The other direction's sums for reciprocal zenith angles.
	zenith, slope float64
	maxAbsW       float64 // the largest |w|
}

// oneAbsW is |w| of an observation as reduce.CompareDistance makes it,
// w = (arc − D)/σ, from its arc, σ² and the control's distance D: that of
// a line observed once from its mean (the arc itself, 0 + arc/1) and
// Σσ² (σ·σ). Aggregator.Add checks that it gives the observation's own
// |w| to the bit before it keeps none.
func oneAbsW(arc, sumVar, d float64) float64 {
	return math.Abs((arc - d) / math.Sqrt(sumVar))
}

// lineHead.bits.
const (
	lineOutlier   = 1 << 31 // an observation's |w| is over the critical value
	lineOutOfTol  = 1 << 30 // an observation is over the job's tolerance
	lineHeightOff = 1 << 29 // an observation's target height disagrees with its zenith angle
	lineState     = 1<<29 - 1

	stateNone       = 0 // not (yet) observed
	stateOne        = 1 // one observation, not flagged
	stateOneFlagged = 2 // one observation, flagged
	stateMore       = 3 // and up: more than one observation, lineMore number state − stateMore
)

// lineSums are a line's sums, whether it has a lineMore or not.
type lineSums struct {
	m2, unflaggedMean, min, max, maxAbsW float64
	zenith, slope                        [2]float64
}

// sums are l's sums, d the control's distance of the line.
func (s *lineAccs) sums(l lineAcc, d float64) lineSums {
	m, _ := s.moreOf(l)
	if m == nil {
		return lineSums{unflaggedMean: l.mean, min: l.mean, max: l.mean, maxAbsW: oneAbsW(l.mean, l.sumVar, d),
			zenith: [2]float64{l.zenith}, slope: [2]float64{l.slope}}
	}
	return lineSums{m2: m.m2, unflaggedMean: m.unflaggedMean, min: m.min, max: m.max, maxAbsW: m.maxAbsW,
		zenith: [2]float64{l.zenith, m.zenith}, slope: [2]float64{l.slope, m.slope}}
}

// controlDistance is the control's distance of line id as l has it.
func (a *Aggregator) controlDistance(id int32, l lineAcc) float64 {
	ctl, _ := a.control.KnownLine(id, l.from, l.to) // every line reduced is known
	return ctl.Inverse.Distance
}

// residualAcc gathers the statistics of one set of observations'
// ellipsoid and grid residuals.
type residualAcc struct {
	ell, grid         statsAcc
	ellHist, gridHist residualHistogram
}

// statsAcc accumulates residual statistics.
type statsAcc struct {
	n            int
	mean, m2, sq float64 // mm
	min, max     float64 // mm
	sumPPM       float64
	maxAbsW      float64
}

func (s *statsAcc) add(mm, ppm, w float64) {
	s.n++
	d := mm - s.mean
	s.mean += d / float64(s.n)
	s.m2 += d * (mm - s.mean)
	s.sq += mm * mm
	if s.n == 1 || mm < s.min {
		s.min = mm
	}
	if s.n == 1 || mm > s.max {
		s.max = mm
	}
	s.sumPPM += ppm
	s.maxAbsW = math.Max(s.maxAbsW, math.Abs(w))
}

// merged is the statistics of both s and o: Welford's sums joined as
// Chan, Golub & LeVeque (1979, "Updating formulae and a pairwise
// algorithm for computing sample variances") do, δ = mean_o − mean_s,
// m2 = m2_s + m2_o + δ² n_s n_o / n.
func (s *statsAcc) merged(o *statsAcc) statsAcc {
	if o.n == 0 {
		return *s
	}
	if s.n == 0 {
		return *o
	}
	n := s.n + o.n
	d := o.mean - s.mean
	return statsAcc{n: n, mean: s.mean + d*float64(o.n)/float64(n),
		m2: s.m2 + o.m2 + d*d*float64(s.n)*float64(o.n)/float64(n), sq: s.sq + o.sq,
		min: math.Min(s.min, o.min), max: math.Max(s.max, o.max), sumPPM: s.sumPPM + o.sumPPM, maxAbsW: math.Max(s.maxAbsW, o.maxAbsW)}
}

// stats are the statistics of s, with the median and robust σ read from
// the histogram h of the same residuals.
func (s *statsAcc) stats(h *residualHistogram) Stats {
	if s.n == 0 {
		return Stats{}
	}
	st := Stats{N: s.n, MeanMM: s.mean, RMSMM: math.Sqrt(s.sq / float64(s.n)), MinMM: s.min, MaxMM: s.max,
		MeanPPM: s.sumPPM / float64(s.n), MaxAbsW: s.maxAbsW}
	if s.n > 1 {
		st.StdDevMM = math.Sqrt(s.m2 / float64(s.n-1))
	}
	median, mad := h.medianMAD()
	st.MedianMM, st.RobustSigmaMM = median, madToSigma*mad
	return st
}

// residualStats are the statistics of every reduced observation and of
// the unflagged ones.
func (a *Aggregator) residualStats() ResidualStats {
	u, f := &a.res[0], &a.res[1]
	ell, grid := u.ell.merged(&f.ell), u.grid.merged(&f.grid)
	ellHist, gridHist := u.ellHist.merged(&f.ellHist), u.gridHist.merged(&f.gridHist)
	return ResidualStats{Ellipsoid: ell.stats(&ellHist), Grid: grid.stats(&gridHist),
		EllipsoidUnflagged: u.ell.stats(&u.ellHist), GridUnflagged: u.grid.stats(&u.gridHist)}
}

// Add takes one result, in input order. Its one error is
// ErrTooManyLines, after which the Aggregator cannot be used.
func (a *Aggregator) Add(r *job.Result) error {
	a.counts.Read++
	if r.Rejected {
		a.counts.Rejected++
		if len(a.firstRejects) < MaxFirstRejects {
			a.firstRejects = append(a.firstRejects, Reject{File: r.File, Line: r.LineNo, Row: strings.Clone(r.Raw), Reason: strings.Clone(r.Reason)})
		}
		return nil
	}
	a.counts.Reduced++
	red := &r.Reduction
	e := &red.EllipsoidResidual
	w2 := e.Standardized * e.Standardized
	a.sumW2 += w2
	if e.Outlier {
		a.outliers++
	}
	flagged := a.obsFlagged(red)
	acc := &a.res[0]
	if flagged {
		a.counts.Flagged++
		acc = &a.res[1]
		var tests int
		if e.Outlier {
			tests |= 1
		}
		if a.hasTol && e.OutOfTolerance {
			tests |= 2
		}
		if red.HeightCheck.Flagged {
			tests |= 4
		}
		a.worst.offer(r, int64(a.counts.Read), observationFlags[tests], a.control)
	} else {
		a.unflaggedW2 += w2
		a.unflaggedN++
	}
	mm, gridMM := e.Residual*1e3, red.GridResidual.Residual*1e3
	acc.ell.add(mm, e.PPM, e.Standardized)
	acc.grid.add(gridMM, red.GridResidual.PPM, red.GridResidual.Standardized)
	acc.ellHist.add(mm)
	acc.gridHist.add(gridMM)

	from, to := r.Points[0], r.Points[1]
	l := a.lines.get(r.LineID)
	dir := 0
	var m *lineMore // nil for the line's first observation
	var c *lineCounts
	if l.bits&lineState == stateNone {
		l.from, l.to = from, to
		a.order.add(r.LineID)
	} else {
		if l.from != from {
			dir = 1
		}
		if m, c = a.lines.moreOf(l); m == nil {
			var err error
			if m, c, err = a.lines.addMore(l, oneAbsW(l.mean, l.sumVar, a.controlDistance(r.LineID, l))); err != nil {
				return err
			}
		}
	}
	// n and nFlagged are the line's observations and flagged ones with
	// this one.
	n, nFlagged := int32(1), int32(0)
	if c == nil {
		l.bits |= stateOne
		if flagged {
			l.bits, nFlagged = l.bits&^lineState|stateOneFlagged, 1
		}
	} else {
		c.dirN[dir]++
		if flagged {
			c.flagged++
		}
		n, nFlagged = c.dirN[0]+c.dirN[1], c.flagged
	}
	arc := red.Geometry.Arc
	d := arc - l.mean
	l.mean += d / float64(n)
	if m != nil {
		m.m2 += d * (arc - l.mean)
		if arc < m.min {
			m.min = arc
		}
		if arc > m.max {
			m.max = arc
		}
	}
	if !flagged && m != nil {
		m.unflaggedMean += (arc - m.unflaggedMean) / float64(n-nFlagged)
	}
	l.sumVar += e.Sigma * e.Sigma
	absW := math.Abs(e.Standardized)
	if m != nil {
		m.maxAbsW = math.Max(m.maxAbsW, absW)
	} else if oneAbsW(l.mean, l.sumVar, a.controlDistance(r.LineID, l)) != math.Max(0, absW) {
		// The summary could not compute this |w| again: keep it.
		var err error
		if m, _, err = a.lines.addMore(l, math.Max(0, absW)); err != nil {
			return err
		}
	}
	if e.Outlier {
		l.bits |= lineOutlier
	}
	if a.hasTol && e.OutOfTolerance {
		l.bits |= lineOutOfTol
	}
	if red.HeightCheck.Flagged {
		l.bits |= lineHeightOff
	}
	// Reciprocal zenith angles give k only along one chord: reduce each
	// to the chord between the marks, z_m = z + (HT − HI) sin z / S
	// (raising the target by HT lowers z by HT sin z / S; raising the
	// instrument by HI raises it alike).
	z, slope := float64(r.Obs.Zenith), red.SecondVelocity.Distance
	zm := z + (r.Obs.TargetHeight-r.Obs.InstrumentHeight)*math.Sin(z)/slope
	if dir == 0 {
		l.zenith += zm
		l.slope += slope
	} else {
		m.zenith += zm
		m.slope += slope
	}
	return nil
}

// obsFlagged reports whether an observation is flagged: over the critical
// value, or over the job's tolerance when it has one. The counts, the
// lines' FlaggedObservations and the fit's leaving out all follow it.
func (a *Aggregator) obsFlagged(red *reduce.Reduction) bool {
	e := &red.EllipsoidResidual
	return e.Outlier || (a.hasTol && e.OutOfTolerance) || red.HeightCheck.Flagged
}

// Line flags.
const (
	FlagOutlier   = "outlier"   // an observation's |w| is over the critical value
	FlagTolerance = "tolerance" // an observation or the mean is over the job's tolerance
	FlagSpread    = "spread"    // the observations disagree more than their σ allows
	FlagHeight    = "height"    // an observation's target height disagrees with its zenith angle
)

// line is the summary of line number id, whose record is l.
func (a *Aggregator) line(id int32, l lineAcc, limits *spreadLimits) Line {
	ctl, _ := a.control.KnownLine(id, l.from, l.to) // every line reduced is known
	counts := a.lines.counts(l)
	n := counts.dirN[0] + counts.dirN[1]
	sums := a.lines.sums(l, ctl.Inverse.Distance)
	out := Line{From: a.control.PointID(l.from), To: a.control.PointID(l.to), Count: int(n), Reciprocal: counts.dirN[0] > 0 && counts.dirN[1] > 0,
		Geodesic: ctl.Inverse.Distance, Grid: ctl.GridDistance, MeanArc: l.mean, SpreadMM: (sums.max - sums.min) * 1e3,
		MaxAbsW: sums.maxAbsW}
	if n > 1 {
		out.StdDevMM = math.Sqrt(sums.m2/float64(n-1)) * 1e3
	}
	res := l.mean - out.Geodesic
	sigmaObs := math.Sqrt(l.sumVar / float64(n)) // typical σ of one observation
	sigmaMean := math.Sqrt(l.sumVar) / float64(n)
	out.ResidualMM, out.ResidualPPM, out.SigmaMM = res*1e3, res/out.Geodesic*1e6, sigmaMean*1e3
	out.FlaggedObservations = int(counts.flagged)
	if counts.flagged < n {
		out.UnflaggedResidualMM = (sums.unflaggedMean - out.Geodesic) * 1e3
	}
	if out.Reciprocal {
		nf, nb := float64(counts.dirN[0]), float64(counts.dirN[1])
		slope := (sums.slope[0]/nf + sums.slope[1]/nb) / 2
		rr, err := reduce.Reciprocal(slope, s1.Angle(sums.zenith[0]/nf), s1.Angle(sums.zenith[1]/nb), a.control.MarkHeight(l.from), ctl.Radius)
		if err == nil {
			k := rr.K
			out.K = &k
		}
	}
	if l.bits&lineOutlier != 0 {
		out.Flags = append(out.Flags, FlagOutlier)
	}
	tolFlag := l.bits&lineOutOfTol != 0
	if a.hasTol && !tolFlag {
		if t, err := a.tolerance.At(out.Geodesic); err == nil && math.Abs(res) > t {
			tolFlag = true
		}
	}
	if tolFlag {
		out.Flags = append(out.Flags, FlagTolerance)
	}
	if l.bits&lineHeightOff != 0 {
		out.Flags = append(out.Flags, FlagHeight)
	}
	// The scatter of a line's observations against their σ: (n − 1)s²/σ²
	// follows χ² with n − 1 degrees of freedom; the line is flagged above
	// its upper quantile at the α of the job's critical value. For two
	// observations this is |x₁ − x₂| > critical·√2·σ.
	if n > 1 && sigmaObs > 0 && sums.m2/(sigmaObs*sigmaObs) > limits.at(int(n)-1) {
		out.Flags = append(out.Flags, FlagSpread)
	}
	return out
}

// MaxListedLines bounds the lines a summary lists: a job of at most this
// many lines lists them all, flagged first; a larger one lists its flagged
// lines only, and of those at most this many, the worst by |w|. lines.csv
// has every line.
const MaxListedLines = 2000

// spreadLimit is the upper quantile of χ² with dof degrees of freedom at
// the α of the critical value, α = 2(1 − Φ(critical)) (0.001 for 3.29):
// 2·P⁻¹(dof/2, 1 − α), with P the regularised lower incomplete gamma
// function (mathext, without the matrix code that gonum's distuv brings
// into the binary).
func spreadLimit(critical float64, dof int) float64 {
	alpha := math.Erfc(critical / math.Sqrt2)
	return 2 * mathext.GammaIncRegInv(float64(dof)/2, 1-alpha)
}

// spreadLimits remembers spreadLimit by degrees of freedom, for one
// goroutine: a job's lines have few different counts.
type spreadLimits struct {
	critical float64
	byDOF    map[int]float64
}

func (s *spreadLimits) at(dof int) float64 {
	v, ok := s.byDOF[dof]
	if !ok {
		v = spreadLimit(s.critical, dof)
		if s.byDOF == nil {
			s.byDOF = map[int]float64{}
		}
		s.byDOF[dof] = v
	}
	return v
}

// Finish completes the summary's counts, statistics, lines (flagged
// first, each group in the order first observed; see MaxListedLines) and
// fit. It keeps a few numbers per line, not the lines. The lines are
// summed up on every core, in ranges whose results are joined in order,
// so the summary does not depend on the number of cores.
func (a *Aggregator) Finish(s *Summary) {
	s.Counts = a.counts
	s.FirstRejects = a.firstRejects
	if s.Testing.Scope == "" {
		s.Testing.Scope = ScopeObservation
	}
	s.Testing.Critical, s.Testing.AlphaPerObservation = a.critical, reduce.TwoSidedAlpha(a.critical)
	s.Testing.Outliers = a.outliers
	s.Testing.ExpectedByChance = float64(a.counts.Reduced) * reduce.TwoSidedAlpha(a.critical)
	if a.counts.Reduced > 0 {
		g := globalTest(a.sumW2, a.counts.Reduced, a.globalAlpha)
		if a.unflaggedN > 0 {
			g.UnflaggedN, g.UnflaggedVarianceFactor = a.unflaggedN, a.unflaggedW2/float64(a.unflaggedN)
		}
		s.Testing.Global = g
	}
	s.Counts.Lines = a.order.len()
	var stats sync.WaitGroup
	stats.Go(func() { s.Residuals = a.residualStats() })
	defer stats.Wait()
	var flaggedAt map[int32][]string // the listed flagged observations' places, by line
	s.FlaggedObservations, flaggedAt = a.flaggedObservations()
	s.FlaggedObservationsNotListed = a.counts.Flagged - len(s.FlaggedObservations)
	n := a.order.len()
	a.flagged = make([]uint64, (n+63)/64)
	// Ranges of whole words of the flagged bitset, one per part.
	parts := min(runtime.GOMAXPROCS(0), (n+finishGrain-1)/finishGrain)
	words := (len(a.flagged) + max(parts, 1) - 1) / max(parts, 1)
	fit := make([]fitPoint, n) // each part's lines from its first place on
	nfit := make([]int, parts)
	worsts := make([][]flaggedLine, parts)
	leftOutObs := make([]int, parts) // flagged observations each part leaves out of the fit
	var wg sync.WaitGroup
	for p := range parts {
		lo, hi := min(p*words*64, n), min((p+1)*words*64, n)
		wg.Go(func() {
			k, leftOut := lo, 0
			var worst []flaggedLine
			limits := spreadLimits{critical: a.critical}
			for i := lo; i < hi; i++ {
				rec, id := a.at(i)
				l := a.line(id, rec, &limits)
				pt, obs, ok := fitPointOf(&l)
				if ok {
					fit[k] = pt
					k++
				}
				leftOut += obs
				if l.Flagged() {
					a.flagged[i/64] |= 1 << (i % 64)
					worst = append(worst, flaggedLine{i, l.MaxAbsW})
				}
			}
			nfit[p], worsts[p], leftOutObs[p] = k-lo, worst, leftOut
		})
	}
	wg.Wait()
	// The parts' fit points close up, in order.
	m := 0
	for p := range parts {
		lo := p * words * 64
		m += copy(fit[m:], fit[lo:lo+nfit[p]])
	}
	fit = fit[:m]
	worst := slices.Concat(worsts...)
	s.Counts.FlaggedLines = len(worst)
	// At most MaxListedLines flagged lines are listed: the worst by |w|,
	// in the order first observed.
	worst = keepWorst(worst, MaxListedLines)
	s.Lines = make([]Line, 0, len(worst))
	limits := spreadLimits{critical: a.critical}
	for _, f := range worst {
		rec, id := a.at(f.i)
		l := a.line(id, rec, &limits)
		l.FlaggedAt = flaggedAt[id]
		s.Lines = append(s.Lines, l)
	}
	if n <= MaxListedLines {
		for i := range n {
			if !a.isFlagged(i) {
				rec, id := a.at(i)
				s.Lines = append(s.Lines, a.line(id, rec, &limits))
			}
		}
	}
	s.LinesNotListed = n - len(s.Lines)
	if s.Fit = fitLine(fit, a.critical); s.Fit != nil {
		s.Fit.LinesLeftOut = n - len(fit)
		for _, k := range leftOutObs {
			s.Fit.ObservationsLeftOut += k
		}
	}
}

// flaggedObservations are the worst flagged observations, worst first,
// and the places (file:line) of those of each line, worst first.
func (a *Aggregator) flaggedObservations() ([]FlaggedObservation, map[int32][]string) {
	obs, ids := a.worst.sorted()
	at := map[int32][]string{}
	for i := range obs {
		at[ids[i]] = append(at[ids[i]], obs[i].Where())
	}
	return obs, at
}

// finishGrain is the fewest lines worth a goroutine of Finish.
const finishGrain = 4096

// flaggedLine is a flagged line's position (in the aggregator, or in a
// summary's lines) and its worst |w|.
type flaggedLine struct {
	i int
	w float64
}

// keepWorst keeps the at most n lines with the largest |w|, the first
// observed of equals, in the order first observed (that of lines).
func keepWorst(lines []flaggedLine, n int) []flaggedLine {
	if len(lines) <= n {
		return lines
	}
	sort.SliceStable(lines, func(x, y int) bool { return lines[x].w > lines[y].w })
	lines = lines[:n]
	sort.Slice(lines, func(x, y int) bool { return lines[x].i < lines[y].i })
	return lines
}

// isFlagged reports whether line i (its position) is flagged, once Finish
// has run.
func (a *Aggregator) isFlagged(i int) bool { return a.flagged[i/64]&(1<<(i%64)) != 0 }

// EachLine calls write for every line, flagged ones first, then in the
// order first observed: the rows of lines.csv. The Line is reused after
// write returns. After Finish it computes each line once.
func (a *Aggregator) EachLine(write func(*Line) error) error {
	var l Line // one for all: write may keep a pointer, so l lives on the heap
	limits := spreadLimits{critical: a.critical}
	for pass := 0; pass < 2; pass++ {
		for i := range a.order.len() {
			rec, id := a.at(i)
			if a.flagged != nil {
				if a.isFlagged(i) != (pass == 0) {
					continue
				}
				l = a.line(id, rec, &limits)
			} else if l = a.line(id, rec, &limits); l.Flagged() != (pass == 0) {
				continue
			}
			if err := write(&l); err != nil {
				return err
			}
		}
	}
	return nil
}

// WriteLines writes lines.csv: its header, then EachLine's rows. After
// Finish, blocks of lines are formatted on every core and written in
// order; at most two blocks a core wait for the writer, and their buffers
// are reused.
func (a *Aggregator) WriteLines(w io.Writer, u Units) error {
	if _, err := w.Write(AppendHeader(nil, LinesHeader(u))); err != nil {
		return err
	}
	if a.flagged == nil {
		var buf []byte
		return a.EachLine(func(l *Line) error {
			buf = AppendLineRow(buf[:0], l, u)
			_, err := w.Write(buf)
			return err
		})
	}
	// Block k covers positions [k·lineBlock, (k+1)·lineBlock) of the
	// flagged lines (pass 0, the first blocks), then of the others.
	perPass := (a.order.len() + lineBlock - 1) / lineBlock
	blocks := 2 * perPass
	done := make([]chan []byte, blocks)
	for k := range done {
		done[k] = make(chan []byte, 1)
	}
	workers := runtime.GOMAXPROCS(0)
	ahead := make(chan struct{}, 2*workers) // blocks formatted, not yet written
	spare := make(chan []byte, 2*workers)   // written blocks' buffers, for reuse
	var next atomic.Int64
	stop := make(chan struct{})
	defer close(stop)
	for range workers {
		go func() {
			var l Line
			limits := spreadLimits{critical: a.critical}
			for {
				select {
				case ahead <- struct{}{}:
				case <-stop:
					return
				}
				k := int(next.Add(1) - 1)
				if k >= blocks {
					return
				}
				flagged := k < perPass
				lo := (k % perPass) * lineBlock
				var buf []byte
				select {
				case buf = <-spare:
				default:
					buf = make([]byte, 0, lineBlock*128)
				}
				for i := lo; i < min(lo+lineBlock, a.order.len()); i++ {
					if a.isFlagged(i) == flagged {
						rec, id := a.at(i)
						l = a.line(id, rec, &limits)
						buf = AppendLineRow(buf, &l, u)
					}
				}
				done[k] <- buf
			}
		}()
	}
	for k := range blocks {
		buf := <-done[k]
		<-ahead
		if _, err := w.Write(buf); err != nil {
			return err
		}
		select {
		case spare <- buf[:0]:
		default:
		}
	}
	return nil
}

// lineBlock is the lines of one block of WriteLines.
const lineBlock = 1024
