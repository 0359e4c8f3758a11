package geodesic

import (
	"fmt"
	"strings"
)

// A CRS is a job's projected coordinate reference system, opened once per
// job. It records the CRS's own geodetic datum and ellipsoid as PROJ's
// database gives them (never an assumed WGS 84) and the PROJ string of its
// map projection, in metres, from which each worker builds its Projector.
// A CRS is immutable and safe for concurrent use.
type CRS struct {
	definition    string
	name          string
	datum         string
	ellipsoid     Ellipsoid
	unit          string
	unitCode      string
	metresPerUnit float64
	projection    string
	conformal     bool
	area          Area
}

// Area is a CRS's area of use as proj.db gives it: a bounding box in
// degrees of longitude (West, East; East < West where it crosses the
// antimeridian) and latitude (South, North). Known is false for a CRS
// that has none, such as one given as a PROJ string.
type Area struct {
	West, South, East, North float64
	Known                    bool
}

// OpenCRS opens a projected CRS from "AUTHORITY:CODE" (e.g. "EPSG:32633"),
// a WKT or PROJJSON text, or a PROJ string ("+proj=utm +zone=33
// +ellps=GRS80"; "+type=crs" is added when missing). A compound CRS is
// accepted for its horizontal part. A geographic, geocentric, vertical,
// engineering or unknown CRS is an error that says what was given and
// that a projected CRS is needed; so is one whose two axes are in
// different units.
func OpenCRS(definition string) (*CRS, error) {
	def := strings.TrimSpace(definition)
	if def == "" {
		return nil, fmt.Errorf("CRS: empty definition: want EPSG:nnnn or a PROJ string of a projected CRS")
	}
	if isProjString(def) && !strings.Contains(def, "type=crs") {
		def += " +type=crs"
	}
	info, err := inspectCRS(def)
	if err != nil {
		return nil, fmt.Errorf("CRS %q: %v (want EPSG:nnnn of a projected CRS known to proj.db, or a PROJ string or WKT of one)", definition, err)
	}
	switch info.horizontalKind {
	case kindProjected:
	case kindGeographic:
		return nil, fmt.Errorf("CRS %q (%s) is geographic (latitude/longitude): a projected CRS (a map grid) is needed", definition, info.name)
	case kindGeocentric:
		return nil, fmt.Errorf("CRS %q (%s) is geocentric (X, Y, Z): a projected CRS (a map grid) is needed", definition, info.name)
	case kindNotCRS:
		return nil, fmt.Errorf("CRS %q is a coordinate operation or datum, not a CRS: a projected CRS (a map grid) is needed", definition)
	default:
		return nil, fmt.Errorf("CRS %q (%s) is not a projected CRS: a projected CRS (a map grid) is needed", definition, info.name)
	}
	ell, err := NewEllipsoid(info.a, info.invF)
	if err != nil {
		return nil, fmt.Errorf("CRS %q: %v", definition, err)
	}
	ell.name = info.ellipsoid
	if !(info.metresPerUnit > 0) {
		return nil, fmt.Errorf("CRS %q: axis unit %q has no length in metres", definition, info.unit)
	}
	if info.projString == "" {
		return nil, fmt.Errorf("CRS %q (%s): PROJ gives no PROJ-string form of its projection, which geored needs for scale factors", definition, info.name)
	}
	return &CRS{
		definition:    definition,
		name:          info.name,
		datum:         info.datum,
		ellipsoid:     ell,
		unit:          info.unit,
		unitCode:      info.unitCode,
		metresPerUnit: info.metresPerUnit,
		projection:    projectionInMetres(info.projString, ell),
		conformal:     conformalMethods[projName(info.projString)],
		area:          info.area,
	}, nil
}

// conformalMethods are the PROJ projection methods that are conformal on
// the ellipsoid, for which the point scale factor is one number whatever the
// direction. PROJ's proj_factors differentiates numerically, so its angular
// distortion is a few 1e-8 rad even on these and cannot decide it.
var conformalMethods = map[string]bool{
	"tmerc": true, "etmerc": true, "utm": true, "gstmerc": true,
	"lcc": true, "merc": true, "stere": true, "sterea": true, "ups": true,
	"omerc": true, "somerc": true,
}

