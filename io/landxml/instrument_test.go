package landxml

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

const equipment = `<Survey>
<Equipment>
<InstrumentDetails id="i1" manufacturer="Ours" model="T1" serialNumber="S-1001" horizAnglePrecision="0.0003"><Corrections refractionCoefficient="0.13"/></InstrumentDetails>
<InstrumentDetails id="i2" serialNumber="S-1002"/>
<InstrumentDetails id="i3"/>
</Equipment>
<InstrumentSetup id="a" stationName="A" instrumentHeight="1.5" instrumentDetailsID="i1"/>
<InstrumentSetup id="b" stationName="B" instrumentHeight="1.5" instrumentDetailsID="i2"/>
<InstrumentSetup id="c" stationName="C" instrumentHeight="1.5" instrumentDetailsID="i3"/>
<InstrumentSetup id="d" stationName="D" instrumentHeight="1.5" instrumentDetailsID="i9"/>
<InstrumentSetup id="e" stationName="E" instrumentHeight="1.5"/>
<RawObservation setupID="a" slopeDistance="100" zenithAngle="90" targetHeight="1.3"><TargetPoint pntRef="X"/></RawObservation>
<RawObservation setupID="b" slopeDistance="100" zenithAngle="90" targetHeight="1.3"><TargetPoint pntRef="X"/></RawObservation>
<RawObservation setupID="c" slopeDistance="100" zenithAngle="90" targetHeight="1.3"><TargetPoint pntRef="X"/></RawObservation>
<RawObservation setupID="d" slopeDistance="100" zenithAngle="90" targetHeight="1.3"><TargetPoint pntRef="X"/></RawObservation>
<RawObservation setupID="e" slopeDistance="100" zenithAngle="90" targetHeight="1.3"><TargetPoint pntRef="X"/></RawObservation>
</Survey></LandXML>`

// A setup's instrumentDetailsID names the InstrumentDetails whose
// serialNumber picks the job's profile (serial_number): a serial no
// profile has, details without one, or an id not in the file refuse the
// setup's observations with the reason; a setup that names no details
// takes the job's default_instrument. The details' Corrections and other
// attributes are named in the warnings as not read.
func TestObservationsInstrumentBySerialNumber(t *testing.T) {
	opt := Options{LengthUnit: units.Metre, AngleUnit: units.PackedDMS, Instruments: map[string]string{"S-1001": "ts-red", "S-2000": "ts-blue"}}
	res := readAll(t, head+equipment, opt)
	require.NoError(t, res.err)
	require.Len(t, res.obs, 2)
	assert.Equal(t, "A", res.obs[0].From)
	assert.Equal(t, "ts-red", res.obs[0].Instrument)
	assert.Equal(t, "E", res.obs[1].From)
	assert.Equal(t, "", res.obs[1].Instrument, "no details: the job's default_instrument")
	require.Len(t, res.refused, 3)
	assert.Equal(t, `f.xml:16:1: RawObservation setupID "b": want a setup that can be used: f.xml:11:1: InstrumentSetup instrumentDetailsID "i2": want an instrument the job has a profile for: the InstrumentDetails at line 7, column 1 has serialNumber "S-1002", and no [instrument.NAME] profile has serial_number = "S-1002"`, res.refused[16].Reason)
	assert.Contains(t, res.refused[17].Reason, `InstrumentSetup instrumentDetailsID "i3": want an instrument the job has a profile for: the InstrumentDetails at line 8, column 1 has no serialNumber`)
	assert.Contains(t, res.refused[18].Reason, `InstrumentSetup instrumentDetailsID "i9": want the id of an InstrumentDetails earlier in the file`)
	require.Len(t, res.warn, 2)
	assert.Equal(t, "1 LandXML elements not read (the job's settings stand for what they say): Corrections ×1 (first at line 6, column 110)", res.warn[0].Text)
	assert.Contains(t, res.warn[1].Text, "InstrumentDetails horizAnglePrecision ×1 (first at line 6, column 1)")

	// A job whose profiles give no serial number: every setup takes the
	// default instrument, said once.
	res = readAll(t, head+equipment, metreDMS)
	require.NoError(t, res.err)
	require.Len(t, res.obs, 4)
	for _, o := range res.obs {
		assert.Equal(t, "", o.Instrument)
	}
	assert.Contains(t, res.refused[18].Reason, `"i9": want the id of an InstrumentDetails earlier in the file`)
	require.Len(t, res.warn, 3)
	assert.Equal(t, 6, res.warn[2].Line)
	assert.Equal(t, `the file's InstrumentDetails name instruments by serialNumber ("S-1001" at line 6, column 1), and no [instrument.NAME] profile gives a serial_number: the job's default_instrument stands for them all`, res.warn[2].Text)
}
