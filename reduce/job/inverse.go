package job

import (
	"math"

	"github.com/golang/geo/s1"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
)

// An InverseLine is everything the control coordinates say about a line
// from A to B. Lengths are metres.
type InverseLine struct {
	From, To Control

	// Geodesic on the CRS's ellipsoid (Karney, through PROJ).
	Geodesic geodesic.Line
	// Line is the per-line data of the chain: midpoint, Euler radius and
	// the point scale factors at A, the midpoint and B.
	Line reduce.Line
	// LineScale is Simpson's (kA + 4 k_mid + kB)/6 and ScaledDistance the
	// geodesic times it: the grid length of the line.
	LineScale, ScaledDistance float64
	// GridDistance is the plane distance between the projected end points
	// and GridBearing the plane bearing from A to B, in [0, 2π).
	GridDistance float64
	GridBearing  s1.Angle
	// ConvergenceA and ConvergenceB are the meridian convergence at the
	// ends (see geodesic.Factors.Convergence).
	ConvergenceA, ConvergenceB s1.Angle
}

// BackGridBearing is the plane bearing from B to A.
func (l InverseLine) BackGridBearing() s1.Angle {
	return geodesic.NormalizeAzimuth(l.GridBearing + math.Pi)
}

// Inverse computes the inverse between two resolved control points.
func Inverse(a, b Control, g *geodesic.Geodesic, p *geodesic.Projector) (InverseLine, error) {
	line, geo, err := NewReduceLine(a, b, g, p)
	if err != nil {
		return InverseLine{}, err
	}
	grid, err := reduce.GridDistance(geo.Distance, line.Scale, 0, line.Radius)
	if err != nil {
		return InverseLine{}, err
	}
	fa, err := p.Factors(a.LatLng)
	if err != nil {
		return InverseLine{}, err
	}
	fb, err := p.Factors(b.LatLng)
	if err != nil {
		return InverseLine{}, err
	}
	dE, dN := b.Grid.Easting-a.Grid.Easting, b.Grid.Northing-a.Grid.Northing
	return InverseLine{
		From: a, To: b,
		Geodesic:       geo,
		Line:           line,
		LineScale:      grid.LineScale,
		ScaledDistance: grid.GridArc,
		GridDistance:   math.Hypot(dE, dN),
		GridBearing:    geodesic.NormalizeAzimuth(s1.Angle(math.Atan2(dE, dN))),
		ConvergenceA:   fa.Convergence,
		ConvergenceB:   fb.Convergence,
	}, nil
}
