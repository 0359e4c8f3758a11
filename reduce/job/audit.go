package job

import (
	"errors"
	"fmt"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/audit"
)

// AuditLine is the control side of a delivered line from a to b, as
// reduce/audit checks it: the geodesic, the grid distance between the
// projected marks, Simpson's line scale factor and Euler's radius from
// NewReduceLine, with the marks' ellipsoidal heights and geoid
// separations where both are known.
func AuditLine(a, b Control, g *geodesic.Geodesic, p *geodesic.Projector) (audit.LineControl, reduce.Line, error) {
	line, _, err := NewReduceLine(a, b, g, p)
	if err != nil {
		return audit.LineControl{}, line, err
	}
	c := audit.LineControl{Ellipsoid: line.Inverse.Distance, Grid: line.GridDistance,
		LineScale: (line.Scale.A + 4*line.Scale.Mid + line.Scale.B) / 6, Radius: line.Radius}
	if a.HasHeight() && b.HasHeight() {
		c.HeightA, c.HeightB, c.HasHeights = a.Ellipsoidal, b.Ellipsoidal, true
	}
	if a.HasSeparation() && b.HasSeparation() {
		c.SeparationA, c.SeparationB, c.HasSeparation = a.Separation, b.Separation, true
	}
	return c, line, nil
}

// AuditVector lays a delivered GNSS vector from mark a and finds where
// it ends: a's geocentric position + the vector, back to (φ, λ, h) on
// the CRS's ellipsoid; the geodesic from a to that end (Karney, through
// PROJ) is the vector's ellipsoid distance, and the plane distance
// between the projected ends its grid distance (REFERENCES.md §8). Both
// marks need their ellipsoidal heights.
func AuditVector(v audit.Vector, a, b Control, g *geodesic.Geodesic, p *geodesic.Projector) (audit.VectorControl, error) {
	if !a.HasHeight() || !b.HasHeight() {
		return audit.VectorControl{}, errors.New("a vector needs both marks' ellipsoidal heights (the points file gives none for one of them)")
	}
	lc, _, err := AuditLine(a, b, g, p)
	if err != nil {
		return audit.VectorControl{}, err
	}
	c := audit.VectorControl{Line: lc, A: a.LatLng, B: b.LatLng}
	if c.StartECEF, err = p.ToGeocentric(a.LatLng, a.Ellipsoidal); err != nil {
		return c, err
	}
	if c.EndECEF, err = p.ToGeocentric(b.LatLng, b.Ellipsoidal); err != nil {
		return c, err
	}
	if c.End, c.EndHeight, err = p.FromGeocentric(c.StartECEF.Add(v.Delta)); err != nil {
		return c, fmt.Errorf("the vector's end: %w", err)
	}
	geo, err := g.Inverse(a.LatLng, c.End)
	if err != nil {
		return c, fmt.Errorf("geodesic to the vector's end: %w", err)
	}
	c.VectorEllipsoid = geo.Distance
	end, err := p.Forward(c.End)
	if err != nil {
		return c, fmt.Errorf("the vector's end on the grid: %w", err)
	}
	c.VectorGrid = reduce.GridDistanceBetween(reduce.GridPoint(a.Grid), reduce.GridPoint(end))
	return c, nil
}
