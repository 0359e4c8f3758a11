package geodesic

import (
	"fmt"
	"math"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
)

// A Geodesic solves geodesic problems on one ellipsoid by Karney's
// algorithms as implemented in PROJ's geodesic library:
//
//	Karney, C. F. F. (2013) Algorithms for geodesics. J. Geodesy 87:43–55,
//	doi:10.1007/s00190-012-0578-z.
//
// Distances are accurate to about 15 nm on an Earth-sized ellipsoid for
// any pair of points, antipodal ones included. A Geodesic is immutable and
// safe for concurrent use.
type Geodesic struct {
	ell  Ellipsoid
	core *geodCore
}

// NewGeodesic prepares the geodesic routines for e. It refuses the zero
// Ellipsoid.
func NewGeodesic(e Ellipsoid) (*Geodesic, error) {
	if !e.Valid() {
		return nil, fmt.Errorf("geodesic: invalid ellipsoid %v", e)
	}
	return &Geodesic{ell: e, core: newGeodCore(e.a, e.f)}, nil
}

// Ellipsoid is the ellipsoid g works on.
func (g *Geodesic) Ellipsoid() Ellipsoid { return g.ell }

// A Line is the solution of the inverse problem between two points.
type Line struct {
	// Distance is the length of the geodesic, in metres.
	Distance float64
	// Azimuth1 is the forward azimuth at the first point, clockwise from
	// north, in (−π, π].
	Azimuth1 s1.Angle
	// Azimuth2 is the forward azimuth at the second point (the direction
	// of travel there, not the back azimuth), in (−π, π].
	Azimuth2 s1.Angle
}

// BackAzimuth is the azimuth from the second point back to the first,
// Azimuth2 + π, normalised to [0, 2π).
func (l Line) BackAzimuth() s1.Angle { return NormalizeAzimuth(l.Azimuth2 + math.Pi) }

// NormalizeAzimuth returns az in [0, 2π).
func NormalizeAzimuth(az s1.Angle) s1.Angle {
	r := math.Mod(float64(az), 2*math.Pi)
	if r < 0 {
		r += 2 * math.Pi
	}
	if r >= 2*math.Pi { // -tiny + 2π rounds to 2π
		r = 0
	}
	return s1.Angle(r)
}

func checkLatLng(which string, p s2.LatLng) error {
	lat, lng := p.Lat.Degrees(), p.Lng.Degrees()
	if math.IsNaN(lat) || math.IsNaN(lng) || math.IsInf(lng, 0) || math.Abs(lat) > 90 {
		return fmt.Errorf("%s point %v: want latitude in [-90°, 90°] and a finite longitude", which, p)
	}
	return nil
}

// Inverse solves the inverse geodesic problem between a and b.
func (g *Geodesic) Inverse(a, b s2.LatLng) (Line, error) {
	if err := checkLatLng("first", a); err != nil {
		return Line{}, err
	}
	if err := checkLatLng("second", b); err != nil {
		return Line{}, err
	}
	s12, azi1, azi2 := g.core.inverse(a.Lat.Degrees(), a.Lng.Degrees(), b.Lat.Degrees(), b.Lng.Degrees())
	return Line{Distance: s12, Azimuth1: s1.Angle(azi1) * s1.Degree, Azimuth2: s1.Angle(azi2) * s1.Degree}, nil
}

// Direct solves the direct geodesic problem: from a along azimuth az for
// distance metres (negative goes backwards). It returns the end point and
// the forward azimuth there.
func (g *Geodesic) Direct(a s2.LatLng, az s1.Angle, distance float64) (s2.LatLng, s1.Angle, error) {
	if err := checkLatLng("start", a); err != nil {
		return s2.LatLng{}, 0, err
	}
	if math.IsNaN(float64(az)) || math.IsInf(float64(az), 0) || math.IsNaN(distance) || math.IsInf(distance, 0) {
		return s2.LatLng{}, 0, fmt.Errorf("direct geodesic: azimuth %v and distance %v m must be finite", az, distance)
	}
	lat, lon, azi := g.core.direct(a.Lat.Degrees(), a.Lng.Degrees(), az.Degrees(), distance)
	return s2.LatLngFromDegrees(lat, lon), s1.Angle(azi) * s1.Degree, nil
}

// Midpoint is the point halfway along the geodesic from a to b (where the
// geodesic is not unique, as between antipodes, the one PROJ chooses).
func (g *Geodesic) Midpoint(a, b s2.LatLng) (s2.LatLng, error) {
	_, mid, err := g.InverseMidpoint(a, b)
	return mid, err
}

// InverseMidpoint solves the inverse problem between a and b and gives the
// midpoint of the same geodesic, in one pass: what Inverse and Midpoint
// give, for about the price of Inverse.
func (g *Geodesic) InverseMidpoint(a, b s2.LatLng) (Line, s2.LatLng, error) {
	if err := checkLatLng("first", a); err != nil {
		return Line{}, s2.LatLng{}, err
	}
	if err := checkLatLng("second", b); err != nil {
		return Line{}, s2.LatLng{}, err
	}
	s12, azi1, azi2, lat, lon := g.core.inverseMidpoint(a.Lat.Degrees(), a.Lng.Degrees(), b.Lat.Degrees(), b.Lng.Degrees())
	l := Line{Distance: s12, Azimuth1: s1.Angle(azi1) * s1.Degree, Azimuth2: s1.Angle(azi2) * s1.Degree}
	return l, s2.LatLngFromDegrees(lat, lon), nil
}