// projName is the value of +proj= in a PROJ string.
func projName(projString string) string {
	for _, tok := range strings.Fields(projString) {
		if v, ok := strings.CutPrefix(tok, "+proj="); ok {
			return v
		}
	}
	return ""
}

// Conformal reports whether the CRS's projection method is conformal, so
// that Projector.PointScaleFactor applies.
func (c *CRS) Conformal() bool { return c.conformal }

func isProjString(def string) bool {
	return strings.HasPrefix(def, "+") || strings.HasPrefix(def, "proj=")
}

// projectionInMetres turns the PROJ-5 string of a projected CRS into the
// string of its map projection alone, as an operation from radians to
// metres: the CRS markers, units and datum-shift terms are removed, and the
// ellipsoid is stated by its exact a and 1/f from proj.db.
//
// Why not the CRS itself: proj_factors on a CRS object rebuilds the
// operation on every call in PROJ 9.1.1 (milliseconds a call) and gives
// wrong factors on a CRS in US feet; and the string of the CRS's
// coordinate operation is a pipeline with axis swaps and unit conversions
// on which proj_factors returns nonsense.
func projectionInMetres(projString string, e Ellipsoid) string {
	drop := map[string]bool{
		"type": true, "no_defs": true, "wktext": true,
		"units": true, "to_meter": true, "vunits": true, "vto_meter": true,
		"towgs84": true, "nadgrids": true, "geoidgrids": true,
		"datum": true, "ellps": true, "a": true, "b": true, "rf": true, "f": true, "R": true,
		"es": true, "e": true,
	}
	var out []string
	for _, tok := range strings.Fields(projString) {
		key := strings.TrimPrefix(tok, "+")
		if i := strings.IndexByte(key, '='); i >= 0 {
			key = key[:i]
		}
		if !drop[key] {
			out = append(out, tok)
		}
	}
	out = append(out, "+a="+fmtFloat(e.a))
	if e.f == 0 {
		out = append(out, "+b="+fmtFloat(e.a))
	} else {
		out = append(out, "+rf="+fmtFloat(1/e.f))
	}
	out = append(out, "+units=m")
	return strings.Join(out, " ")
}

// Definition is the definition the CRS was opened from.
func (c *CRS) Definition() string { return c.definition }

// Name is PROJ's name of the CRS, e.g. "WGS 84 / UTM zone 33N".
func (c *CRS) Name() string { return c.name }

// Datum is the name of the CRS's geodetic datum (or datum ensemble).
func (c *CRS) Datum() string { return c.datum }

// Ellipsoid is the ellipsoid of the CRS's geodetic datum.
func (c *CRS) Ellipsoid() Ellipsoid { return c.ellipsoid }

// Unit is the name of the unit of the CRS's easting and northing, e.g.
// "metre" or "US survey foot".
func (c *CRS) Unit() string { return c.unit }

// UnitCode is the authority code of the CRS's axis unit as PROJ gives it,
// e.g. "EPSG:9003" for the US survey foot, or "" when the definition gives
// the unit no code (a PROJ string with +to_meter=).
func (c *CRS) UnitCode() string { return c.unitCode }

// MetresPerUnit is the length of the CRS's coordinate unit in metres
// (1200/3937 for the US survey foot).
func (c *CRS) MetresPerUnit() float64 { return c.metresPerUnit }

// Projection is the PROJ string of the CRS's map projection as geored
// runs it: geodetic radians to grid metres.
func (c *CRS) Projection() string { return c.projection }

// String is the CRS's definition and name.
func (c *CRS) String() string { return fmt.Sprintf("%s (%s)", c.definition, c.name) }

// AreaOfUse is the CRS's area of use from proj.db (Known false if it has
// none).
func (c *CRS) AreaOfUse() Area { return c.area }
