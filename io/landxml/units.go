package landxml

import (
	"encoding/xml"
	"fmt"
	"strings"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
)

// Options say what the job expects of a file's units.
type Options struct {
	// LengthUnit and AngleUnit are the job's length_unit and angle_unit:
	// the file's Units must say the same.
	LengthUnit units.LengthUnit
	AngleUnit  units.AngleUnit
	// Setting says which job settings the units come from, for the
	// error when they differ ("length_unit", "angle_unit" if empty).
	LengthSetting, AngleSetting string
	// Limits bound a tag or text (MaxLineBytes) and a name
	// (MaxFieldBytes); zero fields: obsfile.DefaultLimits.
	Limits obsfile.Limits
	// Instruments names the job's profile for each instrument serial
	// number a profile gives (serial_number), for the InstrumentDetails
	// a setup names; empty: the job's default_instrument for every setup.
	Instruments map[string]string
}

// The schema's linearUnit values geored reads (from memory of the 1.2
// schema's metLinear and impLinear enumerations: meter, millimeter,
// centimeter, kilometer; foot, USSurveyFoot, inch, mile). "foot" stands
// beside "USSurveyFoot" there, so it is the international foot. The
// others name no unit the job can have and are refused.
var linearUnits = map[string]map[string]units.LengthUnit{
	"Metric":   {"meter": units.Metre},
	"Imperial": {"foot": units.InternationalFoot, "USSurveyFoot": units.USSurveyFoot},
}

// The schema's angularType values (from memory: radians, grads, decimal
// degrees, decimal dd.mm.ss), the same in Metric and Imperial.
var angularUnits = map[string]units.AngleUnit{
	"radians":          units.Radians,
	"grads":            units.Gons,
	"decimal degrees":  units.Degrees,
	"decimal dd.mm.ss": units.PackedDMS,
}

// fileUnits are the units a file's Units element states.
type fileUnits struct {
	Length units.LengthUnit
	Angle  units.AngleUnit
}

// readUnits reads the Units element just opened: one Metric or Imperial
// child with linearUnit and angularUnit. Nothing is assumed: a missing
// attribute is an error, and so is a unit that differs from the job's.
func (s *scanner) readUnits(opt Options) (fileUnits, error) {
	var u fileUnits
	found := ""
	ul, uc := s.line, s.col
	for {
		tok, err := s.next()
		if err != nil {
			return u, err
		}
		switch t := tok.(type) {
		case xml.EndElement:
			if found == "" {
				return u, &Error{File: s.file, Line: ul, Column: uc, Element: "Units", Want: "a Metric or Imperial element with linearUnit and angularUnit: units are never guessed"}
			}
			return u, nil
		case xml.StartElement:
			sys := t.Name.Local
			if sys != "Metric" && sys != "Imperial" {
				if err := s.skip(t); err != nil {
					return u, err
				}
				continue
			}
			if found != "" {
				return u, s.at(sys, "", "", fmt.Sprintf("one unit system: this file's Units already has %s", found))
			}
			found = sys
			if u, err = s.unitAttrs(t, opt); err != nil {
				return u, err
			}
			if err := s.skipQuiet(); err != nil {
				return u, err
			}
		}
	}
}

func (s *scanner) unitAttrs(t xml.StartElement, opt Options) (fileUnits, error) {
	sys := t.Name.Local
	var u fileUnits
	lset, aset := or(opt.LengthSetting, "length_unit"), or(opt.AngleSetting, "angle_unit")
	lin, ok := attr(t, "linearUnit")
	if !ok {
		return u, s.at(sys, "linearUnit", "", "the unit of the file's lengths: units are never guessed")
	}
	lin = strings.TrimSpace(lin)
	if u.Length, ok = linearUnits[sys][lin]; !ok {
		return u, s.at(sys, "linearUnit", lin, fmt.Sprintf("%s: a unit geored reads (%s)", lengthNames(sys), lset))
	}
	if u.Length != opt.LengthUnit {
		return u, s.at(sys, "linearUnit", lin, fmt.Sprintf("the job's %s %s: the file and the job disagree (set %s = %q for this file)", lset, opt.LengthUnit, lset, u.Length.String()))
	}
	ang, ok := attr(t, "angularUnit")
	if !ok {
		return u, s.at(sys, "angularUnit", "", "the unit of the file's angles: units are never guessed (the schema's default is not assumed)")
	}
	ang = strings.TrimSpace(ang)
	if u.Angle, ok = angularUnits[ang]; !ok {
		return u, s.at(sys, "angularUnit", ang, `one of "radians", "grads", "decimal degrees", "decimal dd.mm.ss"`)
	}
	if u.Angle != opt.AngleUnit {
		return u, s.at(sys, "angularUnit", ang, fmt.Sprintf("the job's %s %s: the file and the job disagree (set %s = %q for this file)", aset, opt.AngleUnit, aset, u.Angle.String()))
	}
	return u, nil
}

func lengthNames(sys string) string {
	if sys == "Metric" {
		return `"meter"`
	}
	return `"foot" (international) or "USSurveyFoot"`
}

func or(s, def string) string {
	if s == "" {
		return def
	}
	return s
}
