package audit

import (
	"cmp"
	"math"
	"slices"

	"github.com/golang/geo/r3"
)

// Edge is a vector of the network: Index is its position among the
// delivered vectors, From and To its marks.
type Edge struct {
	Index    int
	From, To string
	Delta    r3.Vector
	Cov      Covariance
}

// Step is one vector of a loop, in the loop's sense (Reversed: taken
// from To to From).
type Step struct {
	Index    int
	Reversed bool
}

// Loop is an independent loop of the vector network and its misclosure.
type Loop struct {
	Steps      []Step
	Repeat     bool      // two vectors between the same marks: a repeated baseline
	Misclosure r3.Vector // the vectors summed around the loop, geocentric, metres
	Length     float64   // the sum of the vectors' lengths, metres
	Sigma      float64   // sqrt of the trace of the summed covariances, metres
	MM         float64   // |Misclosure| in mm
	PPM        float64   // |Misclosure| / Length · 1e6
	Verdict              // |Misclosure| against the tolerance at Length
}

// Loops finds a short cycle basis of the network of vectors and each
// loop's misclosure: independent loops, as short as the network allows
// (triangles and quadrilaterals where it has them, common practice), so
// that a bad vector is judged against the tolerance and σ of a short loop
// and does not hide among many good ones. The basis has exactly
// (vectors − marks + components) loops; a repeated baseline is a loop of
// two.
//
// It is a Horton-like greedy on per-vector shortest loops (from memory:
// J. D. Horton 1987, "A polynomial-time algorithm to find the shortest
// cycle basis of a graph", SIAM J. Comput. 16(2), whose candidates are
// the loops through every mark and vector; J. C. de Pina 1995 gives a
// minimum basis at more cost), so not a guaranteed minimum cycle basis:
//
//   - candidates: for every vector e = (A, B) that lies on a loop at
//     all (not a bridge), the loops through e with the fewest vectors:
//     breadth-first from B without e until A is reached, d vectors away,
//     then one loop for each vector into A from a mark d − 1 from B (on
//     a lattice with both diagonals a vector's first loop alone would
//     leave squares short of a triangle). The visit stamps are reused,
//     so a search costs the neighbourhood it explores, not the network;
//     a vector whose shortest loop is long explores that far;
//   - the candidates are taken shortest first by their length in metres,
//     ties by their number of vectors, then by the smaller index of the
//     vector they were found for (then the order they were found in),
//     and one is kept if it is independent of those kept before over
//     GF(2): a loop is written as the set of vectors it holds outside a
//     breadth-first spanning forest (a cycle is the GF(2) sum of the
//     fundamental cycles of its non-tree edges), reduced against an
//     echelon basis of sparse sorted sets (pivot: the highest non-tree
//     index);
//   - should the kept candidates be fewer than the dimension of the
//     cycle space (a ring of triangles leaves the ring itself), the
//     fundamental loops of the forest, which always span it, complete the
//     basis.
//
// A loop's first step is the vector it was found for, in its delivered
// sense; the loops come in the order of that vector's index. Each loop's
// misclosure is its vectors summed along its steps, each in the loop's
// sense.
func Loops(edges []Edge, s Settings) ([]Loop, error) {
	if err := s.valid(); err != nil {
		return nil, err
	}
	id := map[string]int{}
	node := func(m string) int {
		if i, ok := id[m]; ok {
			return i
		}
		id[m] = len(id)
		return id[m]
	}
	var adj [][]half
	from, to := make([]int, len(edges)), make([]int, len(edges))
	for i, e := range edges {
		from[i], to[i] = node(e.From), node(e.To)
		for len(adj) < len(id) {
			adj = append(adj, nil)
		}
		adj[from[i]] = append(adj[from[i]], half{to[i], i})
		if to[i] != from[i] {
			adj[to[i]] = append(adj[to[i]], half{from[i], i})
		}
	}
	n := len(id)

	// The breadth-first spanning forest: its non-tree vectors number the
	// coordinates of a loop over GF(2).
	parent, parentEdge, depth := make([]int, n), make([]int, n), make([]int, n)
	seen := make([]bool, n)
	coord := make([]int32, len(edges)) // a non-tree vector's coordinate; −1 in the tree
	queue := make([]int, 0, n)
	for i := range coord {
		coord[i] = -1
	}
	for root := range n {
		if seen[root] {
			continue
		}
		seen[root], parent[root], parentEdge[root] = true, -1, -1
		queue = append(queue[:0], root)
		for k := 0; k < len(queue); k++ {
			u := queue[k]
			for _, h := range adj[u] {
				if seen[h.to] {
					continue
				}
				seen[h.to], parent[h.to], parentEdge[h.to], depth[h.to] = true, u, h.edge, depth[u]+1
				coord[h.edge] = -2
				queue = append(queue, h.to)
			}
		}
	}
	dim := 0
	for i := range coord {
		if coord[i] == -2 {
			coord[i] = -1
		} else {
			coord[i] = int32(dim)
			dim++
		}
	}
	if dim == 0 {
		return nil, nil
	}
	bridge := bridges(adj, len(edges))

	norm := make([]float64, len(edges))
	for i, e := range edges {
		norm[i] = e.Delta.Norm()
	}

	// The candidates: the shortest loops through each vector.
	type candidate struct {
		edge, start, hops int
		length            float64
	}
	var (
		cands  = make([]candidate, 0, 2*len(edges))
		pool   = make([]Step, 0, 4*len(edges))
		stamp  = make([]int32, n)
		prev   = make([]int, n)
		via    = make([]int, n)
		dist   = make([]int32, n)
		sorted []int
	)
	for i := range stamp {
		stamp[i] = -1
	}
	// add makes pool[start:] a candidate found for e.
	add := func(e, start int) {
		sorted = sorted[:0]
		for _, st := range pool[start:] {
			sorted = append(sorted, st.Index)
		}
		slices.Sort(sorted)
		length := 0.0
		for _, i := range sorted { // in one order whichever vector found the loop
			length += norm[i]
		}
		cands = append(cands, candidate{edge: e, start: start, hops: len(pool) - start, length: length})
	}
	for e := range edges {
		if bridge[e] {
			continue
		}
		a, b := from[e], to[e]
		if a == b { // a vector from a mark to itself is a loop of its own
			pool = append(pool, Step{Index: e})
			add(e, len(pool)-1)
			continue
		}
		// Breadth-first from B without e, until A is reached.
		st := int32(e)
		stamp[b], dist[b] = st, 0
		queue = append(queue[:0], b)
		d := int32(-1)
		for k := 0; k < len(queue) && d < 0; k++ {
			x := queue[k]
			for _, h := range adj[x] {
				if h.edge == e || stamp[h.to] == st {
					continue
				}
				stamp[h.to], dist[h.to], prev[h.to], via[h.to] = st, dist[x]+1, x, h.edge
				if h.to == a {
					d = dist[x] + 1
					break
				}
				queue = append(queue, h.to)
			}
		}
		if d < 0 { // not a bridge, so never
			continue
		}
		// Every mark d − 1 from B has been reached by now: each one next
		// to A closes a loop of d + 1 vectors through e, ending in a
		// vector of its own.
		for _, h := range adj[a] {
			w := h.to
			if h.edge == e || stamp[w] != st || dist[w] != d-1 {
				continue
			}
			start := len(pool)
			pool = append(pool, Step{Index: e}, Step{Index: h.edge, Reversed: from[h.edge] != w})
			for y := w; y != b; y = prev[y] { // back to B, reversed below
				pool = append(pool, Step{Index: via[y], Reversed: from[via[y]] != prev[y]})
			}
			slices.Reverse(pool[start+1:])
			add(e, start)
		}
	}
	slices.SortFunc(cands, func(p, q candidate) int {
		return cmp.Or(cmp.Compare(p.length, q.length), cmp.Compare(p.hops, q.hops), cmp.Compare(p.edge, q.edge), cmp.Compare(p.start, q.start))
	})

	// The greedy choice, independent over GF(2).
	var ech echelon
	ech.init(dim)
	type kept struct {
		edge  int
		steps []Step
	}
	var keep []kept
	var rep []int32
	for _, c := range cands {
		if ech.rank == dim {
			break
		}
		steps := pool[c.start : c.start+c.hops]
		rep = rep[:0]
		for _, st := range steps {
			if k := coord[st.Index]; k >= 0 {
				rep = append(rep, k)
			}
		}
		slices.Sort(rep)
		if ech.add(rep) {
			keep = append(keep, kept{c.edge, steps})
		}
	}
	// The fundamental loops complete it where the candidates fall short.
	for e := 0; e < len(edges) && ech.rank < dim; e++ {
		if coord[e] < 0 || !ech.add(append(rep[:0], coord[e])) {
			continue
		}
		// e from A to B, then the tree from B back to A.
		steps := []Step{{Index: e}}
		var down []Step // A up to the meeting mark, walked back down
		x, y := to[e], from[e]
		for x != y {
			if depth[x] >= depth[y] {
				pe := parentEdge[x]
				steps = append(steps, Step{Index: pe, Reversed: from[pe] != x}) // from x towards its parent
				x = parent[x]
			} else {
				pe := parentEdge[y]
				down = append(down, Step{Index: pe, Reversed: from[pe] != parent[y]}) // from y's parent to y
				y = parent[y]
			}
		}
		for j := len(down) - 1; j >= 0; j-- {
			steps = append(steps, down[j])
		}
		keep = append(keep, kept{e, steps})
	}
	slices.SortStableFunc(keep, func(p, q kept) int { return cmp.Compare(p.edge, q.edge) })

	loops := make([]Loop, len(keep))
	for k, kp := range keep {
		l := &loops[k]
		l.Steps = slices.Clip(kp.steps)
		var cov Covariance
		for _, st := range l.Steps {
			d := edges[st.Index].Delta
			if st.Reversed {
				d = d.Mul(-1)
			}
			l.Misclosure = l.Misclosure.Add(d)
			l.Length += norm[st.Index]
			cov = cov.Add(edges[st.Index].Cov)
		}
		l.Repeat = len(l.Steps) == 2
		l.Sigma = math.Sqrt(cov.Trace())
		m := l.Misclosure.Norm()
		l.MM, l.PPM = m*1e3, m/l.Length*1e6
		var err error
		if l.Verdict, err = verdict(&s, l.Length, m); err != nil {
			return nil, err
		}
	}
	return loops, nil
}

