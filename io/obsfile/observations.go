package obsfile

import (
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/golang/geo/s1"

	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/input"
)

// An Observation is one row of an observation file, in metres and
// radians (input.Observation); Weather is one end's meteorology.
type (
	Observation = input.Observation
	Weather     = input.Weather
)

// ObsOptions say the units of an observation file.
type ObsOptions struct {
	LengthUnit units.LengthUnit // slope distance and heights
	AngleUnit  units.AngleUnit  // zenith angle
	Limits     Limits           // zero fields: DefaultLimits
	// Delimiter of the file's fields: DelimiterAuto finds it from the
	// header (FindDelimiter).
	Delimiter Delimiter
	// NoColumns leaves Observation.Columns nil: the file's columns are
	// not the ones a message should name (a LandXML file's CSV stream).
	NoColumns bool
}

// Observation file columns.
const (
	colFrom      = "from"
	colTo        = "to"
	colSlope     = "slope_distance"
	colZenith    = "zenith_angle"
	colHD        = "horizontal_distance"
	colVD        = "vertical_distance"
	colHI        = "instrument_height"
	colHT        = "target_height"
	colTemp      = "temperature_c"
	colPressure  = "pressure_hpa"
	colHumidity  = "humidity_pct"
	colTempTo    = "temperature_c_to"
	colPresTo    = "pressure_hpa_to"
	colHumTo     = "humidity_pct_to"
	colPrism     = "prism_constant_mm"
	colField     = "field_prism_constant_mm"
	colFieldPPM  = "field_ppm"
	colTime      = "observed_at"
	colInstr     = "instrument"
	colObsID     = "obs_id"
	maxHeightAbs = 1000.0 // metres: an instrument or target height beyond this is a blunder
	maxFieldPPM  = 1000.0 // an applied ppm beyond this is a blunder (about 90 °C of air)
)

var obsColumns = []string{colFrom, colTo, colSlope, colZenith, colHD, colVD, colHI, colHT, colTemp, colPressure, colHumidity,
	colTempTo, colPresTo, colHumTo, colPrism, colField, colFieldPPM, colInstr, colObsID, colTime}

// obsNumeric are the observation file's columns that hold numbers.
var obsNumeric = []string{colSlope, colZenith, colHD, colVD, colHI, colHT, colTemp, colPressure, colHumidity,
	colTempTo, colPresTo, colHumTo, colPrism, colField, colFieldPPM}

// An ObsReader streams an observation file row by row; it holds one row
// at a time.
type ObsReader struct {
	t   *table
	opt ObsOptions
	// column indexes, −1 where absent
	from, to, slope, zenith, hd, vd, hi, ht, temp, pres, hum, tempTo, presTo, humTo, prism, fieldPrism, fieldPPM, instr, obsID, time int
	// comma is whether the file's decimal mark is a comma (t.mark), as
	// of the row being parsed.
	comma bool
	// cols are from, to and instrument's columns, for every row
	// (Observation.Columns); zero with ObsOptions.NoColumns.
	cols input.Columns
}

// A RowError is a row that cannot be used; the reader goes on after it.
// Raw is the row as written.
type RowError struct {
	Raw string
	Err *FieldError
}

func (e *RowError) Error() string { return e.Err.Error() }
func (e *RowError) Unwrap() error { return e.Err }

// RejectedRow says where the row is and what it was, for its reject
// (reduce/job.RowError).
func (e *RowError) RejectedRow() (file string, line int, raw string) {
	return e.Err.File, e.Err.Line, e.Raw
}

