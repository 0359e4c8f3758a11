package job

import (
	"fmt"
	"slices"
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
// collector nothing. A line is found from its lower-numbered point, in
// that point's list of lines sorted by the other point (8 bytes a line,
// and a short binary search in one place rather than a hash table's
// scattered probes); the points are shared out among locks so that
// workers seldom wait for each other. Two workers meeting a new line at
// once may both compute it; the first to store it wins, and the result
// does not depend on which.
type lineCache struct {
	shards [lineShards]lineShard
	adj    [][]lineRef  // by lower point: its lines, sorted by the higher point
	next   atomic.Int32 // lines stored
	chunks [maxLineChunks]atomic.Pointer[lineChunk]
	// kept are the lines once the runs have ended (endFinding): of each
	// only what the summary reads, in chunks numbered as chunks were.
	kept  []*[lineChunkSize]lineKept
	ended bool
	grow  sync.Mutex // allocates chunks
	errMu sync.Mutex
	errs  map[int32]error // lines that could not be computed
}

const (
	lineShards    = 64
	lineChunkSize = 4096
	maxLineChunks = 1 << 15 // 134 million lines
)

// lineShard guards the lists of the points p with p % lineShards equal to
// its position.
type lineShard struct {
	mu sync.Mutex
	_  [56]byte // one shard to a cache line
}

// lineRef is one line in its lower point's list.
type lineRef struct{ hi, id int32 }

type lineChunk [lineChunkSize]lineRec

// lineRec is a line from its lower-numbered point to its higher, less
// what the points hold: the ends, their scale factors and the grid
// distance between them (reduce.GridDistanceBetween of the ends, as
// reduce.NewLine has it; the same either way round, the differences only
// changing sign). A zero distance marks a line that could not be
// computed (see lineCache.errs). 40 bytes.
type lineRec struct {
	distance, radius, curvatureRate, kMid, curvature float64
}

func newLineCache(points int) *lineCache {
	return &lineCache{adj: make([][]lineRef, points), errs: map[int32]error{}}
}

// lineKept is what a line keeps once the runs have ended: its distance
// and radius (Plan.KnownLine). 16 bytes.
type lineKept struct{ distance, radius float64 }

// endFinding frees the lists that find lines, and replaces the lines'
// records by what the summary reads of them, a chunk at a time, so that
// the summary's own memory comes in the place of the rest.
func (c *lineCache) endFinding() {
	if c.ended {
		return
	}
	c.adj, c.ended = nil, true
	n := (int(c.next.Load()) + lineChunkSize - 1) / lineChunkSize
	c.kept = make([]*[lineChunkSize]lineKept, min(n, maxLineChunks))
	for k := range c.kept {
		ch := c.chunks[k].Load()
		if ch == nil {
			continue
		}
		kept := new([lineChunkSize]lineKept)
		for i := range ch {
			kept[i] = lineKept{distance: ch[i].distance, radius: ch[i].radius}
		}
		c.kept[k] = kept
		c.chunks[k].Store(nil)
	}
}

// find looks the line from lo to hi up in lo's list (under lo's shard
// lock): its number, or where to insert it.
func (c *lineCache) find(lo, hi int32) (id int32, at int, ok bool) {
	refs := c.adj[lo]
	i, j := 0, len(refs)
	for i < j {
		m := int(uint(i+j) >> 1)
		if refs[m].hi < hi {
			i = m + 1
		} else {
			j = m
		}
	}
	if i < len(refs) && refs[i].hi == hi {
		return refs[i].id, i, true
	}
	return 0, i, false
}

// get returns the line from point a to point b of the plan and its
// number. Numbers are dense but follow the order in which workers first
// asked, so they identify a line within the job and say nothing of order.
// The line's Midpoint, Azimuth and the azimuths of its Inverse are not
// kept, and are zero: the chain does not use them.
func (c *lineCache) get(a, b int32, plan *Plan, p *geodesic.Projector) (reduce.Line, int32, error) {
	lo, hi := min(a, b), max(a, b)
	sh := &c.shards[lo%lineShards]
	sh.mu.Lock()
	id, _, ok := c.find(lo, hi)
	sh.mu.Unlock()
	if !ok {
		line, _, err := NewReduceLine(plan.pts.at(lo).control(), plan.pts.at(hi).control(), plan.Geodesic, p)
		sh.mu.Lock()
		var at int
		if id, at, ok = c.find(lo, hi); !ok {
			if id, err = c.store(line, err); id >= 0 {
				c.adj[lo] = slices.Insert(c.adj[lo], at, lineRef{hi: hi, id: id})
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
// and the points; once the runs have ended, only its ends, distances and
// radius.
func (c *lineCache) line(id, a, b int32, plan *Plan) (reduce.Line, error) {
	var rec lineRec
	if c.ended {
		k := c.kept[id/lineChunkSize]
		if k == nil {
			return reduce.Line{}, fmt.Errorf("line %d is not in the cache", id)
		}
		rec = lineRec{distance: k[id%lineChunkSize].distance, radius: k[id%lineChunkSize].radius}
	} else {
		ch := c.chunks[id/lineChunkSize].Load()
		if ch == nil {
			return reduce.Line{}, fmt.Errorf("line %d is not in the cache", id)
		}
		rec = ch[id%lineChunkSize]
	}
	if rec.distance == 0 {
		c.errMu.Lock()
		defer c.errMu.Unlock()
		return reduce.Line{}, c.errs[id]
	}
	pa, pb := plan.pts.at(a), plan.pts.at(b)
	l := reduce.Line{A: pa.ll, B: pb.ll, Inverse: reduce.Inverse{Distance: rec.distance}, GridDistance: reduce.GridDistanceBetween(reduce.GridPoint(pa.grid), reduce.GridPoint(pb.grid)),
		Radius: rec.radius, CurvatureRate: rec.curvatureRate,
		Scale: reduce.ScaleFactors{A: pa.scale, Mid: rec.kMid, B: pb.scale, Curvature: rec.curvature}}
	if a > b {
		// Seen from the higher point: the ends and their scale factors
		// are already a's and b's, and the signed rates turn, as in
		// reduce.Line.Reversed (whose azimuths the record does not keep;
		// TestLineCache holds the two to the same line).
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
	ch[id%lineChunkSize] = lineRec{distance: l.Inverse.Distance, radius: l.Radius,
		curvatureRate: l.CurvatureRate, kMid: l.Scale.Mid, curvature: l.Scale.Curvature}
	return id, nil
}
