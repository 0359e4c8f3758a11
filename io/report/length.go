package report

import "github.com/geored/geored/io/units"

// reportLength is the job's length unit as report.html prints it: every
// distance and height on the page is in it, as in reduced.csv and
// lines.csv; residuals, σ and tolerances stay in mm and ppm there as here.
type reportLength struct {
	unit  units.LengthUnit
	label string // in column headers: "m", "US ft", "intl ft"
	words string // in a sentence
}

// lengthOf is the summary's length unit (Settings.LengthUnit); metres
// where the summary names none.
func lengthOf(s *Summary) reportLength {
	u, err := units.ParseLengthUnit(s.Settings.LengthUnit)
	if err != nil {
		u = units.Metre
	}
	switch u {
	case units.USSurveyFoot:
		return reportLength{u, "US ft", "US survey feet (1200/3937 m)"}
	case units.InternationalFoot:
		return reportLength{u, "intl ft", "international feet (0.3048 m)"}
	}
	return reportLength{units.Metre, "m", "metres"}
}

// format writes m metres in the unit with the given decimals.
func (r reportLength) format(m float64, decimals int) string {
	return fixed(m/float64(r.unit), decimals)
}