// half is a vector seen from one of its marks: the other mark and the
// vector's index.
type half struct{ to, edge int }

// bridges marks the vectors that lie on no loop (Tarjan's bridges by the
// low points of a depth-first search, R. E. Tarjan 1974, from memory),
// walked with a stack of its own; a repeated baseline is no bridge.
func bridges(adj [][]half, edges int) []bool {
	bridge := make([]bool, edges)
	disc, low := make([]int32, len(adj)), make([]int32, len(adj)) // disc 0: not reached
	type frame struct{ node, edge, next int }
	var stack []frame
	t := int32(0)
	for root := range adj {
		if disc[root] != 0 {
			continue
		}
		t++
		disc[root], low[root] = t, t
		stack = append(stack[:0], frame{root, -1, 0})
		for len(stack) > 0 {
			f := &stack[len(stack)-1]
			if f.next < len(adj[f.node]) {
				h := adj[f.node][f.next]
				f.next++
				if h.edge == f.edge {
					continue
				}
				if disc[h.to] == 0 {
					t++
					disc[h.to], low[h.to] = t, t
					stack = append(stack, frame{h.to, h.edge, 0})
				} else {
					low[f.node] = min(low[f.node], disc[h.to])
				}
				continue
			}
			done := *f
			stack = stack[:len(stack)-1]
			if len(stack) > 0 {
				p := stack[len(stack)-1].node
				low[p] = min(low[p], low[done.node])
				if low[done.node] > disc[p] {
					bridge[done.edge] = true
				}
			}
		}
	}
	return bridge
}

