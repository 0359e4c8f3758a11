package job

import (
	"fmt"
	"math"

	"github.com/golang/geo/s2"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/input"
)

// HeightSource says how a control point's ellipsoidal height was found.
type HeightSource int

// Height sources. The zero value is a point without a height.
const (
	HeightUnknown       HeightSource = iota
	HeightGiven                      // ellipsoid_height in the points file
	HeightFromPointN                 // elevation + geoid_separation of the points file
	HeightFromGeoidGrid              // elevation + N from the geoid grid
	HeightFromConstantN              // elevation + the job's constant N
)

func (s HeightSource) String() string {
	switch s {
	case HeightGiven:
		return "ellipsoidal height given"
	case HeightFromPointN:
		return "H + N (N given for the point)"
	case HeightFromGeoidGrid:
		return "H + N (N from the geoid grid)"
	case HeightFromConstantN:
		return "H + N (N a job constant)"
	}
	return "unknown"
}

// A Control is a control point with both its positions and its heights,
// in metres.
type Control struct {
	ID     string
	Line   int // line in the points file
	LatLng s2.LatLng
	Grid   geodesic.GridPoint
	// Scale is the point scale factor here, where the projection is
	// conformal (HasScale): computed once per point, used by every line.
	Scale    float64
	HasScale bool

	// Ellipsoidal height h, orthometric height H and geoid separation N;
	// HasOrthometric says whether H is known, SeparationSource where N
	// came from (reduce.SeparationNone: N is not known).
	Ellipsoidal      float64
	HeightSource     HeightSource
	Orthometric      float64
	HasOrthometric   bool
	Separation       float64
	SeparationSource reduce.SeparationSource
}

// HasSeparation reports whether the geoid separation N is known.
func (c Control) HasSeparation() bool { return c.SeparationSource != reduce.SeparationNone }

// HasHeight reports whether the ellipsoidal height is known.
func (c Control) HasHeight() bool { return c.HeightSource != HeightUnknown }

// Separations says where the geoid separation N comes from when a point
// gives its elevation H without N: a geoid grid, or else one constant.
type Separations struct {
	Grid        *geodesic.Geoid // may be nil
	Constant    float64
	HasConstant bool
}

// ResolveControl completes each point: the geodetic position from the grid
// one or the other way round, and h = H + N. A point that gives both
// positions must agree with itself to 1 mm on the grid; the error says by
// how much it does not.
func ResolveControl(points []input.Point, file string, p *geodesic.Projector, seps Separations) (map[string]Control, error) {
	out := make(map[string]Control, len(points))
	for _, pt := range points {
		c, err := resolve(pt, p, seps)
		if err != nil {
			return nil, fmt.Errorf("%s:%d: point %q: %w", file, pt.Line, input.Clip(pt.ID), err)
		}
		out[pt.ID] = c
	}
	return out, nil
}

// gridAgreement is how far a point's given grid coordinates may lie from
// the projection of its given geodetic position, in metres.
const gridAgreement = 1e-3

func resolve(pt input.Point, p *geodesic.Projector, seps Separations) (Control, error) {
	c := Control{ID: pt.ID, Line: pt.Line}
	var err error
	switch {
	case pt.HasLatLng:
		c.LatLng = pt.LatLng
		if c.Grid, err = p.Forward(pt.LatLng); err != nil {
			return c, err
		}
		if pt.HasGrid {
			d := math.Hypot(c.Grid.Easting-pt.Easting, c.Grid.Northing-pt.Northing)
			if d > gridAgreement {
				return c, fmt.Errorf("lat/lon and easting/northing disagree by %.4f m on the grid (want at most %.3f m)", d, gridAgreement)
			}
		}
	default:
		c.Grid = geodesic.GridPoint{Easting: pt.Easting, Northing: pt.Northing}
		if c.LatLng, err = p.Inverse(c.Grid); err != nil {
			return c, err
		}
	}
	if p.CRS().Conformal() {
		if c.Scale, err = p.PointScaleFactor(c.LatLng); err != nil {
			return c, err
		}
		c.HasScale = true
	}
	if pt.HasElevation {
		c.Orthometric, c.HasOrthometric = pt.Elevation, true
	}
	switch {
	case pt.HasGeoidSeparation:
		c.Separation, c.SeparationSource = pt.GeoidSeparation, reduce.SeparationPoint
	case seps.Grid != nil && (pt.HasElevation || pt.HasEllipsoidHeight):
		if c.Separation, err = seps.Grid.Separation(c.LatLng); err != nil {
			return c, err
		}
		c.SeparationSource = reduce.SeparationGrid
	case seps.HasConstant:
		c.Separation, c.SeparationSource = seps.Constant, reduce.SeparationConstant
	}
	switch {
	case pt.HasEllipsoidHeight:
		c.Ellipsoidal, c.HeightSource = pt.EllipsoidHeight, HeightGiven
		if !c.HasOrthometric && c.HasSeparation() {
			c.Orthometric, c.HasOrthometric = c.Ellipsoidal-c.Separation, true
		}
	case pt.HasElevation && c.HasSeparation():
		c.Ellipsoidal = pt.Elevation + c.Separation
		c.HeightSource = map[reduce.SeparationSource]HeightSource{
			reduce.SeparationPoint:    HeightFromPointN,
			reduce.SeparationGrid:     HeightFromGeoidGrid,
			reduce.SeparationConstant: HeightFromConstantN,
		}[c.SeparationSource]
	}
	return c, nil
}
