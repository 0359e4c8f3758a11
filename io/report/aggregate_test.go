package report

import (
	"fmt"
	"math"
	"testing"
	"unsafe"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// An observation whose target height disagrees with its zenith angle is
// flagged though its distance is clean: it counts among the flagged
// observations and gives its line the flag "height"; a line without one
// carries no flag.
func TestAggregatorCountsHeightFlags(t *testing.T) {
	a := NewAggregator(3.29, reduce.DistanceSpec{}, false, sameLine{Inverse: reduce.Inverse{Distance: 1000}, GridDistance: 1000, Radius: 6.4e6})
	add := func(lineID int32, heightFlagged bool) {
		r := job.Result{LineID: lineID, Points: [2]int32{0, 1}}
		r.Reduction.Geometry.Arc = 1000
		r.Reduction.Grid.GridDistance = 1000
		r.Reduction.EllipsoidResidual = reduce.ResidualResult{Sigma: 1e-3, Standardized: 0.5, Residual: 0.5e-3}
		r.Reduction.SecondVelocity.Distance = 1000
		r.Reduction.HeightCheck = reduce.HeightCheckResult{Difference: 0.5, Sigma: 0.025, Standardized: 20, Flagged: heightFlagged}
		a.Add(&r)
	}
	add(0, false)
	add(0, true)
	add(1, false)
	var s Summary
	a.Finish(&s)
	assert.Equal(t, 3, s.Counts.Reduced)
	assert.Equal(t, 1, s.Counts.Flagged, "the height-flagged observation")
	assert.Equal(t, 1, s.Counts.FlaggedLines)
	require.Len(t, s.Lines, 2)
	assert.Equal(t, []string{FlagHeight}, s.Lines[0].Flags, "the line of the height-flagged observation")
	assert.Empty(t, s.Lines[1].Flags)
}

// flaggedResult is a reduced observation on line id with residual res
// (metres), σ 1 mm, and a height check of w hw; it is an outlier when
// |res/σ| > 3.29 and height-flagged when |hw| is.
func flaggedResult(id int32, res, hw float64, file string, line int, obsID []byte) *job.Result {
	r := &job.Result{LineID: id, Points: [2]int32{0, 1}}
	r.Obs.File, r.Obs.Line, r.Obs.ObsID = file, line, unsafe.String(&obsID[0], len(obsID)) // the row's memory: overwritten after Add
	red := &r.Reduction
	red.Geometry.Arc, red.Grid.GridDistance, red.SecondVelocity.Distance = 1000+res, 1000+res, 1000
	w := res / 1e-3
	red.EllipsoidResidual = reduce.ResidualResult{Reference: 1000, Residual: res, PPM: res / 1000 * 1e6, Sigma: 1e-3, Standardized: w, Outlier: math.Abs(w) > 3.29}
	red.GridResidual = red.EllipsoidResidual
	red.HeightCheck = reduce.HeightCheckResult{Difference: hw * 0.02, Sigma: 0.02, Standardized: hw, Flagged: math.Abs(hw) > 3.29}
	return r
}

// The summary keeps the MaxFlaggedObservations worst flagged
// observations, worst first by the larger of |w| and the height check's
// |w|, with copies of the row's strings, and counts the others; each
// listed line names its flagged observations; the statistics are given
// with and without the flagged observations, and one blunder of 259 m
// moves the mean by metres but the median and robust σ by nothing.
func TestAggregatorFlaggedObservations(t *testing.T) {
	a := NewAggregator(3.29, reduce.DistanceSpec{}, false, sameLine{Inverse: reduce.Inverse{Distance: 1000}, GridDistance: 1000, Radius: 6.4e6})
	row := []byte("id-0000")
	add := func(r *job.Result) {
		a.Add(r)
		copy(row, "~~~~~~~") // the row's memory is reused once Add returns
	}
	// 40 clean observations on line 0, residuals -1.95 .. +1.95 mm.
	for i := range 40 {
		copy(row, fmt.Sprintf("c-%04d", i))
		add(flaggedResult(0, (float64(i)-19.5)*0.1e-3, 0, "a.csv", 2+i, row[:6]))
	}
	// 250 outliers on line 1, w 10 .. 259; one blunder of 259 m on line 2;
	// one observation flagged by its height alone (w 300) on line 3.
	for i := range 250 {
		copy(row, fmt.Sprintf("o-%04d", i))
		add(flaggedResult(1, float64(10+i)*1e-3, 0, "b.csv", 2+i, row[:6]))
	}
	copy(row, "slip-1")
	add(flaggedResult(2, 258.98, 0, "c.csv", 26, row[:6]))
	copy(row, "hgt-1")
	add(flaggedResult(3, 0.5e-3, 300, "c.csv", 30, row[:5]))

	var s Summary
	a.Finish(&s)
	require.Len(t, s.FlaggedObservations, MaxFlaggedObservations)
	assert.Equal(t, 252, s.Counts.Flagged)
	assert.Equal(t, 52, s.FlaggedObservationsNotListed)
	first := s.FlaggedObservations[0]
	assert.Equal(t, "c.csv:26", first.Where(), "the blunder is the worst")
	assert.Equal(t, "slip-1", first.ObsID, "a copy of the row's id")
	assert.Equal(t, []string{FlagOutlier}, first.Flags)
	assert.InDelta(t, 258980, first.ResidualMM, 1e-6)
	second := s.FlaggedObservations[1]
	assert.Equal(t, "c.csv:30", second.Where(), "the height-flagged observation, by its height check's w")
	assert.Equal(t, []string{FlagHeight}, second.Flags)
	assert.True(t, second.HeightChecked)
	assert.InDelta(t, 6.0, second.HeightDifference, 1e-12, "booked − implied, m")
	for i := 2; i < len(s.FlaggedObservations); i++ {
		o := s.FlaggedObservations[i]
		assert.Equal(t, fmt.Sprintf("o-%04d", 249-(i-2)), o.ObsID, "worst first")
		assert.Equal(t, "B", o.To)
	}
	for _, l := range s.Lines {
		switch l.FlaggedObservations {
		case 0:
			assert.Empty(t, l.FlaggedAt)
		case 250:
			require.Len(t, l.FlaggedAt, 198, "the listed ones of line 1")
			assert.Equal(t, "b.csv:251", l.FlaggedAt[0], "worst first")
		default:
			assert.Len(t, l.FlaggedAt, l.FlaggedObservations)
		}
	}

	ell, clean := s.Residuals.Ellipsoid, s.Residuals.EllipsoidUnflagged
	assert.Equal(t, 292, ell.N)
	assert.Equal(t, 40, clean.N)
	assert.InDelta(t, 0, clean.MeanMM, 1e-9, "the clean residuals' mean, mm")
	// Their RMS: sqrt(Σ((i − 19.5)·0.1)²/40) = 0.1·sqrt((40² − 1)/12) = 1.1543 mm.
	assert.InDelta(t, 0.1*math.Sqrt((40*40-1)/12.0), clean.RMSMM, 1e-9)
	assert.InDelta(t, 0, clean.MedianMM, 0.005)
	// Their MAD: the deviations 0.05, 0.15, … 1.95 mm twice; the median of
	// 40 of them is 1.0 mm; times 1.4826.
	assert.InDelta(t, 1.4826, clean.RobustSigmaMM, 0.015)
	assert.Greater(t, ell.MeanMM, 800.0, "the blunder swamps the mean of all")
	// Of all 292 in order: the 40 clean ones and the height-flagged one
	// (0.5 mm) are ranks 0 … 40, the outliers of 10 … 259 mm ranks
	// 41 … 290, so the median, the mean of ranks 145 and 146, is that of
	// the outliers of 114 and 115 mm: 114.5 mm, read within 0.05 %. (That
	// most of this job is flagged moves it; the clean ones' median above
	// is the robust reading.)
	assert.InDelta(t, 114.5, ell.MedianMM, 114.5*0.0005)
}

// A rejected row's reason and the row as written are copied.
func TestAggregatorCopiesRejects(t *testing.T) {
	a := NewAggregator(3.29, reduce.DistanceSpec{}, false, sameLine{})
	raw := []byte("8,P2,Q9,412.0071")
	reason := []byte("x.csv:9: target \"Q9\" is not in the points file")
	a.Add(&job.Result{Rejected: true, File: "x.csv", LineNo: 9, Raw: string(raw), Reason: string(reason)})
	var s Summary
	a.Finish(&s)
	require.Len(t, s.FirstRejects, 1)
	assert.Equal(t, Reject{File: "x.csv", Line: 9, Row: "8,P2,Q9,412.0071", Reason: `x.csv:9: target "Q9" is not in the points file`}, s.FirstRejects[0])
}

// A line observed once keeps no |w| when the summary can compute it again
// to the bit from the arc, σ and the control's distance, as
// reduce.CompareDistance makes it; one whose w is not that keeps it in a
// second record. Either way lines.csv's max |w| is the observation's own,
// and stays the largest once the line has a second observation.
func TestAggregatorComputesOrKeepsW(t *testing.T) {
	const d = 1234.5678 // the control's distance
	a := NewAggregator(3.29, reduce.DistanceSpec{}, false, sameLine{Inverse: reduce.Inverse{Distance: d}, GridDistance: d, Radius: 6.4e6})
	add := func(id int32, from int32, arc, sigma float64, w *float64) float64 {
		r := &job.Result{LineID: id, Points: [2]int32{from, 1 - from}}
		red := &r.Reduction
		red.Geometry.Arc, red.Grid.GridDistance, red.SecondVelocity.Distance = arc, arc, arc
		e, err := reduce.CompareDistance(arc, d, sigma, reduce.Test{Critical: 3.29, Tolerance: edmSpec})
		require.NoError(t, err)
		if w != nil {
			e.Standardized = *w // made otherwise than by the chain
		}
		red.EllipsoidResidual = e
		a.Add(r)
		return math.Abs(e.Standardized)
	}
	w0 := add(0, 0, d+0.0021, 0.0013, nil)
	assert.Equal(t, uint32(0), a.lines.nMore, "line 0 keeps no |w|")
	other := 2.5
	w1 := add(1, 0, d+0.0021, 0.0013, &other)
	assert.Equal(t, uint32(1), a.lines.nMore, "line 1 keeps its |w|")
	add(0, 1, d-0.0002, 0.0011, nil) // a smaller |w|, the other way
	add(2, 0, d-0.0017, 0.0009, nil)
	w2 := add(2, 1, d+0.0031, 0.0012, nil) // a larger one
	var s Summary
	a.Finish(&s)
	require.Len(t, s.Lines, 3)
	for i, want := range []float64{w0, w1, w2} {
		assert.Equal(t, math.Float64bits(want), math.Float64bits(s.Lines[i].MaxAbsW), "line %d: max |w| %v, want %v", i, s.Lines[i].MaxAbsW, want)
	}
	assert.NotEqual(t, w0, w1)
}
