package job

import (
	"sync"

	"github.com/golang/geo/s2"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
)

// NewReduceLine prepares what the chain needs of the line from a to b: the
// geodesic from control, the projected distance, the midpoint, Euler's
// radius and the scale factors (reduce.NewLine). The geodesic and its
// midpoint come from one pass, and the ends' scale factors from the
// control points, where they were computed once per point; the midpoint
// costs one projection and one scale factor.
func NewReduceLine(a, b Control, g *geodesic.Geodesic, p *geodesic.Projector) (reduce.Line, geodesic.Line, error) {
	geo, mid, err := g.InverseMidpoint(a.LatLng, b.LatLng)
	if err != nil {
		return reduce.Line{}, geo, err
	}
	gridMid, err := p.Forward(mid)
	if err != nil {
		return reduce.Line{}, geo, err
	}
	c := reduce.LineControl{A: a.LatLng, Mid: mid, B: b.LatLng,
		GridA: reduce.GridPoint(a.Grid), GridMid: reduce.GridPoint(gridMid), GridB: reduce.GridPoint(b.Grid),
		Inverse: reduce.Inverse{Distance: geo.Distance, Azimuth1: geo.Azimuth1, Azimuth2: geo.Azimuth2}}
	line, err := reduce.NewLine(c, g.Ellipsoid(), knownScale{p: p, a: a, b: b})
	return line, geo, err
}

// knownScale answers reduce.NewLine's questions about the scale factors of
// one line: the ends' from the control points where they are known, the
// rest from the projection.
type knownScale struct {
	p    *geodesic.Projector
	a, b Control
}

func (k knownScale) PointScaleFactor(ll s2.LatLng) (float64, error) {
	switch {
	case k.a.HasScale && ll == k.a.LatLng:
		return k.a.Scale, nil
	case k.b.HasScale && ll == k.b.LatLng:
		return k.b.Scale, nil
	}
	return k.p.PointScaleFactor(ll)
}

// lineCache computes each line once per job, whichever way it is observed
// and whichever worker asks first; the others wait for that result, which
// does not depend on the worker. Lines are keyed by their end points'
// positions in the plan.
type lineCache struct {
	mu    sync.Mutex
	lines map[uint64]*lineEntry
}

type lineEntry struct {
	id   int32 // dense number of the line in this job, 0, 1, 2, …
	once sync.Once
	line reduce.Line // from the lower-numbered point to the higher
	err  error
}

func newLineCache() *lineCache { return &lineCache{lines: map[uint64]*lineEntry{}} }

// lineKey names the line between points a and b, either way.
func lineKey(a, b int32) uint64 {
	if a > b {
		a, b = b, a
	}
	return uint64(a)<<32 | uint64(uint32(b))
}

// get returns the line from point a to point b of the plan and its
// number. Numbers are dense but follow the order in which workers first
// asked, so they identify a line within the job and say nothing of order.
func (c *lineCache) get(a, b int32, plan *Plan, p *geodesic.Projector) (reduce.Line, int32, error) {
	key := lineKey(a, b)
	c.mu.Lock()
	e, ok := c.lines[key]
	if !ok {
		e = &lineEntry{id: int32(len(c.lines))}
		c.lines[key] = e
	}
	c.mu.Unlock()
	lo, hi := min(a, b), max(a, b)
	e.once.Do(func() {
		e.line, _, e.err = NewReduceLine(plan.points[lo].control, plan.points[hi].control, plan.Geodesic, p)
	})
	if e.err != nil || a == lo {
		return e.line, e.id, e.err
	}
	return e.line.Reversed(), e.id, nil
}
