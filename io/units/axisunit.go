package units

import (
	"fmt"
	"math"
	"strconv"
)

// An AxisUnit is the unit of a projected CRS's easting and northing as
// PROJ describes it.
type AxisUnit struct {
	// Name is PROJ's name of the unit, e.g. "US survey foot"; "" or
	// "unknown" when the definition names none (a PROJ string with
	// +to_meter=).
	Name string
	// Code is the unit's authority code, e.g. "EPSG:9003"; "" when the
	// definition gives none.
	Code string
	// MetresPerUnit is the unit's length in metres as PROJ gives it.
	MetresPerUnit float64
}

// axisUnitCodes are the EPSG units of measure that a CRS's grid
// coordinates may be in: 9001 metre, 9002 foot (the international foot),
// 9003 US survey foot (EPSG Geodetic Parameter Dataset, table of units of
// measure).
var axisUnitCodes = map[string]LengthUnit{
	"EPSG:9001": Metre,
	"EPSG:9002": InternationalFoot,
	"EPSG:9003": USSurveyFoot,
}

// axisUnitULPs is how many units in the last place a CRS's length of a
// unit may differ from the unit's definition and still be that unit.
//
// PROJ 9.1.1's proj.db gives the US survey foot of every EPSG grid in it
// (EPSG:2231, 2263, …) as 0.30480060960121924 m, the double one ulp
// above 1200/3937 (0.3048006096012192), which is what its PROJ-string unit
// us-ft gives; both are the US survey foot. The next factors that a person
// writes, 0.3048006096 (10 significant digits, 0.004 mm in 1000 km) or
// 0.3048006 (0.03 ppm: 29 mm across a 914 km grid, 3,000,000 ft), are
// not, and are refused rather than rounded to it.
const axisUnitULPs = 4

// LengthUnit returns the length unit a CRS's easting and northing are in:
// the unit named by its EPSG code where PROJ gives one (the CRS's length
// of the unit must then agree with the code's to within 4 ulps), and
// otherwise the unit whose length it is to within 4 ulps. Any other unit
// (Clarke's foot, a chain, the Indian yard, …) is an *AxisUnitError that
// names the unit and gives its length in metres.
func (a AxisUnit) LengthUnit() (LengthUnit, error) {
	if a.Code != "" {
		u, ok := axisUnitCodes[a.Code]
		if !ok {
			return 0, &AxisUnitError{Unit: a, Reason: readsOnly}
		}
		if !nearlyEqual(a.MetresPerUnit, float64(u)) {
			return 0, &AxisUnitError{Unit: a, Reason: fmt.Sprintf("that code is the %s, %s m", lengthUnitWords[u], exactLength[u])}
		}
		return u, nil
	}
	for _, u := range []LengthUnit{Metre, USSurveyFoot, InternationalFoot} {
		if nearlyEqual(a.MetresPerUnit, float64(u)) {
			return u, nil
		}
	}
	reason := readsOnly
	var near LengthUnit
	ppm := math.Inf(1)
	for _, u := range []LengthUnit{Metre, USSurveyFoot, InternationalFoot} {
		if d := (a.MetresPerUnit/float64(u) - 1) / 1e-6; math.Abs(d) < math.Abs(ppm) {
			near, ppm = u, d
		}
	}
	if math.Abs(ppm) < 100 {
		reason = fmt.Sprintf("%.3g ppm from the %s (%s m), so not that unit; if the %s is meant, name it (+units=%s in a PROJ string)", ppm, lengthUnitWords[near], exactLength[near], lengthUnitWords[near], projUnitName[near])
	}
	return 0, &AxisUnitError{Unit: a, Reason: reason}
}

const readsOnly = "geored reads easting and northing in metres, US survey feet (1200/3937 m) or international feet (0.3048 m) only"

// lengthUnitWords, exactLength and projUnitName name the units in errors.
var (
	lengthUnitWords = map[LengthUnit]string{Metre: "metre", USSurveyFoot: "US survey foot", InternationalFoot: "international foot"}
	exactLength     = map[LengthUnit]string{Metre: "1", USSurveyFoot: "1200/3937", InternationalFoot: "0.3048"}
	projUnitName    = map[LengthUnit]string{Metre: "m", USSurveyFoot: "us-ft", InternationalFoot: "ft"}
)

// nearlyEqual reports whether a is within axisUnitULPs ulps of b.
func nearlyEqual(a, b float64) bool {
	ulp := math.Nextafter(b, math.Inf(1)) - b
	return math.Abs(a-b) <= axisUnitULPs*ulp
}

// An AxisUnitError reports a CRS axis unit that geored does not read grid
// coordinates in.
type AxisUnitError struct {
	Unit   AxisUnit
	Reason string
}

func (e *AxisUnitError) Error() string {
	return fmt.Sprintf("the CRS's axis unit %s is %s m per unit: %s", e.Unit.words(), strconv.FormatFloat(e.Unit.MetresPerUnit, 'g', -1, 64), e.Reason)
}

// words names the unit for a message: its name and code, as far as known.
func (a AxisUnit) words() string {
	s := "(unnamed)"
	if a.Name != "" && a.Name != "unknown" {
		s = strconv.Quote(a.Name)
	}
	if a.Code != "" {
		s += " (" + a.Code + ")"
	}
	return s
}
