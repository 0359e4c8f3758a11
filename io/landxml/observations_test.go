package landxml

import (
	"errors"
	"fmt"
	"io"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
)

var metreDMS = Options{LengthUnit: units.Metre, AngleUnit: units.PackedDMS}

// readAll reads a LandXML file's observations through the CSV reader, as
// the pipeline does: the observations, the rows refused with their
// fixes, and the error that ended the file.
type readResult struct {
	obs     []obsfile.Observation
	refused map[int]Fix // by the element's line
	fixed   map[int]Fix // rows moved off their line: by the stream's line
	err     error
	warn    []obsfile.Warning
	rows    int
}

func readAll(t *testing.T, text string, opt Options) readResult {
	t.Helper()
	lx := NewObservations(strings.NewReader(text), "f.xml", opt)
	res := readResult{refused: map[int]Fix{}, fixed: map[int]Fix{}}
	r, _, err := obsfile.NewObsReader(lx, "f.xml", obsfile.ObsOptions{LengthUnit: opt.LengthUnit, AngleUnit: opt.AngleUnit})
	if err != nil {
		res.err = err
		return res
	}
	d := drain(lx, r)
	require.NoError(t, d.broken)
	res.obs, res.err, res.rows, res.warn = d.obs, d.err, d.rows, lx.Warnings()
	for _, f := range d.refused {
		res.refused[f.Line] = f
	}
	for _, f := range d.fixed {
		res.fixed[f.Line] = f
	}
	return res
}

// drained is what drain read: broken says how the stream broke its
// contract with the CSV reader, if it did.
type drained struct {
	obs            []obsfile.Observation // with their elements' lines
	refused, fixed []Fix
	rows           int
	err            error // what ended the file
	broken         error
}

// drain reads the rows of a LandXML stream through the CSV reader, as the
// pipeline does, and checks that every observation is one row, in order,
// and every rejected row has its reason.
func drain(lx *Observations, r *obsfile.ObsReader) drained {
	var d drained
	last := 0
	for {
		o, err := r.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		var re *obsfile.RowError
		if errors.As(err, &re) {
			f, ok := lx.Take(re.Err.Line)
			if !ok || f.Reason == "" {
				d.broken = fmt.Errorf("a rejected row without its reason: %w", err)
				return d
			}
			d.refused = append(d.refused, f)
			d.rows++
			continue
		}
		if err != nil {
			d.err = err
			break
		}
		if o.Line <= last {
			d.broken = fmt.Errorf("rows out of order: line %d after %d", o.Line, last)
			return d
		}
		last = o.Line
		if f, ok := lx.Take(o.Line); ok {
			if f.Reason != "" {
				d.broken = fmt.Errorf("an observation read with a reason to refuse it: %q", f.Reason)
				return d
			}
			d.fixed = append(d.fixed, f)
			o.Line = f.Line
		}
		d.obs = append(d.obs, o)
		d.rows++
	}
	if d.rows != lx.Rows() {
		d.broken = fmt.Errorf("read %d rows of %d observations", d.rows, lx.Rows())
	}
	return d
}

const head = `<?xml version="1.0"?>
<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2">
<Units><Metric linearUnit="meter" areaUnit="squareMeter" volumeUnit="cubicMeter" angularUnit="decimal dd.mm.ss"/></Units>
`

// The setup's station and height, a TargetSetup's height, an
// ObservationGroup's setupID, and the observation's own name, distance
// and zenith angle reach the observation, on the element's line.
func TestObservationsFromSetups(t *testing.T) {
	res := readAll(t, head+`<Survey>
<InstrumentSetup id="a" stationName="ALPHA" instrumentHeight="1.50"><InstrumentPoint pntRef="ALPHA-MARK"/></InstrumentSetup>
<InstrumentSetup id="b" stationName="BRAVO" instrumentHeight="0.25"/>
<TargetSetup id="t1" targetHeight="2.10"/>
<RawObservation setupID="a" targetSetupID="t1" name="o1" slopeDistance="100.5" zenithAngle="90.3000"><TargetPoint pntRef="BRAVO"/></RawObservation>
<ObservationGroup id="g" setupID="b">
  <RawObservation slopeDistance="200" zenithAngle="89.3000" targetHeight="1.3"><TargetPoint pntRef="ALPHA"/></RawObservation>
</ObservationGroup>
</Survey></LandXML>`, metreDMS)
	require.NoError(t, res.err)
	require.Len(t, res.obs, 2)
	o := res.obs[0]
	assert.Equal(t, 8, o.Line)
	assert.Equal(t, "o1", o.ObsID)
	assert.Equal(t, "ALPHA-MARK", o.From, "InstrumentPoint pntRef before stationName")
	assert.Equal(t, "BRAVO", o.To)
	assert.Equal(t, 100.5, o.SlopeDistance)
	assert.InDelta(t, 90.5, o.Zenith.Degrees(), 1e-12)
	assert.Equal(t, 1.5, o.InstrumentHeight)
	assert.Equal(t, 2.1, o.TargetHeight, "from the TargetSetup")
	o = res.obs[1]
	assert.Equal(t, 10, o.Line)
	assert.Equal(t, "BRAVO", o.From, "the ObservationGroup's setup, by stationName")
	assert.Equal(t, 0.25, o.InstrumentHeight)
	assert.Equal(t, 1.3, o.TargetHeight)
	assert.InDelta(t, 89.5, o.Zenith.Degrees(), 1e-12)
	assert.Empty(t, res.warn)
}