// echelon is an echelon basis over GF(2) of sets of coordinates, each a
// sorted set whose highest coordinate is its pivot.
type echelon struct {
	pivot []int32 // the row whose pivot is the coordinate; −1 for none
	rows  [][]int32
	rank  int
	a, b  []int32
}

func (ec *echelon) init(dim int) {
	ec.pivot = make([]int32, dim)
	for i := range ec.pivot {
		ec.pivot[i] = -1
	}
}

// add reduces the sorted set r against the basis and, if something is
// left, adds it and reports true: r was independent of the rows before.
func (ec *echelon) add(r []int32) bool {
	cur := append(ec.a[:0], r...)
	other := ec.b
	for len(cur) > 0 {
		row := ec.pivot[cur[len(cur)-1]]
		if row < 0 {
			break
		}
		other = xorSorted(other[:0], cur, ec.rows[row])
		cur, other = other, cur
	}
	ec.a, ec.b = cur, other
	if len(cur) == 0 {
		return false
	}
	ec.pivot[cur[len(cur)-1]] = int32(len(ec.rows))
	ec.rows = append(ec.rows, slices.Clone(cur))
	ec.rank++
	return true
}

// xorSorted appends to dst the symmetric difference of the sorted sets p
// and q, sorted.
func xorSorted(dst, p, q []int32) []int32 {
	i, j := 0, 0
	for i < len(p) && j < len(q) {
		switch {
		case p[i] < q[j]:
			dst = append(dst, p[i])
			i++
		case p[i] > q[j]:
			dst = append(dst, q[j])
			j++
		default:
			i++
			j++
		}
	}
	dst = append(dst, p[i:]...)
	return append(dst, q[j:]...)
}
