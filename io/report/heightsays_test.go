package report

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

// The height check says what gave the implied height: the zenith angle,
// or for a row of horizontal and vertical distances the zenith angle
// they came from (atan2(hd, vd)), and on which route it was not checked.
func TestHeightSaysNamesWhatImpliedTheHeight(t *testing.T) {
	v := htmlView{length: lengthOf(&Summary{})}
	checked := FlaggedObservation{HeightChecked: true, HeightDifference: -0.1, HeightSigma: 0.002, HeightW: -50, Flags: []string{FlagHeight}}
	assert.Equal(t, "disagrees: the booked target height is 0.100 m below the one the zenith angle implies (σ 0.002 m, w -50.00)", v.HeightSays(checked))
	checked.Horizontal = true
	assert.Equal(t, "disagrees: the booked target height is 0.100 m below the one the horizontal and vertical distances imply (σ 0.002 m, w -50.00)", v.HeightSays(checked))
	assert.Equal(t, "not checked: the zenith angle gave the target's height (zenith route)", v.HeightSays(FlaggedObservation{}))
	assert.Equal(t, "not checked: the vertical distance gave the target's height (horizontal route)", v.HeightSays(FlaggedObservation{Horizontal: true}))
}
