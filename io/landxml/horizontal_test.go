package landxml

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
)

// A RawObservation with horizDistance and vertDistance (and no
// slopeDistance) reads as the CSV row with horizontal_distance and
// vertical_distance of the same values; one with a slopeDistance reads its
// slope distance and zenith angle, and a horizDistance beside them is
// derived from them and not read.
func TestObservationsHorizontal(t *testing.T) {
	res := readAll(t, head+`<Survey>
<InstrumentSetup id="a" stationName="A" instrumentHeight="1.5"/>
<RawObservation setupID="a" horizDistance="1234.5678" vertDistance="-12.345" targetHeight="1.3"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="90.3" horizDistance="99.99" targetHeight="1.3"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" horizDistance="1e6" vertDistance="1" targetHeight="1.3"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" horizDistance="10" vertDistance="NaN" targetHeight="1.3"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" zenithAngle="90" targetHeight="1.3"><TargetPoint pntRef="B"/></RawObservation>
</Survey></LandXML>`, metreDMS)
	require.NoError(t, res.err)
	require.Len(t, res.obs, 2)

	csv := "from,to,horizontal_distance,vertical_distance,instrument_height,target_height\nA,B,1234.5678,-12.345,1.5,1.3\n"
	r, _, err := obsfile.NewObsReader(strings.NewReader(csv), "f.csv", obsfile.ObsOptions{LengthUnit: units.Metre, AngleUnit: units.PackedDMS})
	require.NoError(t, err)
	want, err := r.Next()
	require.NoError(t, err)
	got := res.obs[0]
	assert.True(t, got.Horizontal)
	assert.Equal(t, 6, got.Line, "the element's line")
	assert.Equal(t, want.SlopeDistance, got.SlopeDistance)
	assert.Equal(t, want.Zenith, got.Zenith)
	assert.Equal(t, want.InstrumentHeight, got.InstrumentHeight)
	assert.Equal(t, want.TargetHeight, got.TargetHeight)

	assert.False(t, res.obs[1].Horizontal, "the slope distance is read")
	assert.Equal(t, 100.0, res.obs[1].SlopeDistance)

	wantRefused := map[int]string{
		8:  `f.xml:8:1: RawObservation horizDistance "1e6": want a horizontal distance in m, > 0 and at most 100 km`,
		9:  `f.xml:9:1: RawObservation vertDistance "NaN": want a vertical distance in m, within ±100 km`,
		10: `f.xml:10:1: RawObservation slopeDistance "": want a slope distance in m, or a horizDistance and vertDistance: an observation without a distance cannot be reduced`,
	}
	require.Len(t, res.refused, len(wantRefused))
	for line, reason := range wantRefused {
		assert.Equal(t, reason, res.refused[line].Reason)
	}
}
