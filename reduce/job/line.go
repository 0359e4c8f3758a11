package job

import (
	"fmt"
	"sync"
	"sync/atomic"

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
	if a.HasScale {
		c.ScaleA = a.Scale
	}
	if b.HasScale {
		c.ScaleB = b.Scale
	}
	line, err := reduce.NewLine(c, g.Ellipsoid(), p)
	return line, geo, err
}

// lineCache computes each line once per job, whichever way it is observed
// and whichever worker asks first, and keeps of it only what the chain
// needs beyond its end points: a few numbers in pointer-free chunks, so
// that a job of millions of lines stays small and costs the garbage
// collector nothing. Lines are keyed by their end points' positions in the
// plan, in shards so that workers seldom wait for each other. Two workers
// meeting a new line at once may both compute it; the first to store it
// wins, and the result does not depend on which.
type lineCache struct {
	shards [lineShards]lineShard
	next   atomic.Int32 // lines stored
	chunks [maxLineChunks]atomic.Pointer[lineChunk]
	grow   sync.Mutex // allocates chunks
	errMu  sync.Mutex
	errs   map[int32]error // lines that could not be computed
}

const (
	lineShards    = 64
	lineChunkSize = 4096
	maxLineChunks = 1 << 15 // 134 million lines
)

type lineShard struct {
	mu  sync.Mutex
	ids map[uint64]int32
	_   [40]byte // one shard to a cache line
}

type lineChunk [lineChunkSize]lineRec

// lineRec is a line from its lower-numbered point to its higher, less
// what the points hold (ends and their scale factors). A zero distance
// marks a line that could not be computed (see lineCache.errs).
type lineRec struct {
	distance, grid, radius, curvatureRate, kMid, curvature float64
}

func newLineCache() *lineCache {
	c := &lineCache{errs: map[int32]error{}}
	for i := range c.shards {
		c.shards[i].ids = map[uint64]int32{}
	}
	return c
}

// lineKey names the line between points a and b, either way.
func lineKey(a, b int32) uint64 {
	if a > b {
		a, b = b, a
	}
	return uint64(a)<<32 | uint64(uint32(b))
}

func (c *lineCache) shard(key uint64) *lineShard {
	return &c.shards[(key*0x9E3779B97F4A7C15)>>58] // Fibonacci hashing: 6 bits
}

// get returns the line from point a to point b of the plan and its
// number. Numbers are dense but follow the order in which workers first
// asked, so they identify a line within the job and say nothing of order.
// The line's Midpoint, Azimuth and the azimuths of its Inverse are not
// kept, and are zero: the chain does not use them.
func (c *lineCache) get(a, b int32, plan *Plan, p *geodesic.Projector) (reduce.Line, int32, error) {
	key := lineKey(a, b)
	sh := c.shard(key)
	sh.mu.Lock()
	id, ok := sh.ids[key]
	sh.mu.Unlock()
	lo, hi := min(a, b), max(a, b)
	if !ok {
		line, _, err := NewReduceLine(plan.points[lo].control, plan.points[hi].control, plan.Geodesic, p)
		sh.mu.Lock()
		if id, ok = sh.ids[key]; !ok {
			if id, err = c.store(line, err); id >= 0 {
				sh.ids[key] = id
			}
		}
		sh.mu.Unlock()
		if id < 0 {
			return reduce.Line{}, id, err
		}
	}
	l, err := c.line(id, a, b, plan)
	return l, id, err
}

// line rebuilds line number id, from point a to point b, from its record
// and the points.
func (c *lineCache) line(id, a, b int32, plan *Plan) (reduce.Line, error) {
	ch := c.chunks[id/lineChunkSize].Load()
	if ch == nil {
		return reduce.Line{}, fmt.Errorf("line %d is not in the cache", id)
	}
	rec := &ch[id%lineChunkSize]
	if rec.distance == 0 {
		c.errMu.Lock()
		defer c.errMu.Unlock()
		return reduce.Line{}, c.errs[id]
	}
	pa, pb := &plan.ends[a], &plan.ends[b]
	l := reduce.Line{A: pa.ll, B: pb.ll, Inverse: reduce.Inverse{Distance: rec.distance}, GridDistance: rec.grid,
		Radius: rec.radius, CurvatureRate: rec.curvatureRate,
		Scale: reduce.ScaleFactors{A: pa.scale, Mid: rec.kMid, B: pb.scale, Curvature: rec.curvature}}
	if a > b {
		l.CurvatureRate, l.Scale.Curvature = -l.CurvatureRate, -l.Scale.Curvature
	}
	return l, nil
}

// store keeps a computed line (or why it could not be) under the next
// number; it returns -1 and an error when the job has too many lines.
func (c *lineCache) store(l reduce.Line, lineErr error) (int32, error) {
	id := c.next.Add(1) - 1
	n := int(id) / lineChunkSize
	if id < 0 || n >= maxLineChunks {
		return -1, fmt.Errorf("the job has more than %d distinct lines", maxLineChunks*lineChunkSize)
	}
	ch := c.chunks[n].Load()
	if ch == nil {
		c.grow.Lock()
		if ch = c.chunks[n].Load(); ch == nil {
			ch = new(lineChunk)
			c.chunks[n].Store(ch)
		}
		c.grow.Unlock()
	}
	if lineErr != nil {
		c.errMu.Lock()
		c.errs[id] = lineErr
		c.errMu.Unlock()
		return id, nil
	}
	ch[id%lineChunkSize] = lineRec{distance: l.Inverse.Distance, grid: l.GridDistance, radius: l.Radius,
		curvatureRate: l.CurvatureRate, kMid: l.Scale.Mid, curvature: l.Scale.Curvature}
	return id, nil
}
