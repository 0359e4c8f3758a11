package input

import (
	"encoding/csv"
	"fmt"
	"strings"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
)

// An Observation is one row of an observation file, in metres and
// radians. Optional values carry a Has flag.
type Observation struct {
	File string
	Line int

	ObsID, From, To, Instrument string
	// ObservedAt is the row's observed_at as written (checked as an
	// ISO 8601 date and time), "" where it has none.
	ObservedAt string
	// Columns are where the file has From, To and Instrument, for the
	// messages of a later stage; zero where its columns mean nothing to
	// the reader of the message (a LandXML file's stream).
	Columns Columns

	SlopeDistance float64  // as the instrument stored it
	Zenith        s1.Angle // face left, 0..π

	InstrumentHeight, TargetHeight float64 // 0 where the file has no column or a blank

	// PrismConstant is the row's prism_constant_mm, metres (the file
	// gives mm): the target's true constant, or, where the job's profile
	// says so, also the one the instrument applied.
	PrismConstant    float64
	HasPrismConstant bool
	// FieldPrismConstant is the row's field_prism_constant_mm, metres:
	// the prism constant the instrument applied on the shot.
	FieldPrismConstant    float64
	HasFieldPrismConstant bool
	// FieldPPM is the row's field_ppm: the ppm (atmospheric, scale or
	// both) the instrument applied on the shot, where HasFieldPPM; else
	// the profile's field_ppm.
	FieldPPM    float64
	HasFieldPPM bool
	// Horizontal says the row gave horizontal_distance and
	// vertical_distance, from which SlopeDistance and Zenith were derived
	// exactly. (Here, beside a bool, it takes no room.)
	Horizontal bool

	// Meteorology at the instrument and, where recorded, at the target.
	AtInstrument, AtTarget Weather

	// Fields is the row as read, for the rejects file if a later stage
	// cannot reduce it; Delimiter is its file's field delimiter (0: a
	// comma).
	Fields    []string
	Delimiter byte
}

// Columns are the 1-based columns of a file's from, to and instrument
// (0 where it has none, or they are not known).
type Columns struct{ From, To, Instrument int32 }

// Raw is the row as written, re-joined as CSV with its file's delimiter.
func (o *Observation) Raw() string { return JoinRow(o.Fields, o.Delimiter) }

// Weather is one end's meteorology.
type Weather struct {
	TemperatureC, PressureHPa, HumidityPct float64
	Has                                    bool
}

// A Point is one row of a points file, in metres and radians.
type Point struct {
	ID   string
	Line int // line in the points file

	// LatLng is the geodetic position on the job CRS's datum, when the
	// file gives lat and lon.
	LatLng    s2.LatLng
	HasLatLng bool
	// Easting and Northing are the grid position in metres, when the file
	// gives easting and northing (in the CRS's unit, converted here).
	Easting, Northing float64
	HasGrid           bool

	// EllipsoidHeight h, Elevation H (orthometric) and GeoidSeparation N,
	// each where the file gives it.
	EllipsoidHeight    float64
	HasEllipsoidHeight bool
	Elevation          float64
	HasElevation       bool
	GeoidSeparation    float64
	HasGeoidSeparation bool
}

// A Warning is something a reader noticed and went on from, such as a
// column it does not know.
type Warning struct {
	File string
	Line int
	Text string
}

func (w Warning) String() string { return fmt.Sprintf("%s:%d: %s", w.File, w.Line, w.Text) }

// JoinRow writes fields as one CSV row delimited by comma (0: a comma),
// without its line end: a row as written, for a rejects file.
func JoinRow(fields []string, comma byte) string {
	var b strings.Builder
	w := csv.NewWriter(&b)
	if comma != 0 {
		w.Comma = rune(comma)
	}
	w.Write(fields)
	w.Flush()
	return strings.TrimRight(b.String(), "\n")
}

// A RowReader reads the rows of one chunk of an observation file in turn:
// NextAppend returns the next row, with its fields appended to fields
// (Observation.Fields, which it returns extended), and io.EOF at the end.
type RowReader interface {
	NextAppend(fields []string) (Observation, []string, error)
}
