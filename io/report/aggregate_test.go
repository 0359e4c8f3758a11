package report

import (
	"testing"

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
