package report

import (
	"math"
	"sort"

	"github.com/golang/geo/s1"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// An Aggregator gathers, in input order, what the summary and lines.csv
// say about a run: counts, residual statistics, one record per line
// (either direction) and the fit of residuals against distance. It holds
// one record per line and a few sums, never the observations.
type Aggregator struct {
	critical  float64
	tolerance reduce.DistanceSpec
	hasTol    bool

	counts    Counts
	ell, grid statsAcc
	lines     []*lineAcc // by job.Result.LineID
	chi2      map[int]float64
	order     []*lineAcc
}

// NewAggregator prepares for a job with the given critical value for |w|
// and tolerance (hasTolerance false: no tolerance test).
func NewAggregator(critical float64, tolerance reduce.DistanceSpec, hasTolerance bool) *Aggregator {
	return &Aggregator{critical: critical, tolerance: tolerance, hasTol: hasTolerance}
}

// lineAcc accumulates one line's observations.
type lineAcc struct {
	from, to string
	geodesic float64
	grid     float64
	radius   float64
	n        int
	mean, m2 float64 // Welford: mean reduced arc and sum of squared deviations
	gridMean float64 // mean reduced grid distance
	min, max float64
	sumVar   float64 // Σσ² of the observations
	maxAbsW  float64
	outliers int
	outOfTol int
	dir      [2]dirAcc // [0]: from → to as first seen; [1]: the other way
}

// dirAcc holds one direction's sums for reciprocal zenith angles.
type dirAcc struct {
	n                  int
	zenith, slope, hgt float64 // sums of mark-to-mark zenith (rad), chord S3 and height of mark A
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

func (s *statsAcc) stats() Stats {
	if s.n == 0 {
		return Stats{}
	}
	st := Stats{N: s.n, MeanMM: s.mean, RMSMM: math.Sqrt(s.sq / float64(s.n)), MinMM: s.min, MaxMM: s.max,
		MeanPPM: s.sumPPM / float64(s.n), MaxAbsW: s.maxAbsW}
	if s.n > 1 {
		st.StdDevMM = math.Sqrt(s.m2 / float64(s.n-1))
	}
	return st
}

// Add takes one result, in input order.
func (a *Aggregator) Add(r *job.Result) {
	a.counts.Read++
	if r.Rejected {
		a.counts.Rejected++
		return
	}
	a.counts.Reduced++
	red := &r.Reduction
	e := &red.EllipsoidResidual
	if e.Outlier || (a.hasTol && e.OutOfTolerance) {
		a.counts.Flagged++
	}
	a.ell.add(e.Residual*1e3, e.PPM, e.Standardized)
	a.grid.add(red.GridResidual.Residual*1e3, red.GridResidual.PPM, red.GridResidual.Standardized)

	for int(r.LineID) >= len(a.lines) {
		a.lines = append(a.lines, nil)
	}
	l, dir := a.lines[r.LineID], 0
	switch {
	case l == nil:
		l = &lineAcc{from: r.Obs.From, to: r.Obs.To, geodesic: r.Line.Inverse.Distance, grid: r.Line.GridDistance, radius: r.Line.Radius}
		a.lines[r.LineID] = l
		a.order = append(a.order, l)
	case l.from != r.Obs.From:
		dir = 1
	}
	arc := red.Geometry.Arc
	l.n++
	d := arc - l.mean
	l.mean += d / float64(l.n)
	l.m2 += d * (arc - l.mean)
	if l.n == 1 || arc < l.min {
		l.min = arc
	}
	if l.n == 1 || arc > l.max {
		l.max = arc
	}
	l.gridMean += (red.Grid.GridDistance - l.gridMean) / float64(l.n)
	l.sumVar += e.Sigma * e.Sigma
	l.maxAbsW = math.Max(l.maxAbsW, math.Abs(e.Standardized))
	if e.Outlier {
		l.outliers++
	}
	if a.hasTol && e.OutOfTolerance {
		l.outOfTol++
	}
	// Reciprocal zenith angles give k only along one chord: reduce each
	// to the chord between the marks, z_m = z + (HT − HI) sin z / S
	// (raising the target by HT lowers z by HT sin z / S; raising the
	// instrument by HI raises it alike).
	dd := &l.dir[dir]
	z, slope := float64(r.Obs.Zenith), red.SecondVelocity.Distance
	dd.n++
	dd.zenith += z + (r.Obs.TargetHeight-r.Obs.InstrumentHeight)*math.Sin(z)/slope
	dd.slope += slope
	dd.hgt += red.Heights.MarkA.Height
}

// Line flags.
const (
	FlagOutlier   = "outlier"   // an observation's |w| is over the critical value
	FlagTolerance = "tolerance" // an observation or the mean is over the job's tolerance
	FlagSpread    = "spread"    // the observations disagree more than their σ allows
)

func (a *Aggregator) line(l *lineAcc) Line {
	out := Line{From: l.from, To: l.to, Count: l.n, Reciprocal: l.dir[0].n > 0 && l.dir[1].n > 0,
		Geodesic: l.geodesic, Grid: l.grid, MeanArc: l.mean, SpreadMM: (l.max - l.min) * 1e3,
		MaxAbsW: l.maxAbsW}
	if l.n > 1 {
		out.StdDevMM = math.Sqrt(l.m2/float64(l.n-1)) * 1e3
	}
	res := l.mean - l.geodesic
	sigmaObs := math.Sqrt(l.sumVar / float64(l.n)) // typical σ of one observation
	sigmaMean := math.Sqrt(l.sumVar) / float64(l.n)
	out.ResidualMM, out.ResidualPPM, out.SigmaMM = res*1e3, res/l.geodesic*1e6, sigmaMean*1e3
	out.gridResidualMM = (l.gridMean - l.grid) * 1e3
	if out.Reciprocal {
		f, b := l.dir[0], l.dir[1]
		slope := (f.slope/float64(f.n) + b.slope/float64(b.n)) / 2
		rr, err := reduce.Reciprocal(slope, s1.Angle(f.zenith/float64(f.n)), s1.Angle(b.zenith/float64(b.n)), f.hgt/float64(f.n), l.radius)
		if err == nil {
			k := rr.K
			out.K = &k
		}
	}
	if l.outliers > 0 {
		out.Flags = append(out.Flags, FlagOutlier)
	}
	tolFlag := l.outOfTol > 0
	if a.hasTol && !tolFlag {
		if t, err := a.tolerance.At(l.geodesic); err == nil && math.Abs(res) > t {
			tolFlag = true
		}
	}
	if tolFlag {
		out.Flags = append(out.Flags, FlagTolerance)
	}
	// The scatter of a line's observations against their σ: (n − 1)s²/σ²
	// follows χ² with n − 1 degrees of freedom; the line is flagged above
	// its upper quantile at the α of the job's critical value. For two
	// observations this is |x₁ − x₂| > critical·√2·σ.
	if l.n > 1 && sigmaObs > 0 && l.m2/(sigmaObs*sigmaObs) > a.spreadLimit(l.n-1) {
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
// the α of the critical value, α = 2(1 − Φ(critical)) (0.001 for 3.29),
// remembered per dof.
func (a *Aggregator) spreadLimit(dof int) float64 {
	if v, ok := a.chi2[dof]; ok {
		return v
	}
	alpha := math.Erfc(a.critical / math.Sqrt2)
	v := distuv.ChiSquared{K: float64(dof)}.Quantile(1 - alpha)
	if a.chi2 == nil {
		a.chi2 = map[int]float64{}
	}
	a.chi2[dof] = v
	return v
}

// Finish completes the summary's counts, statistics, lines (flagged
// first, each group in the order first observed; see MaxListedLines) and
// fit. It keeps a few numbers per line, not the lines.
func (a *Aggregator) Finish(s *Summary) {
	s.Counts = a.counts
	s.Counts.Lines = len(a.order)
	s.Residuals = ResidualStats{Ellipsoid: a.ell.stats(), Grid: a.grid.stats()}
	ell := make([]float64, 0, len(a.order))
	grid := make([]float64, 0, len(a.order))
	fit := make([]fitPoint, 0, len(a.order))
	type flagged struct {
		i int // position in a.order
		w float64
	}
	var worst []flagged
	for i, acc := range a.order {
		l := a.line(acc)
		ell = append(ell, l.ResidualMM)
		grid = append(grid, l.gridResidualMM)
		if l.SigmaMM > 0 {
			fit = append(fit, fitPoint{x: l.Geodesic, y: l.ResidualMM, w: 1 / (l.SigmaMM * l.SigmaMM)})
		}
		if l.Flagged() {
			worst = append(worst, flagged{i, l.MaxAbsW})
		}
	}
	s.Counts.FlaggedLines = len(worst)
	// At most MaxListedLines flagged lines are listed: the worst by |w|,
	// in the order first observed.
	if len(worst) > MaxListedLines {
		sort.SliceStable(worst, func(x, y int) bool { return worst[x].w > worst[y].w })
		worst = worst[:MaxListedLines]
		sort.Slice(worst, func(x, y int) bool { return worst[x].i < worst[y].i })
	}
	s.Lines = make([]Line, 0, len(worst))
	for _, f := range worst {
		s.Lines = append(s.Lines, a.line(a.order[f.i]))
	}
	if len(a.order) <= MaxListedLines {
		for _, acc := range a.order {
			if l := a.line(acc); !l.Flagged() {
				s.Lines = append(s.Lines, l)
			}
		}
	}
	s.LinesNotListed = len(a.order) - len(s.Lines)
	s.Residuals.Ellipsoid.MedianMM = median(ell)
	s.Residuals.Grid.MedianMM = median(grid)
	s.Fit = fitLine(fit, a.critical)
}

// EachLine calls write for every line, flagged ones first, then in the
// order first observed: the rows of lines.csv.
func (a *Aggregator) EachLine(write func(*Line) error) error {
	for pass := 0; pass < 2; pass++ {
		for _, acc := range a.order {
			l := a.line(acc)
			if l.Flagged() != (pass == 0) {
				continue
			}
			if err := write(&l); err != nil {
				return err
			}
		}
	}
	return nil
}

// median is the median of v; it sorts v.
func median(v []float64) float64 {
	if len(v) == 0 {
		return 0
	}
	sort.Float64s(v)
	n := len(v)
	if n%2 == 1 {
		return v[n/2]
	}
	return (v[n/2-1] + v[n/2]) / 2
}
