package report

import (
	"container/heap"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// MaxFlaggedObservations bounds Summary.FlaggedObservations: the worst of
// a job's flagged observations; reduced.csv has them all.
const MaxFlaggedObservations = 200

// FlaggedObservation is one flagged reduced observation as the report
// lists it: where it is, its residual and which tests flagged it.
// Lengths are metres unless a name says mm or ppm.
type FlaggedObservation struct {
	File       string `json:"file"`
	Line       int    `json:"line"`
	ObsID      string `json:"obs_id,omitempty"`
	From       string `json:"from"`
	To         string `json:"to"`
	Instrument string `json:"instrument"`
	// Geodesic is the line's distance from control.
	Geodesic float64 `json:"geodesic_m"`
	// ResidualMM and ResidualPPM are its reduced ellipsoid distance −
	// the geodesic from control, SigmaMM the residual's σ and W the
	// standardized residual.
	ResidualMM  float64 `json:"residual_mm"`
	ResidualPPM float64 `json:"residual_ppm"`
	SigmaMM     float64 `json:"sigma_mm"`
	W           float64 `json:"w"`
	// Flags are the tests it failed: "outlier" (|w| over the critical
	// value), "tolerance" (its residual over the job's tolerance),
	// "height" (its target height disagrees with its zenith angle).
	Flags []string `json:"flags"`
	// HeightChecked says the target's booked height was compared with
	// the one its zenith angle implies (the heights route; on the zenith
	// route the zenith angle gives the height and there is nothing to
	// compare). HeightDifference is booked − implied, HeightSigma its σ
	// and HeightW their ratio.
	HeightChecked    bool    `json:"height_checked"`
	HeightDifference float64 `json:"height_difference_m"`
	HeightSigma      float64 `json:"height_sigma_m"`
	HeightW          float64 `json:"height_w"`
	// Horizontal says the row gave a horizontal and vertical distance,
	// whose zenith angle (atan2(hd, vd)) the height check used.
	Horizontal bool `json:"horizontal,omitempty"`
}

// Severity is what orders the flagged observations, worst first: the
// larger of |w| and the height check's |w|.
func (f *FlaggedObservation) Severity() float64 { return math.Max(math.Abs(f.W), math.Abs(f.HeightW)) }

// Where is the observation's place as file:line.
func (f *FlaggedObservation) Where() string { return f.File + ":" + strconv.Itoa(f.Line) }

// worstObservations keeps the MaxFlaggedObservations worst flagged
// observations seen, by Severity, the first met of equals: a min-heap
// whose root is the first to leave. It holds copies of every string, so
// a row's memory may be reused once Add returns.
type worstObservations struct {
	keep []worstEntry
}

type worstEntry struct {
	severity float64
	seq      int64 // order met: of equals, the later leaves first
	lineID   int32
	obs      FlaggedObservation
}

func (w *worstObservations) Len() int { return len(w.keep) }
func (w *worstObservations) Less(i, j int) bool {
	a, b := &w.keep[i], &w.keep[j]
	if a.severity != b.severity {
		return a.severity < b.severity
	}
	return a.seq > b.seq
}
func (w *worstObservations) Swap(i, j int) { w.keep[i], w.keep[j] = w.keep[j], w.keep[i] }
func (w *worstObservations) Push(x any)    { w.keep = append(w.keep, x.(worstEntry)) }
func (w *worstObservations) Pop() any {
	e := w.keep[len(w.keep)-1]
	w.keep = w.keep[:len(w.keep)-1]
	return e
}

// offer considers a flagged observation: its severity is computed first,
// and the copy made only when it is kept.
func (w *worstObservations) offer(r *job.Result, seq int64, flags []string, control LineSource) {
	red := &r.Reduction
	e, hc := &red.EllipsoidResidual, &red.HeightCheck
	severity := math.Max(math.Abs(e.Standardized), math.Abs(hc.Standardized))
	if math.IsNaN(severity) {
		severity = math.Inf(1) // a NaN would break the heap's order; it would be the worst
	}
	if len(w.keep) == MaxFlaggedObservations && severity <= w.keep[0].severity {
		return
	}
	ent := worstEntry{severity: severity, seq: seq, lineID: r.LineID, obs: FlaggedObservation{
		File: strings.Clone(r.Obs.File), Line: r.Obs.Line, ObsID: strings.Clone(r.Obs.ObsID),
		From: control.PointID(r.Points[0]), To: control.PointID(r.Points[1]), Instrument: strings.Clone(r.Profile),
		Geodesic: e.Reference, ResidualMM: e.Residual * 1e3, ResidualPPM: e.PPM, SigmaMM: e.Sigma * 1e3, W: e.Standardized,
		Flags:         flags,
		HeightChecked: red.Geometry.Route != reduce.RouteZenith,
		Horizontal:    r.Obs.Horizontal,
	}}
	if ent.obs.HeightChecked {
		ent.obs.HeightDifference, ent.obs.HeightSigma, ent.obs.HeightW = hc.Difference, hc.Sigma, hc.Standardized
	}
	if len(w.keep) == MaxFlaggedObservations {
		w.keep[0] = ent
		heap.Fix(w, 0)
		return
	}
	heap.Push(w, ent)
}

// sorted returns the kept observations worst first (the first met of
// equals first), with their lines' numbers.
func (w *worstObservations) sorted() ([]FlaggedObservation, []int32) {
	keep := append([]worstEntry(nil), w.keep...)
	sort.Slice(keep, func(i, j int) bool {
		if keep[i].severity != keep[j].severity {
			return keep[i].severity > keep[j].severity
		}
		return keep[i].seq < keep[j].seq
	})
	obs := make([]FlaggedObservation, len(keep))
	ids := make([]int32, len(keep))
	for i := range keep {
		obs[i], ids[i] = keep[i].obs, keep[i].lineID
	}
	return obs, ids
}

// observationFlags are the Flags of a flagged observation by the tests it
// failed (bit 0 outlier, 1 tolerance, 2 height), shared by every
// observation that failed the same ones.
var observationFlags = func() (f [8][]string) {
	for i := range f {
		if i&1 != 0 {
			f[i] = append(f[i], FlagOutlier)
		}
		if i&2 != 0 {
			f[i] = append(f[i], FlagTolerance)
		}
		if i&4 != 0 {
			f[i] = append(f[i], FlagHeight)
		}
	}
	return f
}()