// NewObsReader reads the header of an observation file. A missing required
// column (from, to, and slope_distance with zenith_angle or
// horizontal_distance with vertical_distance) stops here, before any work;
// each unknown column is one warning.
func NewObsReader(r io.Reader, file string, opt ObsOptions) (*ObsReader, []Warning, error) {
	if opt.LengthUnit == 0 || opt.AngleUnit == 0 {
		return nil, nil, fmt.Errorf("%s: observation units not set", file)
	}
	t, warnings, err := openTable(r, file, obsColumns, opt.Limits.OrDefault(), csvFormat{delim: opt.Delimiter, numeric: obsNumeric})
	if err != nil {
		return nil, nil, err
	}
	if err := obsRequire(t); err != nil {
		return nil, warnings, err
	}
	idx := func(name string) int {
		if i, ok := t.col[name]; ok {
			return i
		}
		return -1
	}
	o := &ObsReader{t: t, opt: opt,
		from: idx(colFrom), to: idx(colTo), slope: idx(colSlope), zenith: idx(colZenith), hd: idx(colHD), vd: idx(colVD),
		hi: idx(colHI), ht: idx(colHT), temp: idx(colTemp), pres: idx(colPressure), hum: idx(colHumidity),
		tempTo: idx(colTempTo), presTo: idx(colPresTo), humTo: idx(colHumTo),
		prism: idx(colPrism), fieldPrism: idx(colField), fieldPPM: idx(colFieldPPM), instr: idx(colInstr), obsID: idx(colObsID),
		time: idx(colTime)}
	if !opt.NoColumns {
		o.cols = input.Columns{From: int32(o.from + 1), To: int32(o.to + 1), Instrument: int32(o.instr + 1)}
	}
	if (o.temp >= 0) != (o.pres >= 0) || (o.temp >= 0) != (o.hum >= 0) {
		return nil, warnings, &HeaderError{File: file, Line: t.line, Reason: "temperature_c, pressure_hpa and humidity_pct go together"}
	}
	if (o.tempTo >= 0) != (o.presTo >= 0) || (o.tempTo >= 0) != (o.humTo >= 0) {
		return nil, warnings, &HeaderError{File: file, Line: t.line, Reason: "temperature_c_to, pressure_hpa_to and humidity_pct_to go together"}
	}
	return o, warnings, nil
}

// obsRequire checks that the header has from, to, and slope_distance with
// zenith_angle or horizontal_distance with vertical_distance (or both
// pairs, each row then giving one).
func obsRequire(t *table) error {
	if !t.has(colHD) && !t.has(colVD) {
		return t.require(colFrom, colTo, colSlope, colZenith)
	}
	if err := t.require(colFrom, colTo); err != nil {
		return err
	}
	if err := t.together(colHD, colVD); err != nil {
		return err
	}
	return t.together(colSlope, colZenith)
}

// Next returns the next observation. At the end it returns io.EOF. A bad
// row gives a *RowError and the reader can go on; any other error (an
// unreadable file, broken CSV quoting) ends the file.
func (o *ObsReader) Next() (Observation, error) {
	obs, _, err := o.NextAppend(nil)
	return obs, err
}

// NextAppend is Next that keeps the row's fields (Observation.Fields) in
// fields, appended, and returns it extended: a caller that reads many rows
// into one buffer it reuses makes no garbage per row.
func (o *ObsReader) NextAppend(fields []string) (Observation, []string, error) {
	if err := o.t.next(); err != nil {
		var fe *FieldError
		if errors.As(err, &fe) && fe.Field == "" && o.t.row != nil && fe.Err == nil {
			return Observation{}, fields, &RowError{Raw: o.t.raw(), Err: fe}
		}
		return Observation{}, fields, err
	}
	o.comma = o.t.mark.mark == units.DecimalComma
	n := len(fields)
	fields = append(fields, o.t.row...)
	obs, fe := o.parse(fields[n:len(fields):len(fields)])
	if fe != nil {
		return Observation{}, fields[:n], &RowError{Raw: o.t.raw(), Err: fe}
	}
	return obs, fields, nil
}

func (o *ObsReader) field(i int) string {
	if i < 0 {
		return ""
	}
	return trim(o.t.row[i])
}

// trim removes surrounding blanks without allocating.
func trim(s string) string {
	for len(s) > 0 && (s[0] == ' ' || s[0] == '\t') {
		s = s[1:]
	}
	for len(s) > 0 && (s[len(s)-1] == ' ' || s[len(s)-1] == '\t' || s[len(s)-1] == '\r') {
		s = s[:len(s)-1]
	}
	return s
}

