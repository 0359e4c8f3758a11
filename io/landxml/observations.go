package landxml

import (
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
)

// ObservationHeader is the first line of an Observations stream: the
// observation CSV's columns it fills.
const ObservationHeader = "obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,horizontal_distance,vertical_distance,observed_at,instrument\n"

// refusedRow is the row written for an observation this reader refuses:
// the CSV reader rejects it (no station), and Take gives the reason.
const refusedRow = "refused,,,,,,,,,,\n"

// Observations reads the Survey observations of a LandXML file as an
// observation CSV (ObservationHeader), one row per RawObservation, each
// on its element's line. It is an io.Reader for job.Source; the
// error that ends the file (malformed XML, units missing or not the
// job's) is the stream's error, an *Error or an *obsfile.LimitError.
//
// It holds the setups (a few values each) and one observation: memory
// grows with the setups, not with the observations.
type Observations struct {
	s     *scanner
	opt   Options
	lim   obsfile.Limits
	units bool // the file's Units were read and agree with the job

	csvStream
	row []byte // the row being built

	stack   []frame
	setups  map[string]*setup
	targets map[string]*targetSetup
	details map[string]*instrumentDetails
	// unnamed is the first InstrumentDetails with a serialNumber that the
	// job, whose profiles give none, cannot tell: its warning.
	unnamed *obsfile.Warning
	obs     pending // the RawObservation being read

	mu    sync.Mutex
	fixes map[int]Fix
	nfix  atomic.Int64
}

// A Fix is what the CSV stream could not say of one row: where its element
// is when the row could not be put on its line (several elements on one
// line), and, for a row this reader refused, the reason and the element.
type Fix struct {
	Line   int    // the element's line in the XML file
	Reason string // why the observation was refused; "" if it was not
	Raw    string // the element's start tag, for rejects.csv, if refused
}

type frame struct {
	name  string
	setup string // the setup the element's observations belong to
}

type setup struct {
	line, col  int
	station    string
	hi         string
	instrument string // the profile, from its InstrumentDetails; "" for the job's default
	bad        string // why its observations cannot be reduced
}

// instrumentDetails is an InstrumentDetails element of the Equipment.
type instrumentDetails struct {
	line, col int
	serial    string
}

type targetSetup struct {
	ht  string
	bad string
}

type pending struct {
	tag       xml.StartElement
	line, col int
	setup     string
	target    string
	hasTarget bool
}

// NewObservations reads r, the LandXML file named file, as it is read.
func NewObservations(r io.Reader, file string, opt Options) *Observations {
	o := &Observations{s: newScanner(r, file, opt.Limits), opt: opt, lim: opt.Limits.OrDefault(),
		setups: map[string]*setup{}, targets: map[string]*targetSetup{}, details: map[string]*instrumentDetails{}, fixes: map[int]Fix{}}
	o.buf, o.line, o.csvStream.fill = append(o.buf, ObservationHeader...), 1, o.fill
	return o
}

// Warnings are the file's warnings, once the stream has been read to its
// end: one naming the elements not read, one the attributes not read, and
// one where its InstrumentDetails have serial numbers that the job's
// profiles, giving none, do not tell apart.
func (o *Observations) Warnings() []obsfile.Warning {
	w := o.s.warnings()
	if o.unnamed != nil {
		w = append(w, *o.unnamed)
	}
	return w
}

// Take returns, and forgets, the Fix of the row on line csvLine of the
// stream, if it has one. It may be called from another goroutine than
// Read's, once the row has been read.
func (o *Observations) Take(csvLine int) (Fix, bool) {
	if o.nfix.Load() == 0 {
		return Fix{}, false
	}
	o.mu.Lock()
	defer o.mu.Unlock()
	f, ok := o.fixes[csvLine]
	if ok {
		delete(o.fixes, csvLine)
		o.nfix.Add(-1)
	}
	return f, ok
}

// fill reads tokens until about size bytes of rows are written, or the
// file ends (io.EOF) or cannot be read on.
func (o *Observations) fill(size int) error {
	for len(o.buf) < size {
		tok, err := o.s.token(o.units)
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			if err := o.startElement(t); err != nil {
				return err
			}
		case xml.EndElement:
			top := o.stack[len(o.stack)-1]
			o.stack = o.stack[:len(o.stack)-1]
			if top.name == "RawObservation" {
				o.finish()
			}
		}
	}
	return nil
}

