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

// lineCache computes each directed line once per job, whichever worker
// asks first; the others wait for that result. The result does not depend
// on which worker computed it.
type lineCache struct {
	mu    sync.Mutex
	lines map[[2]string]*lineEntry
}

type lineEntry struct {
	once sync.Once
	line reduce.Line
	err  error
}

func newLineCache() *lineCache { return &lineCache{lines: map[[2]string]*lineEntry{}} }

func (c *lineCache) get(a, b Control, g *geodesic.Geodesic, p *geodesic.Projector) (*reduce.Line, error) {
	key := [2]string{a.ID, b.ID}
	c.mu.Lock()
	e, ok := c.lines[key]
	if !ok {
		e = &lineEntry{}
		c.lines[key] = e
	}
	c.mu.Unlock()
	e.once.Do(func() { e.line, _, e.err = NewReduceLine(a, b, g, p) })
	return &e.line, e.err
}