func (o *ObsReader) bad(i int, want string) *FieldError {
	line, _ := o.t.fieldPos(i)
	return &FieldError{File: o.t.file, Line: line, Column: i + 1, Field: o.t.header[i], Value: o.t.row[i], Want: want}
}

// number parses a finite decimal number in column i, with the file's
// decimal mark; want says what was expected, built only when the value is
// bad.
func (o *ObsReader) number(i int, want func() string) (float64, *FieldError) {
	if o.comma {
		return o.numberComma(i, want)
	}
	v, err := units.ParseFloat(o.field(i))
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, o.bad(i, want()+o.t.markText(o.field(i)))
	}
	return v, nil
}

// numberComma is number in a file whose decimal mark is a comma.
func (o *ObsReader) numberComma(i int, want func() string) (float64, *FieldError) {
	v, err := units.ParseFloatMark(o.field(i), units.DecimalComma)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, o.bad(i, want()+o.t.markText(o.field(i)))
	}
	return v, nil
}

// wants is a fixed description of an expected value.
func wants(s string) func() string { return func() string { return s } }

func (o *ObsReader) parse(fields []string) (Observation, *FieldError) {
	t := o.t
	ob := Observation{File: t.file, Line: t.line,
		From: o.field(o.from), To: o.field(o.to), Instrument: o.field(o.instr), ObsID: o.field(o.obsID),
		Fields: fields, Delimiter: byte(t.delim), Columns: o.cols}
	if ob.From == "" {
		return ob, o.bad(o.from, "the id of the instrument station")
	}
	if ob.To == "" {
		return ob, o.bad(o.to, "the id of the target point")
	}
	if ob.From == ob.To {
		return ob, o.bad(o.to, fmt.Sprintf("a target other than the station %q", ob.From))
	}
	u := o.opt.LengthUnit
	var fe *FieldError
	slope := true // the row gives slope_distance and zenith_angle
	if o.hd >= 0 {
		if slope, fe = o.distances(&ob); fe != nil {
			return ob, fe
		}
	}
	if slope {
		v, fe := o.number(o.slope, func() string { return fmt.Sprintf("a slope distance in %s", u) })
		if fe != nil {
			return ob, fe
		}
		if !(v > 0) || v*float64(u) > 1e5 {
			return ob, o.bad(o.slope, fmt.Sprintf("a slope distance in %s, > 0 and at most 100 km", u))
		}
		ob.SlopeDistance = v * float64(u)
		var z s1.Angle
		var err error
		if o.comma {
			z, err = units.ParseZenithAngleMark(o.field(o.zenith), o.opt.AngleUnit, units.DecimalComma)
		} else {
			z, err = units.ParseZenithAngle(o.field(o.zenith), o.opt.AngleUnit)
		}
		if err != nil {
			return ob, &FieldError{File: t.file, Line: ob.Line, Column: o.zenith + 1, Field: colZenith, Value: t.row[o.zenith], Want: zenithWant(err, o.opt.AngleUnit) + t.markText(o.field(o.zenith)), Err: err}
		}
		ob.Zenith = z
	}
	for _, h := range [...]struct {
		i   int
		dst *float64
	}{{o.hi, &ob.InstrumentHeight}, {o.ht, &ob.TargetHeight}} {
		if h.i < 0 || o.field(h.i) == "" {
			continue
		}
		v, fe := o.number(h.i, func() string { return fmt.Sprintf("a height in %s", u) })
		if fe != nil {
			return ob, fe
		}
		if math.Abs(v*float64(u)) > maxHeightAbs {
			return ob, o.bad(h.i, fmt.Sprintf("a height within ±%g m", maxHeightAbs))
		}
		*h.dst = v * float64(u)
	}
	if o.prism >= 0 { // the test here keeps the call off a file without the column
		if ob.PrismConstant, ob.HasPrismConstant, fe = o.prismConstant(o.prism, wantTargetPrism); fe != nil {
			return ob, fe
		}
	}
	if o.fieldPrism >= 0 {
		if ob.FieldPrismConstant, ob.HasFieldPrismConstant, fe = o.prismConstant(o.fieldPrism, wantAppliedPrism); fe != nil {
			return ob, fe
		}
	}
	if o.fieldPPM >= 0 && o.field(o.fieldPPM) != "" {
		v, fe := o.number(o.fieldPPM, wants("the ppm the instrument applied"))
		if fe != nil {
			return ob, fe
		}
		if math.Abs(v) > maxFieldPPM {
			return ob, o.bad(o.fieldPPM, fmt.Sprintf("the ppm the instrument applied, within ±%g ppm", maxFieldPPM))
		}
		ob.FieldPPM, ob.HasFieldPPM = v, true
	}
	if o.time >= 0 && o.field(o.time) != "" {
		v := o.field(o.time)
		if _, err := ParseObservedAt(v); err != nil {
			return ob, o.bad(o.time, "the date and time of the observation, ISO 8601 as 2026-05-14T09:31:07 (seconds, fraction and zone, Z or ±hh:mm, optional; a space for the T)")
		}
		ob.ObservedAt = v
	}
	var err2 *FieldError
	if ob.AtInstrument, err2 = o.weather(o.temp, o.pres, o.hum); err2 != nil {
		return ob, err2
	}
	if ob.AtTarget, err2 = o.weather(o.tempTo, o.presTo, o.humTo); err2 != nil {
		return ob, err2
	}
	return ob, nil
}