func (o *Observations) parent() frame {
	if len(o.stack) == 0 {
		return frame{}
	}
	return o.stack[len(o.stack)-1]
}

func (o *Observations) startElement(t xml.StartElement) error {
	s, name, parent := o.s, t.Name.Local, o.parent()
	if len(o.stack) >= maxDepth {
		return s.tooDeep()
	}
	push := func(setup string) { o.stack = append(o.stack, frame{name, setup}) }
	switch parent.name {
	case "":
		if err := s.start(t); err != nil {
			return err
		}
		push("")
		return nil
	case "LandXML":
		switch name {
		case "Units":
			if o.units {
				return s.at("Units", "", "", "one Units element: the file already has one")
			}
			if _, err := s.readUnits(o.opt); err != nil {
				return err
			}
			o.units = true
			return nil
		case "CgPoints":
			return s.skipQuiet() // Points reads them
		case "Survey":
			push("")
			return nil
		}
	case "Equipment":
		if name == "InstrumentDetails" {
			ok, err := o.instrumentDetails(t)
			if err != nil {
				return err
			}
			if ok {
				push("") // its Corrections and the rest: skipped and counted
				return nil
			}
		}
	case "Survey", "InstrumentSetup", "ObservationGroup":
		switch {
		case name == "Equipment" && parent.name == "Survey":
			push("")
			return nil
		case name == "InstrumentSetup" && parent.name == "Survey":
			id, err := o.instrumentSetup(t)
			if err != nil {
				return err
			}
			push(id)
			return nil
		case name == "InstrumentPoint" && parent.name == "InstrumentSetup":
			s.attrsNotRead(t, pointRefAttrs)
			if ref, ok := attr(t, "pntRef"); ok && strings.TrimSpace(ref) != "" {
				o.setups[parent.setup].station = strings.TrimSpace(ref)
			}
			return s.skipQuiet()
		case name == "TargetSetup":
			if err := o.targetSetup(t); err != nil {
				return err
			}
			return s.skipQuiet()
		case name == "ObservationGroup":
			s.attrsNotRead(t, groupAttrs)
			id := parent.setup
			if v, ok := attr(t, "setupID"); ok { // from memory: ObservationGroup's setupID
				id = strings.TrimSpace(v)
			}
			push(id)
			return nil
		case name == "RawObservation":
			if !o.units {
				return s.at(name, "", "", "the file's Units element before its first observation: units are never guessed")
			}
			s.attrsNotRead(t, observationAttrs)
			o.obs = pending{tag: t, line: s.line, col: s.col, setup: parent.setup}
			if v, ok := attr(t, "setupID"); ok {
				o.obs.setup = strings.TrimSpace(v)
			}
			push("")
			return nil
		}
	case "RawObservation":
		if name == "TargetPoint" {
			s.attrsNotRead(t, pointRefAttrs)
			if ref, ok := attr(t, "pntRef"); ok {
				o.obs.target, o.obs.hasTarget = strings.TrimSpace(ref), true
			}
			return s.skipQuiet()
		}
	}
	return s.skip(t)
}

// instrumentSetup registers the setup just opened.
func (o *Observations) instrumentSetup(t xml.StartElement) (string, error) {
	s := o.s
	id, ok := attr(t, "id")
	id = strings.TrimSpace(id)
	if !ok || id == "" {
		return "", s.at("InstrumentSetup", "id", id, "the setup's id, which its observations name")
	}
	if first, dup := o.setups[id]; dup {
		return "", s.at("InstrumentSetup", "id", id, fmt.Sprintf("a unique id: line %d, column %d has it already", first.line, first.col))
	}
	s.attrsNotRead(t, setupAttrs)
	st := &setup{line: s.line, col: s.col}
	if v, ok := attr(t, "stationName"); ok {
		st.station = strings.TrimSpace(v)
	}
	if v, ok := attr(t, "instrumentHeight"); !ok {
		st.bad = s.at("InstrumentSetup", "instrumentHeight", "", o.heightWant("the instrument's height above the mark")).Error()
	} else if st.hi, st.bad = o.height("InstrumentSetup", "instrumentHeight", v); st.bad != "" {
		st.hi = ""
	}
	if v, ok := attr(t, "instrumentDetailsID"); ok && st.bad == "" { // from memory: InstrumentSetup's instrumentDetailsID
		st.instrument, st.bad = o.setupInstrument(strings.TrimSpace(v))
	}
	o.setups[id] = st
	return id, nil
}

