package landxml

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

// A zenith angle read on the reverse face (directFace false) is its
// face-left equivalent, a full turn less it, in every angle unit; a
// face-right value under a half turn, or a directFace that is not an
// xs:boolean, is refused with its reason.
func TestObservationsFaceRight(t *testing.T) {
	for _, c := range []struct {
		unit, xml   string
		left, right string // the same sight on each face
		u           units.AngleUnit
	}{
		{"decimal dd.mm.ss", "decimal dd.mm.ss", "89.4521", "270.1439", units.PackedDMS},
		{"decimal degrees", "decimal degrees", "89.755833", "270.244167", units.Degrees},
		{"grads", "grads", "99.72838", "300.27162", units.Gons},
		{"radians", "radians", "1.5665", "4.71668530717959", units.Radians},
	} {
		t.Run(c.unit, func(t *testing.T) {
			opt := Options{LengthUnit: units.Metre, AngleUnit: c.u}
			res := readAll(t, `<?xml version="1.0"?>
<LandXML version="1.2"><Units><Metric linearUnit="meter" angularUnit="`+c.xml+`"/></Units>
<Survey>
<InstrumentSetup id="a" stationName="A" instrumentHeight="1.5"/>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="`+c.left+`" targetHeight="1.3" directFace="true"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="`+c.right+`" targetHeight="1.3" directFace="false"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="`+c.right+`" targetHeight="1.3" directFace="0"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="`+c.left+`" targetHeight="1.3" directFace="false"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="`+c.right+`" targetHeight="1.3"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="`+c.left+`" targetHeight="1.3" directFace="no"><TargetPoint pntRef="B"/></RawObservation>
</Survey></LandXML>`, opt)
			require.NoError(t, res.err)
			require.Len(t, res.obs, 3)
			want, err := units.ParseZenithAngle(c.left, c.u)
			require.NoError(t, err)
			assert.InDelta(t, float64(want), float64(res.obs[0].Zenith), 1e-15)
			for _, o := range res.obs[1:] {
				assert.InDelta(t, float64(want), float64(o.Zenith), 5e-9, "face right as face left (the values are rounded alike, 0.001\")")
			}
			require.Len(t, res.refused, 3)
			assert.Contains(t, res.refused[8].Reason, `RawObservation zenithAngle "`+c.left+`": want a face-right zenith angle in `)
			assert.Contains(t, res.refused[9].Reason, `RawObservation zenithAngle "`+c.right+`": want a zenith angle in `)
			assert.Contains(t, res.refused[10].Reason, `RawObservation directFace "no": want true or false (xs:boolean)`)
		})
	}
}

// timeStamp is carried as the row's observed_at; a value that is not a
// date and time is refused. Attributes of the elements read that geored
// does not read are named in one folded warning, as skipped elements are.
func TestObservationsTimeStampAndAttributesNotRead(t *testing.T) {
	res := readAll(t, head+`<Survey>
<InstrumentSetup id="a" stationName="A" instrumentHeight="1.5" orientationAzimuth="12.3"><InstrumentPoint pntRef="A" pointGeometry="x"/></InstrumentSetup>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="90" targetHeight="1.3" timeStamp="2026-05-14T09:31:07" horizAngle="12.3015"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="90" targetHeight="1.3" timeStamp="2026-05-14T09:32:07.5+02:00" horizAngle="12.3015" desc="check"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="90" targetHeight="1.3" timeStamp="14/05/2026"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="90" targetHeight="1.3"><TargetPoint pntRef="B"/></RawObservation>
</Survey></LandXML>`, metreDMS)
	require.NoError(t, res.err)
	require.Len(t, res.obs, 3)
	assert.Equal(t, "2026-05-14T09:31:07", res.obs[0].ObservedAt)
	assert.Equal(t, "2026-05-14T09:32:07.5+02:00", res.obs[1].ObservedAt)
	assert.Equal(t, "", res.obs[2].ObservedAt)
	require.Len(t, res.refused, 1)
	assert.Contains(t, res.refused[8].Reason, `f.xml:8:1: RawObservation timeStamp "14/05/2026": want the observation's date and time, xs:dateTime`)
	require.Len(t, res.warn, 1)
	assert.Equal(t, 5, res.warn[0].Line)
	assert.Equal(t, "4 LandXML attributes not read (geored reduces distances; the job's settings stand for what the others say): "+
		"InstrumentSetup orientationAzimuth ×1 (first at line 5, column 1), InstrumentPoint pointGeometry ×1 (first at line 5, column 90), "+
		"RawObservation horizAngle ×2 (first at line 6, column 1)", res.warn[0].Text)
}