// distances reads a row of a file with horizontal_distance and
// vertical_distance columns: either pair, given whole, and not both. It
// reads the horizontal pair into ob, or returns slope true for a row
// whose slope_distance and zenith_angle the caller reads.
func (o *ObsReader) distances(ob *Observation) (bool, *FieldError) {
	given := func(i int) bool { return i >= 0 && o.field(i) != "" }
	slope := given(o.slope) || given(o.zenith)
	horiz := given(o.hd) || given(o.vd)
	switch {
	case slope && horiz:
		i := o.hd
		if !given(i) {
			i = o.vd
		}
		return false, o.bad(i, "a blank: a row gives slope_distance and zenith_angle or horizontal_distance and vertical_distance, not both")
	case slope:
		return true, nil
	case !horiz:
		if o.slope >= 0 {
			return false, o.bad(o.slope, "a slope distance and zenith angle, or a horizontal_distance and vertical_distance")
		}
		return false, o.bad(o.hd, "a horizontal distance and vertical distance")
	}
	u := o.opt.LengthUnit
	if !given(o.vd) {
		return false, o.bad(o.vd, fmt.Sprintf("a vertical distance in %s: horizontal_distance and vertical_distance go together", u))
	}
	if !given(o.hd) {
		return false, o.bad(o.hd, fmt.Sprintf("a horizontal distance in %s: horizontal_distance and vertical_distance go together", u))
	}
	hd, fe := o.number(o.hd, func() string { return fmt.Sprintf("a horizontal distance in %s", u) })
	if fe != nil {
		return false, fe
	}
	if !(hd > 0) || hd*float64(u) > 1e5 {
		return false, o.bad(o.hd, fmt.Sprintf("a horizontal distance in %s, > 0 and at most 100 km", u))
	}
	vd, fe := o.number(o.vd, func() string { return fmt.Sprintf("a vertical distance in %s", u) })
	if fe != nil {
		return false, fe
	}
	s, z := SlopeFromHorizontal(hd*float64(u), vd*float64(u))
	if s > 1e5 {
		return false, o.bad(o.vd, fmt.Sprintf("a vertical distance in %s that keeps the slope distance within 100 km", u))
	}
	ob.SlopeDistance, ob.Zenith, ob.Horizontal = s, z, true
	return false, nil
}

