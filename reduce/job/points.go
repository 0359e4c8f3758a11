package job

import (
	"hash/maphash"
	"strings"

	"github.com/golang/geo/s2"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
)

// planPoint is one control point as a run needs it: the end and its
// scale factor for a line, and the heights the mark's reduce.MarkHeight
// is made of (planPoints.mark). It holds no pointer, so that the garbage
// collector, which runs often to keep the peak memory down, passes over
// it without reading it; 72 bytes.
type planPoint struct {
	ll    s2.LatLng
	grid  geodesic.GridPoint
	scale float64
	// The mark's orthometric and ellipsoidal heights and geoid separation
	// (reduce.MarkHeight's), when hasMark.
	orthometric, ellipsoidal, separation float64
	line                                 int32 // line in the points file
	sepSource                            uint8 // reduce.SeparationSource
	hasMark, hasScale                    bool
}

// control is the point as NewReduceLine takes it.
func (pt *planPoint) control() Control {
	return Control{LatLng: pt.ll, Grid: pt.grid, Scale: pt.scale, HasScale: pt.hasScale}
}

// planPoints are a plan's points by number, in the points file's order,
// and their ids: the ids side by side in one string (the index's keys in
// a few kilobytes of cache for a small job, and no string header or
// allocation per point for a large one), found through an open-addressing
// table of point numbers. The points are kept in chunks, so that growing
// never copies them: a job of a million points holds about 90 bytes a
// point.
type planPoints struct {
	datum  reduce.Datum // of every mark
	chunks []*[pointChunk]planPoint
	n      int32
	ids    strings.Builder // the ids, while points are added
	arena  string          // the ids: ids.String(), no copy
	ends   []uint32        // ends[i] is where id i ends in the ids (it starts at ends[i-1], or 0)
	slots  []uint32        // point number + 1, by hash of its id; 0 is empty
	seed   maphash.Seed
}

const pointChunk = 1024

func newPlanPoints(datum reduce.Datum, sizeHint int) *planPoints {
	ps := &planPoints{datum: datum, seed: maphash.MakeSeed()}
	ps.ends = make([]uint32, 0, sizeHint)
	ps.rehash(max(8, 2*sizeHint))
	return ps
}

// at is point number i.
func (ps *planPoints) at(i int32) *planPoint { return &ps.chunks[i/pointChunk][i%pointChunk] }

// id is the id of point number i.
func (ps *planPoints) id(i int32) string {
	start := uint32(0)
	if i > 0 {
		start = ps.ends[i-1]
	}
	return ps.arena[start:ps.ends[i]]
}

// find returns the number of the point id, or false.
func (ps *planPoints) find(id string) (int32, bool) {
	mask := uint64(len(ps.slots) - 1)
	for h := maphash.String(ps.seed, id) & mask; ; h = (h + 1) & mask {
		s := ps.slots[h]
		if s == 0 {
			return 0, false
		}
		if i := int32(s - 1); ps.id(i) == id {
			return i, true
		}
	}
}

// add keeps a point under id, numbered next; the caller has checked that
// id is new (find).
func (ps *planPoints) add(id string, pt planPoint) int32 {
	i := ps.n
	if int(i)%pointChunk == 0 {
		ps.chunks = append(ps.chunks, new([pointChunk]planPoint))
	}
	*ps.at(i) = pt
	ps.n++
	ps.ids.WriteString(id)
	ps.ends = append(ps.ends, uint32(ps.ids.Len()))
	ps.arena = ps.ids.String() // no copy: the builder's bytes so far
	if 2*int(ps.n) > len(ps.slots) {
		ps.rehash(2 * len(ps.slots))
	} else {
		ps.place(i)
	}
	return i
}

// done ends adding: the ids are final.
func (ps *planPoints) done() {
	ps.arena = ps.ids.String()
	ps.ids = strings.Builder{}
}

// rehash makes the table size slots (a power of two at least n) and
// places every point in it.
func (ps *planPoints) rehash(size int) {
	n := 8
	for n < size {
		n <<= 1
	}
	ps.slots = make([]uint32, n)
	for i := range ps.n {
		ps.place(i)
	}
}

// place puts point number i in the table.
func (ps *planPoints) place(i int32) {
	mask := uint64(len(ps.slots) - 1)
	h := maphash.String(ps.seed, ps.id(i)) & mask
	for ps.slots[h] != 0 {
		h = (h + 1) & mask
	}
	ps.slots[h] = uint32(i) + 1
}

// mark is point number i's mark height on the plan's datum, and whether
// it has one.
func (ps *planPoints) mark(pt *planPoint) reduce.MarkHeight {
	if !pt.hasMark {
		return reduce.MarkHeight{}
	}
	m := reduce.MarkHeight{Datum: ps.datum, Orthometric: pt.orthometric, Ellipsoidal: pt.ellipsoidal,
		Separation: reduce.Separation{N: pt.separation, Source: reduce.SeparationSource(pt.sepSource)}}
	m.Height = m.Ellipsoidal
	if ps.datum == reduce.DatumSeaLevel {
		m.Height = m.Orthometric
	}
	return m
}
