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

// RawLines gathers a run's reductions of a subcontractor's raw
// observations line by line (either direction), for the audit's
// comparison of their delivered values with our own reduction stage by
// stage (audit.CompareRaw). Add every reduced result from the run's
// sink; Ours gives a line's means.
type RawLines struct {
	lines map[[2]string]*rawLine
}

// rawLine sums one line's observations; heights and separations are of
// the lower and the higher point id of the pair.
type rawLine struct {
	n                                 int
	raw, slope, arc, grid, scale, rad float64
	ppm, prism                        float64
	hLo, hHi                          float64
	nLo, nHi                          float64
	seaLevel                          bool
	noN                               int // observations without both marks' N
}

// NewRawLines is an empty gathering.
func NewRawLines() *RawLines { return &RawLines{lines: map[[2]string]*rawLine{}} }

// Len is the number of lines gathered.
func (g *RawLines) Len() int { return len(g.lines) }

// Add takes a reduced result (a rejected one is ignored: the run's
// rejects say why). It keeps the plan's point ids, not the row's.
func (g *RawLines) Add(r *Result) {
	if r.Rejected {
		return
	}
	red := &r.Reduction
	from, to := r.Obs.From, r.Obs.To
	hFrom := red.Heights.MarkA.Height
	// On the zenith route the far mark's height is the one derived; the
	// mean mark height holds it either way.
	hTo := 2*red.Heights.MeanMarkHeight - hFrom
	nFrom, nTo := red.Heights.MarkA.Separation, red.Heights.MarkB.Separation
	key, swap := [2]string{from, to}, false
	if from > to {
		key, swap = [2]string{to, from}, true
	}
	l := g.lines[key]
	if l == nil {
		l = &rawLine{}
		g.lines[key] = l
	}
	if swap {
		hFrom, hTo = hTo, hFrom
		nFrom, nTo = nTo, nFrom
	}
	l.n++
	l.raw += red.Instrument.Raw
	l.slope += red.SecondVelocity.Distance
	l.arc += red.Geometry.Arc
	l.grid += red.Grid.GridDistance
	l.scale += red.Grid.LineScale
	l.rad += red.Grid.Radius
	l.ppm += red.FirstVelocity.PPM
	l.prism += red.Instrument.PrismConstant
	l.hLo += hFrom
	l.hHi += hTo
	l.seaLevel = red.Heights.Datum == reduce.DatumSeaLevel
	if nFrom.Source == reduce.SeparationNone || nTo.Source == reduce.SeparationNone || !red.Heights.MarkB.Known() {
		l.noN++
	} else {
		l.nLo += nFrom.N
		l.nHi += nTo.N
	}
}

// Ours is our reduction of the line from a to b (either direction
// observed): the means of its observations at every stage, with the
// marks' heights and separations seen from a. On the sea-level datum the
// chain's distance is on the geoid, and the ellipsoid's is taken from it
// with the marks' N, s = s_geoid R/(R + N_m). ok is false when no
// observation of the line was reduced.
func (g *RawLines) Ours(a, b string) (o audit.Ours, ok bool, err error) {
	key, swap := [2]string{a, b}, false
	if a > b {
		key, swap = [2]string{b, a}, true
	}
	l := g.lines[key]
	if l == nil {
		return o, false, nil
	}
	n := float64(l.n)
	lc := audit.LineControl{Ellipsoid: l.arc / n, Grid: l.grid / n, LineScale: l.scale / n, Radius: l.rad / n,
		HeightA: l.hLo / n, HeightB: l.hHi / n, HasHeights: true}
	if l.noN == 0 {
		lc.SeparationA, lc.SeparationB, lc.HasSeparation = l.nLo/n, l.nHi/n, true
	}
	if l.seaLevel {
		if !lc.HasSeparation {
			return o, true, errors.New("reduced to sea level, and without both marks' geoid separations there is no ellipsoid distance to compare")
		}
		nm := lc.MeanSeparation()
		lc.Ellipsoid *= lc.Radius / (lc.Radius + nm)
		// The heights we reduced with are orthometric: h = H + N.
		lc.HeightA += lc.SeparationA
		lc.HeightB += lc.SeparationB
	}
	if swap {
		lc.HeightA, lc.HeightB = lc.HeightB, lc.HeightA
		lc.SeparationA, lc.SeparationB = lc.SeparationB, lc.SeparationA
	}
	return audit.Ours{Count: l.n, Raw: l.raw / n, Slope: l.slope / n, Line: lc,
		PPM: l.ppm / n, PrismConstant: l.prism / n}, true, nil
}
