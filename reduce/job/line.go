package job

import (
	"sync"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
)

// NewReduceLine prepares what the chain needs of the line from a to b: the
// geodesic from control, the projected distance, the midpoint, Euler's
// radius and the scale factors (reduce.NewLine).
func NewReduceLine(a, b Control, g *geodesic.Geodesic, p *geodesic.Projector) (reduce.Line, geodesic.Line, error) {
	geo, err := g.Inverse(a.LatLng, b.LatLng)
	if err != nil {
		return reduce.Line{}, geo, err
	}
	inv := reduce.Inverse{Distance: geo.Distance, Azimuth1: geo.Azimuth1, Azimuth2: geo.Azimuth2}
	gridA := reduce.GridPoint{Easting: a.Grid.Easting, Northing: a.Grid.Northing}
	gridB := reduce.GridPoint{Easting: b.Grid.Easting, Northing: b.Grid.Northing}
	line, err := reduce.NewLine(a.LatLng, b.LatLng, inv, gridA, gridB, g.Ellipsoid(), g, p)
	return line, geo, err
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

// get returns the line from point a to point b of the plan.
func (c *lineCache) get(a, b int32, plan *Plan, p *geodesic.Projector) (reduce.Line, error) {
	key := lineKey(a, b)
	c.mu.Lock()
	e, ok := c.lines[key]
	if !ok {
		e = &lineEntry{}
		c.lines[key] = e
	}
	c.mu.Unlock()
	lo, hi := min(a, b), max(a, b)
	e.once.Do(func() {
		e.line, _, e.err = NewReduceLine(plan.points[lo].control, plan.points[hi].control, plan.Geodesic, p)
	})
	if e.err != nil || a == lo {
		return e.line, e.err
	}
	return e.line.Reversed(), nil
}
