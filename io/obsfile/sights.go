package obsfile

import (
	"fmt"
	"io"

	"github.com/geored/geored/io/units"
)

// A Sight is one row of a pairs file: a line to be observed, with what
// will stand over its marks. Lengths are metres.
type Sight struct {
	Line int // line in the pairs file

	From, To string // the marks of the instrument and the target
	// Instrument names the instrument profile; "" for the job's default.
	Instrument string

	// InstrumentHeight and TargetHeight are the heights over the marks.
	InstrumentHeight, TargetHeight float64

	PrismConstant    float64 // metres (the file gives mm)
	HasPrismConstant bool

	// The air at the instrument and, where recorded, at the target.
	AtInstrument, AtTarget Weather
}

// maxSightHeight bounds an instrument or target height over its mark,
// metres: beyond it the value is a blunder.
const maxSightHeight = 100.0

// Pairs file columns: the air at each end is three columns.
var (
	airAtInstrument = [...]string{colTemp, colPressure, colHumidity}
	airAtTarget     = [...]string{colTempTo, colPresTo, colHumTo}
	sightColumns    = []string{colFrom, colTo, colHI, colHT, colInstr, colPrism,
		colTemp, colPressure, colHumidity, colTempTo, colPresTo, colHumTo}
	sightNumeric = []string{colHI, colHT, colPrism, colTemp, colPressure, colHumidity, colTempTo, colPresTo, colHumTo}
)

// ReadSights reads a pairs file: the columns from, to, instrument_height
// and target_height (heights in heightUnit, within ±100 m), and optionally
// instrument, prism_constant_mm, and temperature_c, pressure_hpa and
// humidity_pct at the instrument (with the suffix _to at the target), the
// three given together or not at all. Its fields are delimited by delim
// (DelimiterAuto: found from the header), with a decimal comma in a
// semicolon or tab file, as the observation file's. It reports every bad
// row (up to 50) in one joined error; each unknown column is one warning.
func ReadSights(r io.Reader, file string, heightUnit units.LengthUnit, delim Delimiter) ([]Sight, []Warning, error) {
	if heightUnit == 0 {
		return nil, nil, fmt.Errorf("%s: height unit not set", file)
	}
	t, warnings, err := openTable(r, file, sightColumns, DefaultLimits, csvFormat{delim: delim, numeric: sightNumeric})
	if err != nil {
		return nil, nil, err
	}
	if err := t.require(colFrom, colTo, colHI, colHT); err != nil {
		return nil, warnings, err
	}
	for _, air := range [...][3]string{airAtInstrument, airAtTarget} {
		if err := t.together(air[:]...); err != nil {
			return nil, warnings, err
		}
	}
	var sights []Sight
	err = t.eachRow("sights", func() error {
		s, err := t.sight(heightUnit)
		if err == nil {
			sights = append(sights, s)
		}
		return err
	})
	if err != nil {
		return nil, warnings, err
	}
	return sights, warnings, nil
}

func (t *table) sight(u units.LengthUnit) (Sight, error) {
	s := Sight{Line: t.line, From: t.get(colFrom), To: t.get(colTo), Instrument: t.get(colInstr)}
	switch {
	case s.From == "":
		return s, t.fieldError(colFrom, "the id of the instrument's mark", nil)
	case s.To == "":
		return s, t.fieldError(colTo, "the id of the target's mark", nil)
	case s.From == s.To:
		return s, t.fieldError(colTo, fmt.Sprintf("a target other than the station %q", s.From), nil)
	}
	limit := maxSightHeight / float64(u)
	want := fmt.Sprintf("a height over the mark in %s within ±%.4g", u, limit)
	for _, h := range [...]struct {
		name string
		dst  *float64
	}{{colHI, &s.InstrumentHeight}, {colHT, &s.TargetHeight}} {
		v, err := t.number(h.name, want, -limit, limit)
		if err != nil {
			return s, err
		}
		*h.dst = v * float64(u)
	}
	mm, ok, err := t.optionalNumber(colPrism, "a prism constant in mm within ±1000", -1000, 1000)
	if err != nil {
		return s, err
	}
	s.PrismConstant, s.HasPrismConstant = mm/1000, ok
	if s.AtInstrument, err = t.weather(airAtInstrument); err != nil {
		return s, err
	}
	if s.AtTarget, err = t.weather(airAtTarget); err != nil {
		return s, err
	}
	return s, nil
}

// weather reads one end's air from the columns names (temperature,
// pressure, humidity): all three or none.
func (t *table) weather(names [3]string) (Weather, error) {
	given := 0
	for _, n := range names {
		if t.get(n) != "" {
			given++
		}
	}
	switch given {
	case 0:
		return Weather{}, nil
	case len(names):
	default:
		for _, n := range names {
			if t.get(n) == "" {
				return Weather{}, t.fieldError(n, "a value: temperature, pressure and humidity are given together or not at all", nil)
			}
		}
	}
	var w Weather
	var err error
	if w.TemperatureC, err = t.number(names[0], "a temperature in -60..60 °C", -60, 60); err != nil {
		return w, err
	}
	if w.PressureHPa, err = t.number(names[1], "a pressure in 500..1100 hPa", 500, 1100); err != nil {
		return w, err
	}
	if w.HumidityPct, err = t.number(names[2], "a relative humidity in 0..100 %", 0, 100); err != nil {
		return w, err
	}
	w.Has = true
	return w, nil
}
