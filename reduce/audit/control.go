package audit

import (
	"errors"
	"fmt"
	"math"
)

// LineControl is what the control coordinates say about the line between
// two marks, as the caller computed it (reduce/job from the plan's
// points, with reduce.Line). Lengths are metres.
type LineControl struct {
	Ellipsoid float64 // geodesic between the marks on the ellipsoid
	Grid      float64 // plane distance between the marks' projected coordinates
	LineScale float64 // Simpson's (kA + 4 k_mid + kB)/6
	Radius    float64 // Euler's radius R_α in the line's azimuth at the midpoint
	// Ellipsoidal heights h of the two marks, where HasHeights.
	HeightA, HeightB float64
	HasHeights       bool
	// Geoid separations N of the two marks, where HasSeparation.
	SeparationA, SeparationB float64
	HasSeparation            bool
}

// MeanHeight is the mean ellipsoidal height of the two marks, h_m.
func (c *LineControl) MeanHeight() float64 { return (c.HeightA + c.HeightB) / 2 }

// MeanSeparation is the mean geoid separation of the two marks, N_m.
func (c *LineControl) MeanSeparation() float64 { return (c.SeparationA + c.SeparationB) / 2 }

// ErrNeedsHeights and ErrNeedsSeparation say why a kind's control
// distance cannot be computed.
var (
	ErrNeedsHeights    = errors.New("both marks' ellipsoidal heights are needed (the points file gives none for one of them)")
	ErrNeedsSeparation = errors.New("both marks' geoid separations are needed (no geoid grid, constant or per-point N)")
)

// Reference is the control distance of the given kind (metres):
//
//	ellipsoid  s, the geodesic
//	grid       the plane distance between the projected marks
//	ground     s (R + h_m)/R: the horizontal distance at the mean mark
//	           height, the geodesic divided by the elevation factor
//	           R/(R + h_m) (Stem, NOAA Manual NOS NGS 5, 1989;
//	           reduce.GridResult.GroundDistance)
//	sea level  s (R + N_m)/R: the arc on the geoid, N_m above the
//	           ellipsoid (REFERENCES.md §2: about s·N/R from the ellipsoid)
//
// Over the length of a line the geoid and the mean height are taken as
// parallel to the ellipsoid: a tilt of 1 m over the line moves the
// distance by under 0.1 ppm of it (common practice).
func (c *LineControl) Reference(k Kind) (float64, error) {
	if err := c.valid(); err != nil {
		return 0, err
	}
	switch k {
	case Ellipsoid:
		return c.Ellipsoid, nil
	case Grid:
		return c.Grid, nil
	case Ground:
		if !c.HasHeights {
			return 0, ErrNeedsHeights
		}
		return c.Ellipsoid * (c.Radius + c.MeanHeight()) / c.Radius, nil
	case SeaLevel:
		if !c.HasSeparation {
			return 0, ErrNeedsSeparation
		}
		return c.Ellipsoid * (c.Radius + c.MeanSeparation()) / c.Radius, nil
	}
	return 0, fmt.Errorf("distance kind %v: want grid, ellipsoid, ground or sea-level", k)
}

// FromEllipsoid turns a geodesic s and a grid distance g measured some
// other way (a GNSS vector's ends) into the given kind, with this line's
// radius, heights and separations: the same formulas as Reference.
func (c *LineControl) FromEllipsoid(k Kind, s, g float64) (float64, error) {
	cc := *c
	cc.Ellipsoid, cc.Grid = s, g
	return cc.Reference(k)
}

func (c *LineControl) valid() error {
	for _, q := range [...]struct {
		name string
		v    float64
	}{{"control ellipsoid distance", c.Ellipsoid}, {"control grid distance", c.Grid}, {"line scale factor", c.LineScale}, {"radius", c.Radius}} {
		if !(q.v > 0) || math.IsInf(q.v, 0) {
			return fmt.Errorf("%s %v: want a positive finite value", q.name, q.v)
		}
	}
	return nil
}
