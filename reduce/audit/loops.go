package audit

import (
	"math"

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

// Loops finds every independent loop of the network of vectors — a cycle
// basis: a spanning forest by breadth-first search, and for each vector
// not in it the loop it closes through the tree — and each loop's
// misclosure. The basis has (vectors − marks + components) loops; a
// repeated baseline is a loop of two. Each mark's position relative to
// its tree's root is summed once, so a loop's misclosure is
//
//	Δ_e + p(From) − p(To)
//
// in constant time, and walking the loop's steps costs its length: a
// network of thousands of vectors takes milliseconds.
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
	type half struct{ to, edge int }
	var adj [][]half
	from, to := make([]int, len(edges)), make([]int, len(edges))
	for i, e := range edges {
		from[i], to[i] = node(e.From), node(e.To)
		for len(adj) < len(id) {
			adj = append(adj, nil)
		}
		adj[from[i]] = append(adj[from[i]], half{to[i], i})
		adj[to[i]] = append(adj[to[i]], half{from[i], i})
	}
	n := len(id)
	parent, parentEdge, depth := make([]int, n), make([]int, n), make([]int, n)
	pos := make([]r3.Vector, n)
	seen := make([]bool, n)
	inTree := make([]bool, len(edges))
	queue := make([]int, 0, n)
	for root := range n {
		if seen[root] {
			continue
		}
		seen[root], parent[root], parentEdge[root] = true, -1, -1
		queue = append(queue[:0], root)
		for len(queue) > 0 {
			u := queue[0]
			queue = queue[1:]
			for _, h := range adj[u] {
				if seen[h.to] {
					continue
				}
				seen[h.to], parent[h.to], parentEdge[h.to], depth[h.to] = true, u, h.edge, depth[u]+1
				inTree[h.edge] = true
				d := edges[h.edge].Delta
				if from[h.edge] != u {
					d = d.Mul(-1)
				}
				pos[h.to] = pos[u].Add(d)
				queue = append(queue, h.to)
			}
		}
	}
	var loops []Loop
	for i, e := range edges {
		if inTree[i] {
			continue
		}
		// The loop: e from A to B, then the tree from B back to A.
		a, b := from[i], to[i]
		l := Loop{Steps: []Step{{Index: i}}, Misclosure: e.Delta.Add(pos[a]).Sub(pos[b])}
		var up, down []Step // B up to the meeting mark; A up to it, walked back down
		x, y := b, a
		for x != y {
			if depth[x] >= depth[y] {
				pe := parentEdge[x]
				up = append(up, Step{Index: pe, Reversed: from[pe] != x}) // from x towards its parent
				x = parent[x]
			} else {
				pe := parentEdge[y]
				down = append(down, Step{Index: pe, Reversed: from[pe] != parent[y]}) // from y's parent to y
				y = parent[y]
			}
		}
		l.Steps = append(l.Steps, up...)
		for j := len(down) - 1; j >= 0; j-- {
			l.Steps = append(l.Steps, down[j])
		}
		var cov Covariance
		for _, st := range l.Steps {
			l.Length += edges[st.Index].Delta.Norm()
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
		loops = append(loops, l)
	}
	return loops, nil
}
