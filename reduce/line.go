package reduce

import (
	"math"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
)

// Radii gives radii of curvature of the ellipsoid (metres). The geodesic
// package's Ellipsoid satisfies it.
type Radii interface {
	RadiusInAzimuth(lat, azimuth s1.Angle) float64
}

// ScaleFactorer gives a map projection's point scale factor. The geodesic
// package's *Projector satisfies it.
type ScaleFactorer interface {
	PointScaleFactor(p s2.LatLng) (float64, error)
}

// GeoidModel gives the geoid separation N (metres) at a point. The
// geodesic package's *Geoid satisfies it.
type GeoidModel interface {
	Separation(p s2.LatLng) (float64, error)
}

// SeparationFromGeoid looks N up in a geoid model and labels it as from a
// grid.
func SeparationFromGeoid(g GeoidModel, p s2.LatLng) (Separation, error) {
	n, err := g.Separation(p)
	if err != nil {
		return Separation{}, err
	}
	if err := needRange("heights", "geoid separation", n, "m", -200, 200); err != nil {
		return Separation{}, err
	}
	return Separation{N: n, Source: SeparationGrid}, nil
}

// Inverse is the geodesic between two control points on the CRS's
// ellipsoid, as the caller computed it (the geodesic package's Inverse).
type Inverse struct {
	Distance           float64  // metres
	Azimuth1, Azimuth2 s1.Angle // forward azimuths at A and at B
}

// GridPoint is a projected position, metres.
type GridPoint struct {
	Easting, Northing float64
}

// GridDistanceBetween returns the plane distance between two projected
// points, metres.
func GridDistanceBetween(a, b GridPoint) float64 {
	return math.Hypot(b.Easting-a.Easting, b.Northing-a.Northing)
}

// Line gathers what depends only on a line between two control points, so
// that a job computes it once per line and not per observation.
type Line struct {
	A, B          s2.LatLng
	Midpoint      s2.LatLng    // geodesic midpoint
	Inverse       Inverse      // geodesic from control
	GridDistance  float64      // plane distance between the projected control points, metres
	Azimuth       s1.Angle     // mean azimuth of the line, in [0, π) (the radius does not depend on the sense)
	Radius        float64      // Euler radius in Azimuth at the midpoint's latitude, metres
	CurvatureRate float64      // d(1/R_α)/ds along the line from A to B, 1/m²
	Scale         ScaleFactors // point scale factors at A, the midpoint and B; curvature on the grid
}

// LineControl is a line's control geometry as the caller computed it:
// the ends and the geodesic midpoint, geodetic and projected, the geodesic
// between the ends, and the ends' point scale factors where the caller
// knows them (zero: NewLine asks the projection).
type LineControl struct {
	A, Mid, B             s2.LatLng
	GridA, GridMid, GridB GridPoint
	Inverse               Inverse
	ScaleA, ScaleB        float64
}

// NewLine prepares a line from its control geometry, the ellipsoid and the
// projection's scale factors.
//
// The radius is taken at the latitude of the geodesic midpoint in the mean
// of the two end azimuths, averaged as doubled angles so that a forward or
// a back azimuth at B gives the same line direction. On a 30 km line the
// azimuth differs from the one at the midpoint by well under 0.01°, which
// moves R_α by under 2e-6 of itself and the reduced distance by under a
// micrometre. The curvature rate is the difference of 1/R_α at B (in
// Azimuth2) and at A (in Azimuth1) over the distance.
//
// The curvature of the geodesic's image on the grid is that of the circle
// through the projected ends and midpoint (Menger curvature, four times
// the triangle's area over the product of its sides). On a conformal map
// it equals (1/k) ∂ln k/∂n, n across the line to the right (Schreiber's
// formula for the curvature of a projected geodesic), which a test checks against PROJ's
// scale factors; only κ² enters the grid distance, so the circle's
// approximation of a slowly changing curvature, and the nanometre noise of
// the coordinates on a short line, move it by far less than a micrometre.
func NewLine(c LineControl, e Radii, p ScaleFactorer) (Line, error) {
	const stage = "line"
	inv := c.Inverse
	if err := needPositive(stage, "control distance", inv.Distance, "m"); err != nil {
		return Line{}, err
	}
	s1a, c1a := math.Sincos(2 * float64(inv.Azimuth1))
	s2a, c2a := math.Sincos(2 * float64(inv.Azimuth2))
	az := math.Atan2(s1a+s2a, c1a+c2a) / 2
	if az < 0 {
		az += math.Pi
	}
	l := Line{A: c.A, B: c.B, Midpoint: c.Mid, Inverse: inv, GridDistance: GridDistanceBetween(c.GridA, c.GridB), Azimuth: s1.Angle(az)}
	l.Radius = e.RadiusInAzimuth(c.Mid.Lat, l.Azimuth)
	if err := needPositive(stage, "radius", l.Radius, "m"); err != nil {
		return Line{}, err
	}
	ra := e.RadiusInAzimuth(c.A.Lat, inv.Azimuth1)
	rb := e.RadiusInAzimuth(c.B.Lat, inv.Azimuth2)
	if err := needPositive(stage, "radius at A", ra, "m"); err != nil {
		return Line{}, err
	}
	if err := needPositive(stage, "radius at B", rb, "m"); err != nil {
		return Line{}, err
	}
	l.CurvatureRate = (1/rb - 1/ra) / inv.Distance
	var err error
	l.Scale.A, l.Scale.B = c.ScaleA, c.ScaleB
	for _, q := range [...]struct {
		p s2.LatLng
		k *float64
	}{{c.A, &l.Scale.A}, {c.Mid, &l.Scale.Mid}, {c.B, &l.Scale.B}} {
		if *q.k != 0 {
			continue // given
		}
		if *q.k, err = p.PointScaleFactor(q.p); err != nil {
			return Line{}, err
		}
	}
	l.Scale.Curvature = MengerCurvature(c.GridA, c.GridMid, c.GridB)
	return l, nil
}

// MengerCurvature is the curvature of the circle through a, m and b in
// turn, 1/m: positive when the path turns left at m, zero when the points
// are on a line or two of them coincide.
func MengerCurvature(a, m, b GridPoint) float64 {
	ux, uy := m.Easting-a.Easting, m.Northing-a.Northing
	vx, vy := b.Easting-m.Easting, b.Northing-m.Northing
	den := math.Hypot(ux, uy) * math.Hypot(vx, vy) * math.Hypot(ux+vx, uy+vy)
	if den == 0 {
		return 0
	}
	return 2 * (ux*vy - uy*vx) / den
}

// Reversed is the same line seen from B: the ends, their scale factors and
// the end azimuths swap (each turned by π), and the rate of change of
// curvature and the curvature on the grid change sign. The midpoint, the
// mean azimuth (taken modulo π) and the radius do not depend on the
// direction, so a job computes each line once.
func (l Line) Reversed() Line {
	r := l
	r.A, r.B = l.B, l.A
	r.Inverse.Azimuth1 = wrapPi(l.Inverse.Azimuth2 + math.Pi)
	r.Inverse.Azimuth2 = wrapPi(l.Inverse.Azimuth1 + math.Pi)
	r.Scale.A, r.Scale.B = l.Scale.B, l.Scale.A
	r.CurvatureRate = -l.CurvatureRate
	r.Scale.Curvature = -l.Scale.Curvature
	return r
}

// wrapPi returns a in (−π, π].
func wrapPi(a s1.Angle) s1.Angle {
	x := math.Remainder(float64(a), 2*math.Pi)
	if x <= -math.Pi {
		x += 2 * math.Pi
	}
	return s1.Angle(x)
}