// Elements not read are skipped whole, and named in one warning.
func TestObservationsFoldSkipped(t *testing.T) {
	res := readAll(t, head+`<Project name="p"/>
<Survey>
<SurveyHeader name="day"><Annotation>x</Annotation></SurveyHeader>
<InstrumentSetup id="a" stationName="A" instrumentHeight="1.5">
  <InstrumentPoint pntRef="A"/>
  <Backsight><BacksightPoint pntRef="B"/></Backsight>
</InstrumentSetup>
<RawObservation setupID="a" slopeDistance="10" zenithAngle="90" targetHeight="1"><TargetPoint pntRef="B"/><FieldNote>n</FieldNote></RawObservation>
<InstrumentSetup id="b" stationName="B" instrumentHeight="1.5"><Backsight/></InstrumentSetup>
</Survey></LandXML>`, metreDMS)
	require.NoError(t, res.err)
	require.Len(t, res.obs, 1)
	require.Len(t, res.warn, 1)
	assert.Equal(t, "f.xml:4: 5 LandXML elements not read (the job's settings stand for what they say): Project ×1 (first at line 4, column 1), SurveyHeader ×1 (first at line 6, column 1), Backsight ×2 (first at line 9, column 3), FieldNote ×1 (first at line 11, column 107)", res.warn[0].String())
}

// A refused observation is one row, rejected with its own reason, and the
// reader goes on.
func TestObservationsRefused(t *testing.T) {
	res := readAll(t, head+`<Survey>
<InstrumentSetup id="a" stationName="A"/>
<InstrumentSetup id="b" stationName="B" instrumentHeight="x1"/>
<InstrumentSetup id="c" stationName="C" instrumentHeight="1.5"/>
<RawObservation setupID="a" slopeDistance="10" zenithAngle="90" targetHeight="1"><TargetPoint pntRef="B"/></RawObservation>
<RawObservation setupID="b" slopeDistance="10" zenithAngle="90" targetHeight="1"><TargetPoint pntRef="A"/></RawObservation>
<RawObservation setupID="c" slopeDistance="10" zenithAngle="190" targetHeight="1"><TargetPoint pntRef="A"/></RawObservation>
<RawObservation setupID="c" slopeDistance="10" zenithAngle="90" targetHeight="1"><TargetPoint pntRef="C"/></RawObservation>
<RawObservation setupID="c" slopeDistance="10" zenithAngle="90" targetSetupID="zz"><TargetPoint pntRef="A"/></RawObservation>
<RawObservation setupID="c" horizDistance="10" zenithAngle="90" targetHeight="1"><TargetPoint pntRef="A"/></RawObservation>
<RawObservation setupID="c" slopeDistance="10" zenithAngle="90" targetHeight="0" name="ok"><TargetPoint pntRef="A"/></RawObservation>
<RawObservation setupID="c" slopeDistance="10" zenithAngle="90"><TargetPoint pntRef="A"/></RawObservation>
</Survey></LandXML>`, metreDMS)
	require.NoError(t, res.err)
	require.Len(t, res.obs, 1)
	assert.Equal(t, "ok", res.obs[0].ObsID)
	want := map[int]string{
		8:  `f.xml:8:1: RawObservation setupID "a": want a setup that can be used: f.xml:5:1: InstrumentSetup instrumentHeight "": want the instrument's height above the mark in m, within ±1000 m`,
		9:  `f.xml:9:1: RawObservation setupID "b": want a setup that can be used: f.xml:6:1: InstrumentSetup instrumentHeight "x1": want a height in m, within ±1000 m`,
		10: `f.xml:10:1: RawObservation zenithAngle "190": want a zenith angle in dms, face left, strictly between 0 and a half turn`,
		11: `f.xml:11:1: RawObservation: want a target other than the station "C"`,
		12: `f.xml:12:1: RawObservation targetSetupID "zz": want the id of a TargetSetup earlier in the file`,
		13: `f.xml:13:1: RawObservation vertDistance "": want the vertical distance in m from the instrument's axis to the target, which goes with the horizDistance`,
		15: `f.xml:15:1: RawObservation targetHeight "": want the target's height above the mark (here, or its TargetSetup's; 0 if the target is on the mark) in m`,
	}
	require.Len(t, res.refused, len(want))
	for line, reason := range want {
		assert.Contains(t, res.refused[line].Reason, reason)
		assert.Equal(t, line, res.refused[line].Line)
		assert.True(t, strings.HasPrefix(res.refused[line].Raw, "<RawObservation setupID="), res.refused[line].Raw)
	}
}