func (o *Observations) targetSetup(t xml.StartElement) error {
	s := o.s
	id, ok := attr(t, "id")
	id = strings.TrimSpace(id)
	if !ok || id == "" {
		return s.at("TargetSetup", "id", id, "the target setup's id, which its observations name")
	}
	if _, dup := o.targets[id]; dup {
		return s.at("TargetSetup", "id", id, "a unique id: an earlier TargetSetup has it")
	}
	s.attrsNotRead(t, targetSetupAttrs)
	ts := &targetSetup{}
	if v, ok := attr(t, "targetHeight"); ok {
		ts.ht, ts.bad = o.height("TargetSetup", "targetHeight", v)
	} else {
		ts.bad = s.at("TargetSetup", "targetHeight", "", o.heightWant("the target's height above the mark")).Error()
	}
	o.targets[id] = ts
	return nil
}

func (o *Observations) heightWant(what string) string {
	return fmt.Sprintf("%s in %s, within ±1000 m", what, o.opt.LengthUnit)
}

// height checks a height attribute of the element last opened; it
// returns the value as written (trimmed), or the reason it is bad.
func (o *Observations) height(el, name, v string) (string, string) {
	v = strings.TrimSpace(v)
	h, err := units.ParseFloat(v)
	if err != nil || math.IsNaN(h) || math.IsInf(h, 0) || math.Abs(h*float64(o.opt.LengthUnit)) > 1000 {
		return "", o.s.at(el, name, v, o.heightWant("a height")).Error()
	}
	return v, ""
}

// finish writes the RawObservation just closed as a row, or refuses it.
func (o *Observations) finish() {
	p := &o.obs
	row, reason := o.observation(p)
	csvLine := o.startRow(p.line)
	if reason != "" {
		o.buf = append(o.buf, refusedRow...)
		o.addFix(csvLine, Fix{Line: p.line, Reason: reason, Raw: startTag(p.tag)})
		return
	}
	o.buf = append(o.buf, row...)
	if csvLine != p.line {
		o.addFix(csvLine, Fix{Line: p.line})
	}
}

func (o *Observations) addFix(csvLine int, f Fix) {
	o.mu.Lock()
	o.fixes[csvLine] = f
	o.mu.Unlock()
	o.nfix.Add(1)
}

