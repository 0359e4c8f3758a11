package obsfile

import (
	"fmt"
	"io"
	"math"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"

	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/input"
)

// A Point is one row of a points file, in metres and radians
// (input.Point).
type Point = input.Point

// PointOptions say the units of the points file.
type PointOptions struct {
	// GridUnit is the unit of easting and northing: the CRS's own unit,
	// recognised from PROJ's description by units.AxisUnit.LengthUnit
	// (never a bare metres-per-unit from PROJ, which is not a LengthUnit
	// for the US survey foot of proj.db's grids).
	GridUnit units.LengthUnit
	// HeightUnit is the unit of ellipsoid_height, elevation and
	// geoid_separation: the job's length unit.
	HeightUnit units.LengthUnit
	// LatLonUnit is the angle unit of lat and lon (units.Degrees if zero).
	LatLonUnit units.AngleUnit
	// Limits bound the file (zero fields: DefaultLimits), MaxPoints its
	// rows.
	Limits Limits
	// Delimiter of the file's fields: DelimiterAuto finds it from the
	// header (FindDelimiter).
	Delimiter Delimiter
}

// Point file columns.
var pointColumns = []string{"id", "lat", "lon", "ellipsoid_height", "easting", "northing", "elevation", "geoid_separation"}

// maxErrors bounds how many bad rows a reader reports before it stops.
const maxErrors = 50

// ReadPoints reads a points file: a column id and, per row, either lat and
// lon (with ellipsoid_height) or easting and northing (with elevation);
// geoid_separation is optional. Heights may be left blank where unknown. It
// reports every bad row (up to 50) in one joined error, and refuses
// repeated ids.
func ReadPoints(r io.Reader, file string, opt PointOptions) ([]Point, []Warning, error) {
	var pts []Point
	seen := map[string]int{}
	warnings, err := EachPoint(r, file, opt, func(p Point) int {
		if first, dup := seen[p.ID]; dup {
			return first
		}
		seen[p.ID] = p.Line
		pts = append(pts, p)
		return 0
	})
	if err != nil {
		return nil, warnings, err
	}
	return pts, warnings, nil
}

// EachPoint reads a points file as ReadPoints does, handing each point to
// add in file order instead of keeping them, so that a caller can keep
// what it needs of a large file and no more. add keeps a point and
// returns 0, or returns the line of the earlier point with the same id,
// which makes this row a duplicate error. The points handed over before
// an error are not valid: the file is wrong as a whole. p.ID may share
// memory with the row (keep a copy).
func EachPoint(r io.Reader, file string, opt PointOptions, add func(p Point) (firstLine int)) ([]Warning, error) {
	if opt.LatLonUnit == 0 {
		opt.LatLonUnit = units.Degrees
	}
	lim := opt.Limits.OrDefault()
	t, warnings, err := openTable(r, file, pointColumns, lim, csvFormat{delim: opt.Delimiter, numeric: pointColumns[1:]})
	if err != nil {
		return nil, err
	}
	if err := t.require("id"); err != nil {
		return warnings, err
	}
	geo, grid := t.has("lat") && t.has("lon"), t.has("easting") && t.has("northing")
	if !geo && !grid {
		return warnings, t.headerError(t.line, "want columns lat and lon, or easting and northing")
	}
	kept := 0
	err = t.eachRow("points", func() error {
		if kept == lim.MaxPoints {
			return &LimitError{File: file, Line: t.line, What: "this point", Max: lim.MaxPoints, Unit: "points", Key: LimitPointsKey}
		}
		p, err := t.point(opt, geo, grid)
		if err != nil {
			return err
		}
		if first := add(p); first != 0 {
			return t.fieldError("id", fmt.Sprintf("a unique id; %q is already on line %d", Clip(p.ID), first), nil)
		}
		kept++
		return nil
	})
	return warnings, err
}

func (t *table) point(opt PointOptions, geo, grid bool) (Point, error) {
	p := Point{ID: t.get("id"), Line: t.line}
	if p.ID == "" {
		return p, t.fieldError("id", "a point id", nil)
	}
	var err error
	if geo && (t.get("lat") != "" || t.get("lon") != "") {
		var lat, lon s1.Angle
		if lat, err = t.angle("lat", opt.LatLonUnit, -90, 90); err != nil {
			return p, err
		}
		if lon, err = t.angle("lon", opt.LatLonUnit, -180, 360); err != nil {
			return p, err
		}
		p.LatLng, p.HasLatLng = s2.LatLng{Lat: lat, Lng: lon}.Normalized(), true
	}
	if grid && (t.get("easting") != "" || t.get("northing") != "") {
		if p.Easting, err = t.length("easting", opt.GridUnit, false); err != nil {
			return p, err
		}
		if p.Northing, err = t.length("northing", opt.GridUnit, false); err != nil {
			return p, err
		}
		p.HasGrid = true
	}
	if !p.HasLatLng && !p.HasGrid {
		return p, &FieldError{File: t.file, Line: t.line, Want: fmt.Sprintf("point %q: lat and lon, or easting and northing", Clip(p.ID))}
	}
	if p.EllipsoidHeight, p.HasEllipsoidHeight, err = t.optionalLength("ellipsoid_height", opt.HeightUnit); err != nil {
		return p, err
	}
	if p.Elevation, p.HasElevation, err = t.optionalLength("elevation", opt.HeightUnit); err != nil {
		return p, err
	}
	if p.GeoidSeparation, p.HasGeoidSeparation, err = t.optionalLength("geoid_separation", opt.HeightUnit); err != nil {
		return p, err
	}
	return p, nil
}

// angle parses a required angle column and checks it lies in [lo, hi]
// degrees.
func (t *table) angle(name string, u units.AngleUnit, lo, hi float64) (s1.Angle, error) {
	v := t.get(name)
	if v == "" {
		return 0, t.fieldError(name, fmt.Sprintf("an angle in %s", u), nil)
	}
	a, err := units.ParseAngleMark(name, v, u, t.markOf())
	if err != nil {
		return 0, t.fieldError(name, fmt.Sprintf("an angle in %s", u)+t.markText(v), err)
	}
	if d := a.Degrees(); d < lo || d > hi {
		return 0, t.fieldError(name, fmt.Sprintf("a value in %g..%g degrees", lo, hi), nil)
	}
	return a, nil
}

// length parses a required length column to metres.
func (t *table) length(name string, u units.LengthUnit, positive bool) (float64, error) {
	v := t.get(name)
	want := fmt.Sprintf("a length in %s", u)
	if positive {
		want = fmt.Sprintf("a positive length in %s", u)
	}
	if v == "" {
		return 0, t.fieldError(name, want, nil)
	}
	m, err := units.ParseLengthMark(name, v, u, t.markOf())
	if err != nil {
		return 0, t.fieldError(name, want+t.markText(v), err)
	}
	if positive && !(m > 0) {
		return 0, t.fieldError(name, want, nil)
	}
	return m, nil
}

// optionalLength parses a length column that may be absent or blank.
func (t *table) optionalLength(name string, u units.LengthUnit) (float64, bool, error) {
	if t.get(name) == "" {
		return 0, false, nil
	}
	m, err := t.length(name, u, false)
	if err != nil {
		return 0, false, err
	}
	if math.Abs(m) > 1e5 {
		return 0, false, t.fieldError(name, "a height within ±100 km", nil)
	}
	return m, true, nil
}