// What ends the file: not LandXML 1.2, a second unit system, a
// repeated setup id, a tag over the job's limit.
func TestObservationsStop(t *testing.T) {
	for _, c := range []struct{ text, want string }{
		{`<?xml version="1.0"?><Other/>`, "f.xml:1:22: Other: want a LandXML 1.2 file: the root element LandXML"},
		{`<LandXML version="1.1"/>`, `f.xml:1:1: LandXML version "1.1": want 1.2: geored reads LandXML 1.2`},
		{`<LandXML/>`, `f.xml:1:1: LandXML version "": want 1.2 (a version attribute or the LandXML-1.2 namespace)`},
		{``, "f.xml:1:1: want a LandXML 1.2 file: no LandXML element"},
		{head + `</LandXML>`, ""},
		{`<LandXML version="1.2"></LandXML>`, "f.xml:1:1: LandXML: want a Units element: the file's units are never guessed"},
		{strings.Replace(head, "</Units>", `<Imperial linearUnit="foot" angularUnit="radians"/></Units>`, 1), "f.xml:3:114: Imperial: want one unit system: this file's Units already has Metric"},
		{strings.Replace(head, `"meter"`, `"millimeter"`, 1), `f.xml:3:8: Metric linearUnit "millimeter": want "meter": a unit geored reads (length_unit)`},
		{head + `<Survey><InstrumentSetup id="a" stationName="A" instrumentHeight="1"/><InstrumentSetup id="a" stationName="B" instrumentHeight="1"/></Survey></LandXML>`,
			`f.xml:4:71: InstrumentSetup id "a": want a unique id: line 4, column 9 has it already`},
		{head + `<Survey>` + strings.Repeat("<ObservationGroup>", 300), "f.xml:4:4581: want elements nested at most 256 deep"},
		{head + `<Survey><Other>` + strings.Repeat("<x>", 300), "f.xml:4:781: want elements nested at most 256 deep"},
		{head + `<Survey><Other><x>`, "f.xml:4:19: want well-formed XML (unexpected EOF)"},
		{head + `<Survey><InstrumentSetup id="a" stationName="` + strings.Repeat("A", 2<<20) + `"/></Survey></LandXML>`,
			"f.xml:4: this tag or text: over the limit max_line_bytes = 1,048,576 bytes"},
	} {
		res := readAll(t, c.text, metreDMS)
		if c.want == "" {
			assert.NoError(t, res.err)
			continue
		}
		require.Error(t, res.err, c.want)
		assert.Contains(t, res.err.Error(), c.want)
	}
}

// CgPoints become the points CSV, each on its element's line, northing
// and easting swapped into their columns.
func TestPoints(t *testing.T) {
	text := head + `<CgPoints>
<CgPoint name="ALPHA">5761205.338 512340.512 48.217</CgPoint>
<CgPoint name="BRAVO"> 5760562.114
  512498.730 </CgPoint>
</CgPoints>
<Survey><RawObservation/></Survey></LandXML>`
	pts, _, err := obsfile.ReadPoints(NewPoints(strings.NewReader(text), "f.xml", metreDMS, units.Metre), "f.xml", obsfile.PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre})
	require.NoError(t, err)
	require.Len(t, pts, 2)
	assert.Equal(t, obsfile.Point{ID: "ALPHA", Line: 5, Easting: 512340.512, Northing: 5761205.338, HasGrid: true, Elevation: 48.217, HasElevation: true}, pts[0])
	assert.Equal(t, obsfile.Point{ID: "BRAVO", Line: 6, Easting: 512498.730, Northing: 5760562.114, HasGrid: true}, pts[1])

	for _, c := range []struct {
		text string
		grid units.LengthUnit
		want string
	}{
		{strings.Replace(text, "48.217", "48.217 1", 1), units.Metre, `f.xml:5:1: CgPoint: want point "ALPHA": its text "northing easting [elevation]" in m (4 numbers found)`},
		{strings.Replace(text, "48.217", "0x30", 1), units.Metre, `f.xml:5:1: CgPoint: want point "ALPHA": its elevation "0x30" as a decimal number in m`},
		{strings.Replace(text, ` name="ALPHA"`, "", 1), units.Metre, `f.xml:5:1: CgPoint name "": want the point's name`},
		{strings.Replace(text, `name="BRAVO"`, `name="ALPHA"`, 1), units.Metre, `f.xml:6:1: CgPoint name "ALPHA": want a unique name: the CgPoint at line 5, column 1 has it already`},
		{text, units.USSurveyFoot, "f.xml:3:1: Units: want CgPoints in the unit of the CRS's grid, us-ft: the file's lengths are in m"},
	} {
		_, _, err := obsfile.ReadPoints(NewPoints(strings.NewReader(c.text), "f.xml", metreDMS, c.grid), "f.xml", obsfile.PointOptions{GridUnit: c.grid, HeightUnit: units.Metre})
		require.Error(t, err, c.want)
		assert.Contains(t, err.Error(), c.want)
	}
}