// observation checks the RawObservation and writes its row; reason says
// why it cannot be.
func (o *Observations) observation(p *pending) (row []byte, reason string) {
	at := func(a, v, want string) string {
		return (&Error{File: o.s.file, Line: p.line, Column: p.col, Element: "RawObservation", Attr: a, Value: v, Want: want}).Error()
	}
	get := func(name string) (string, bool) {
		v, ok := attr(p.tag, name)
		return strings.TrimSpace(v), ok
	}
	u := o.opt.LengthUnit
	// The setup: the station and the instrument's height.
	if p.setup == "" {
		return nil, at("", "", "a setupID naming an InstrumentSetup before it (or to be inside an ObservationGroup with one)")
	}
	st, ok := o.setups[p.setup]
	if !ok {
		return nil, at("setupID", p.setup, "the id of an InstrumentSetup earlier in the file")
	}
	if st.station == "" {
		return nil, at("setupID", p.setup, fmt.Sprintf("a setup with a station: the InstrumentSetup at line %d, column %d has no InstrumentPoint pntRef and no stationName", st.line, st.col))
	}
	if st.bad != "" {
		return nil, at("setupID", p.setup, "a setup that can be used: "+st.bad)
	}
	// The distance and the zenith angle, or the horizontal and vertical
	// distances (horizDistance, vertDistance: LandXML 1.2's names, from
	// memory), which the CSV reader turns into the slope distance and
	// zenith angle they came from (obsfile.SlopeFromHorizontal). Where the
	// element has a slope distance, it and the zenith angle are read and
	// any horizontal distance beside them, derived from them, is not.
	sd, ok := get("slopeDistance")
	var za, hd, vd string
	if !ok || sd == "" {
		hd, _ = get("horizDistance")
		if hd == "" {
			return nil, at("slopeDistance", sd, fmt.Sprintf("a slope distance in %s, or a horizDistance and vertDistance: an observation without a distance cannot be reduced", u))
		}
		if v, err := units.ParseFloat(hd); err != nil || !(v > 0) || v*float64(u) > 1e5 {
			return nil, at("horizDistance", hd, fmt.Sprintf("a horizontal distance in %s, > 0 and at most 100 km", u))
		}
		vd, _ = get("vertDistance")
		if vd == "" {
			return nil, at("vertDistance", vd, fmt.Sprintf("the vertical distance in %s from the instrument's axis to the target, which goes with the horizDistance", u))
		}
		if v, err := units.ParseFloat(vd); err != nil || math.IsNaN(v) || math.Abs(v*float64(u)) > 1e5 {
			return nil, at("vertDistance", vd, fmt.Sprintf("a vertical distance in %s, within ±100 km", u))
		}
	} else {
		if v, err := units.ParseFloat(sd); err != nil || !(v > 0) || v*float64(u) > 1e5 {
			return nil, at("slopeDistance", sd, fmt.Sprintf("a slope distance in %s, > 0 and at most 100 km", u))
		}
		za, ok = get("zenithAngle")
		if !ok || za == "" {
			return nil, at("zenithAngle", za, fmt.Sprintf("a zenith angle in %s: the slope distance is reduced with it", o.opt.AngleUnit))
		}
		// directFace (from memory: xs:boolean, true for the instrument's
		// direct face, face left) false: a face-right reading, over a half
		// turn, which is written as its face-left equivalent, a full turn
		// less it (common practice).
		direct := true
		if v, ok := get("directFace"); ok {
			switch v {
			case "true", "1":
			case "false", "0":
				direct = false
			default:
				return nil, at("directFace", v, "true or false (xs:boolean): whether the zenith angle was read on the direct face, face left")
			}
		}
		if !direct {
			f, bad := o.faceRight(za)
			if bad != "" {
				return nil, at("zenithAngle", za, bad)
			}
			za = f
		} else if _, err := units.ParseZenithAngle(za, o.opt.AngleUnit); err != nil {
			return nil, at("zenithAngle", za, fmt.Sprintf("a zenith angle in %s, face left, strictly between 0 and a half turn (%v)", o.opt.AngleUnit, err))
		}
	}
	// The observation's time (timeStamp, from memory: xs:dateTime).
	ts, _ := get("timeStamp")
	if ts != "" {
		if _, err := obsfile.ParseObservedAt(ts); err != nil {
			return nil, at("timeStamp", ts, "the observation's date and time, xs:dateTime as 2026-05-14T09:31:07 (fraction of a second and zone, Z or ±hh:mm, optional)")
		}
	}
	// The target and its height.
	if !p.hasTarget || p.target == "" {
		return nil, at("", "", "a TargetPoint with the pntRef of the point sighted")
	}
	if p.target == st.station {
		return nil, at("", "", fmt.Sprintf("a target other than the station %q", obsfile.Clip(st.station)))
	}
	ht, hasHT := get("targetHeight")
	if hasHT {
		v, bad := o.height("RawObservation", "targetHeight", ht)
		if bad != "" {
			return nil, at("targetHeight", ht, o.heightWant("the target's height above the mark"))
		}
		ht = v
	} else if id, ok := get("targetSetupID"); ok {
		ts, ok := o.targets[id]
		switch {
		case !ok:
			return nil, at("targetSetupID", id, "the id of a TargetSetup earlier in the file")
		case ts.bad != "":
			return nil, at("targetSetupID", id, "a target setup that can be used: "+ts.bad)
		}
		ht = ts.ht
	}
	if ht == "" {
		// Not taken as 0: a height left out is not known to be 0.
		return nil, at("targetHeight", "", o.heightWant("the target's height above the mark (here, or its TargetSetup's; 0 if the target is on the mark)"))
	}
	name, _ := get("name") // from memory: RawObservation's name, its identifier
	fields := [...]string{name, st.station, p.target}
	for i, f := range fields {
		if strings.ContainsAny(f, "\r\n") || len(f) > o.lim.MaxFieldBytes {
			what := [...]string{"name", "station", "target"}[i]
			return nil, at([...]string{"name", "setupID", "TargetPoint pntRef"}[i], f, fmt.Sprintf("a %s on one line, of at most %d bytes", what, o.lim.MaxFieldBytes))
		}
	}
	row = appendCSVField(o.row[:0], name)
	for _, f := range [...]string{st.station, p.target, sd, za, st.hi, ht, hd, vd, ts, st.instrument} {
		row = append(row, ',')
		row = appendCSVField(row, f)
	}
	o.row = append(row, '\n')
	return o.row, ""
}