// SlopeFromHorizontal returns the slope distance S and the face-left
// zenith angle z from which a total station computed the horizontal
// distance hd and the vertical distance vd it stored (metres):
//
//	S = sqrt(hd² + vd²),  z = atan2(hd, vd)
//
// The instrument's hd and vd are taken to be its own reduction of the
// slope distance it measured (with its ppm and prism constant applied) at
// the zenith angle it observed, at its horizon and with no correction for
// the earth's curvature or refraction: hd = S sin z, vd = S cos z, from
// the trunnion axis to the reflector, vd positive up (common practice for
// total stations' horizontal and vertical distance, from memory; an
// instrument set to correct them for curvature and refraction stores
// other values, which this does not undo). So the conversion is exact,
// and the chain's corrections then apply where they belong: the
// instrument constants and the first and second velocity corrections to
// S, refraction (k) to z, and the geometry by its routes. With both
// marks' heights known that is the chord on Euler's radius from S; else,
// with z' = z + δ, the zenith route's
//
//	ψ = atan2(S sin z', R + hA + S cos z')
//
// which for δ = 0 is the horizontal distance at the instrument's horizon
// reduced through its elevation and the curvature of the horizon plane,
// s = R atan(hd/(R + hA + vd)) (Rüeger 1996; Torge & Müller 2012
// [memory]). Scaling hd instead of S would apply the constants to the
// wrong length: an additive constant c lengthens hd by c sin z, not c.
func SlopeFromHorizontal(hd, vd float64) (float64, s1.Angle) {
	return math.Hypot(hd, vd), s1.Angle(math.Atan2(hd, vd))
}

// What a prism constant column holds, for its errors.
const (
	wantTargetPrism  = "the target's prism constant"
	wantAppliedPrism = "the prism constant the instrument applied"
)

// prismConstant reads a prism constant in mm from column i (≥ 0), in
// metres; has is false where the row has a blank.
func (o *ObsReader) prismConstant(i int, what string) (m float64, has bool, fe *FieldError) {
	if o.field(i) == "" {
		return 0, false, nil
	}
	v, fe := o.number(i, func() string { return what + " in mm" })
	if fe != nil {
		return 0, false, fe
	}
	if math.Abs(v) > 1000 {
		return 0, false, o.bad(i, what+" within ±1000 mm")
	}
	return v / 1000, true, nil
}

// weather reads one end's temperature, pressure and humidity: all three or
// none.
func (o *ObsReader) weather(ti, pi, hi int) (Weather, *FieldError) {
	if ti < 0 {
		return Weather{}, nil
	}
	blank := 0
	for _, i := range [...]int{ti, pi, hi} {
		if o.field(i) == "" {
			blank++
		}
	}
	switch blank {
	case 3:
		return Weather{}, nil
	case 0:
	default:
		for _, i := range [...]int{ti, pi, hi} {
			if o.field(i) == "" {
				return Weather{}, o.bad(i, "a value: temperature, pressure and humidity are given together or not at all")
			}
		}
	}
	var w Weather
	var fe *FieldError
	if w.TemperatureC, fe = o.number(ti, wants("a temperature in °C")); fe != nil {
		return w, fe
	}
	if w.TemperatureC < -60 || w.TemperatureC > 60 {
		return w, o.bad(ti, "a temperature in -60..60 °C")
	}
	if w.PressureHPa, fe = o.number(pi, wants("a pressure in hPa")); fe != nil {
		return w, fe
	}
	if w.PressureHPa < 500 || w.PressureHPa > 1100 {
		return w, o.bad(pi, "a pressure in 500..1100 hPa")
	}
	if w.HumidityPct, fe = o.number(hi, wants("a relative humidity in %")); fe != nil {
		return w, fe
	}
	if w.HumidityPct < 0 || w.HumidityPct > 100 {
		return w, o.bad(hi, "a relative humidity in 0..100 %")
	}
	w.Has = true
	return w, nil
}

func zenithWant(err error, u units.AngleUnit) string {
	var re *units.RangeError
	if errors.As(err, &re) {
		return fmt.Sprintf("a zenith angle in %s within %s (face left: 0 is straight up, %s straight down)", u, rangeText(re), strconv.FormatFloat(re.Max, 'g', -1, 64))
	}
	return fmt.Sprintf("a zenith angle in %s", u)
}

// rangeText writes a range as "0..200 gon", with "exclusive" where both
// ends are excluded.
func rangeText(re *units.RangeError) string {
	t := strconv.FormatFloat(re.Min, 'g', -1, 64) + ".." + strconv.FormatFloat(re.Max, 'g', -1, 64) + " " + re.Unit
	if re.MinOpen && re.MaxOpen {
		t += " exclusive"
	}
	return t
}