// appendCSVField writes f, quoted where CSV needs it (a comma, a quote, or
// a leading # that would make the row a comment).
func appendCSVField(b []byte, f string) []byte {
	if !strings.ContainsAny(f, `,"`) && !strings.HasPrefix(f, "#") {
		return append(b, f...)
	}
	b = append(b, '"')
	b = append(b, strings.ReplaceAll(f, `"`, `""`)...)
	return append(b, '"')
}

// faceRight is the face-left zenith angle, in the file's unit, of za read
// on the instrument's reverse face (over a half turn): a full turn less
// it; or why it cannot be.
func (o *Observations) faceRight(za string) (string, string) {
	u := o.opt.AngleUnit
	want := fmt.Sprintf("a face-right zenith angle in %s (directFace is false), strictly between a half turn and a full turn", u)
	a, err := units.ParseAngle("zenith angle", za, u)
	if err != nil || !(a > math.Pi && a < 2*math.Pi) {
		return "", want
	}
	decimals := 12 // of the unit; of the seconds for packed degrees
	if u == units.PackedDMS {
		decimals = 8
	}
	f, err := units.FormatAngle(2*math.Pi-a, u, decimals)
	if err != nil {
		return "", want
	}
	return f, ""
}

// instrumentDetails registers an InstrumentDetails of the Equipment (from
// memory: id, manufacturer, model, serialNumber); ok is false for one
// without an id, which nothing can name, and which is skipped and counted.
func (o *Observations) instrumentDetails(t xml.StartElement) (bool, error) {
	s := o.s
	id, ok := attr(t, "id")
	if id = strings.TrimSpace(id); !ok || id == "" {
		return false, nil
	}
	if first, dup := o.details[id]; dup {
		return false, s.at("InstrumentDetails", "id", id, fmt.Sprintf("a unique id: line %d, column %d has it already", first.line, first.col))
	}
	s.attrsNotRead(t, detailsAttrs)
	d := &instrumentDetails{line: s.line, col: s.col}
	if v, ok := attr(t, "serialNumber"); ok {
		d.serial = strings.TrimSpace(v)
	}
	o.details[id] = d
	return true, nil
}

// setupInstrument is the profile of the instrument a setup names by its
// InstrumentDetails id: the one whose serial_number is the details'
// serialNumber; "" (the job's default_instrument) where no profile gives
// a serial number, said once in a warning; or why the setup's
// observations cannot be reduced.
func (o *Observations) setupInstrument(id string) (profile, bad string) {
	d, ok := o.details[id]
	if !ok {
		return "", o.s.at("InstrumentSetup", "instrumentDetailsID", id, "the id of an InstrumentDetails earlier in the file").Error()
	}
	if len(o.opt.Instruments) == 0 {
		if d.serial != "" && o.unnamed == nil {
			o.unnamed = &obsfile.Warning{File: o.s.file, Line: d.line, Text: fmt.Sprintf(
				"the file's InstrumentDetails name instruments by serialNumber (%q at line %d, column %d), and no [instrument.NAME] profile gives a serial_number: the job's default_instrument stands for them all",
				obsfile.Clip(d.serial), d.line, d.col)}
		}
		return "", ""
	}
	if d.serial == "" {
		return "", o.s.at("InstrumentSetup", "instrumentDetailsID", id, fmt.Sprintf(
			"an instrument the job has a profile for: the InstrumentDetails at line %d, column %d has no serialNumber, and the job's profiles are told apart by serial_number", d.line, d.col)).Error()
	}
	p, ok := o.opt.Instruments[d.serial]
	if !ok {
		return "", o.s.at("InstrumentSetup", "instrumentDetailsID", id, fmt.Sprintf(
			"an instrument the job has a profile for: the InstrumentDetails at line %d, column %d has serialNumber %q, and no [instrument.NAME] profile has serial_number = %q",
			d.line, d.col, obsfile.Clip(d.serial), obsfile.Clip(d.serial))).Error()
	}
	return p, ""
}
