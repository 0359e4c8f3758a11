package audit

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestLoopsKnownMisclosure: a triangle A→B→C closed by A→C with 12 mm
// put into it, and a repeated A→B observed B→A, 3 mm apart in X.
func TestLoopsKnownMisclosure(t *testing.T) {
	ab := r3.Vector{X: 1000, Y: 200, Z: -300}
	bc := r3.Vector{X: -400, Y: 900, Z: 150}
	cov := DiagonalCovariance(2*mm, 2*mm, 3*mm)
	edges := []Edge{
		{Index: 0, From: "A", To: "B", Delta: ab, Cov: cov},
		{Index: 1, From: "B", To: "C", Delta: bc, Cov: cov},
		{Index: 2, From: "A", To: "C", Delta: ab.Add(bc).Add(r3.Vector{Z: 12 * mm}), Cov: cov},
		{Index: 3, From: "B", To: "A", Delta: ab.Mul(-1).Add(r3.Vector{X: 3 * mm}), Cov: cov},
	}
	loops, err := Loops(edges, testSettings())
	require.NoError(t, err)
	require.Len(t, loops, 2, "4 vectors − 3 marks + 1 component")
	rep, tri := loops[0], loops[1]
	// The repeat, found for A→B, the first vector: A→B then B→A.
	assert.True(t, rep.Repeat)
	assert.Equal(t, []Step{{0, false}, {3, false}}, rep.Steps)
	assert.InDelta(t, 3*mm, rep.Misclosure.X, 1e-9)
	assert.InDelta(t, 3, rep.MM, 1e-6)
	assert.True(t, rep.Pass)
	// The triangle: B→A is 3 mm shorter than A→B (its X is 1000 m less
	// 3 mm), so the shortest triangle is B→C, C→A, A→B along B→A, found
	// for B→C, the first of its vectors; it closes to −12 mm in Z and
	// −3 mm in X.
	assert.False(t, tri.Repeat)
	assert.Equal(t, []Step{{1, false}, {2, true}, {3, true}}, tri.Steps)
	assert.InDelta(t, -3*mm, tri.Misclosure.X, 1e-9)
	assert.InDelta(t, 0, tri.Misclosure.Y, 1e-9)
	assert.InDelta(t, -12*mm, tri.Misclosure.Z, 1e-9)
	m := math.Hypot(3, 12)
	assert.InDelta(t, m, tri.MM, 1e-6)
	lenTri := bc.Norm() + edges[2].Delta.Norm() + edges[3].Delta.Norm()
	assert.Less(t, lenTri, bc.Norm()+edges[2].Delta.Norm()+ab.Norm())
	assert.InDelta(t, lenTri, tri.Length, 1e-9)
	assert.InDelta(t, m*mm/lenTri*1e6, tri.PPM, 1e-9)
	tol := 5*mm + 2e-6*lenTri
	assert.InDelta(t, tol-m*mm, tri.Margin, 1e-9)
	assert.Equal(t, tol >= m*mm, tri.Pass)
	assert.InDelta(t, math.Sqrt(3*(4+4+9))*mm, tri.Sigma, 1e-12)
}

// TestLoopsCount: a grid network of r × c marks with every horizontal and
// vertical vector has (vectors − marks + 1) independent loops, each of
// four vectors — the grid's squares — closing to 0 when the vectors do.
func TestLoopsCount(t *testing.T) {
	edges := gridNetwork(10, 12, nil)
	loops, err := Loops(edges, testSettings())
	require.NoError(t, err)
	assert.Len(t, loops, len(edges)-10*12+1)
	assert.Equal(t, len(loops), gf2Rank(loops, len(edges)))
	for _, l := range loops {
		assert.Len(t, l.Steps, 4)
		assert.False(t, l.Repeat)
		assert.InDelta(t, 2000, l.Length, 1e-9)
		assert.Less(t, l.MM, 1e-6)
	}
}

// TestLoopsCrossedSquares: a lattice of squares with both diagonals in
// each (four triangles a square, three of them independent) and some
// vectors repeated: every loop is a triangle or a repeated baseline,
// where one shortest loop a vector would leave squares short of their
// third triangle.
func TestLoopsCrossedSquares(t *testing.T) {
	const side = 8
	var edges []Edge
	cov := DiagonalCovariance(2*mm, 2*mm, 3*mm)
	name := func(i, j int) string { return fmt.Sprintf("M%d_%d", i, j) }
	rnd := rand.New(rand.NewPCG(2, 9))
	at := make([]r3.Vector, side*side) // 400 m apart, give or take 40 m
	for i := range at {
		at[i] = r3.Vector{X: 400*float64(i%side) + 40*rnd.NormFloat64(), Y: 400*float64(i/side) + 40*rnd.NormFloat64()}
	}
	for _, d := range [][2]int{{0, 1}, {1, 0}, {1, 1}, {1, -1}} {
		for i := range side {
			for j := range side {
				k, l := i+d[0], j+d[1]
				if k < side && l >= 0 && l < side {
					edges = append(edges, Edge{Index: len(edges), From: name(i, j), To: name(k, l), Delta: at[k*side+l].Sub(at[i*side+j]), Cov: cov})
				}
			}
		}
	}
	for i := range 5 {
		e := edges[7*i]
		edges = append(edges, Edge{Index: len(edges), From: e.To, To: e.From, Delta: e.Delta.Mul(-1), Cov: cov})
	}
	loops, err := Loops(edges, testSettings())
	require.NoError(t, err)
	require.Len(t, loops, len(edges)-side*side+1)
	assert.Equal(t, 3*(side-1)*(side-1)+5, len(loops))
	assert.Equal(t, len(loops), gf2Rank(loops, len(edges)))
	repeats := 0
	for _, l := range loops {
		assert.LessOrEqual(t, len(l.Steps), 3)
		if l.Repeat {
			repeats++
		}
	}
	assert.Equal(t, 5, repeats)
}

// TestLoopsIndependent: on a random network of three parts, with
// repeated baselines, spurs and a part of a single vector, the loops
// are closed walks of distinct vectors, their number is vectors − marks
// + components, and they are independent: their rank over GF(2), by
// plain elimination of their vectors' incidence, equals their number.
// The misclosures are the vectors summed along the steps.
func TestLoopsIndependent(t *testing.T) {
	rnd := rand.New(rand.NewPCG(7, 11))
	var edges []Edge
	cov := DiagonalCovariance(2*mm, 2*mm, 3*mm)
	add := func(a, b string, d r3.Vector) {
		edges = append(edges, Edge{Index: len(edges), From: a, To: b, Delta: d, Cov: cov})
	}
	for part, marks := range []int{40, 25, 12} {
		name := func(i int) string { return fmt.Sprintf("P%d_%d", part, i) }
		at := make([]r3.Vector, marks)
		for i := range at {
			at[i] = r3.Vector{X: rnd.Float64() * 3000, Y: rnd.Float64() * 3000, Z: rnd.Float64() * 50}
		}
		noisy := func(i, j int) r3.Vector {
			return at[j].Sub(at[i]).Add(r3.Vector{X: rnd.NormFloat64() * mm, Y: rnd.NormFloat64() * mm, Z: rnd.NormFloat64() * mm})
		}
		for i := 1; i < marks; i++ { // a random tree keeps the part in one piece
			j := rnd.IntN(i)
			add(name(j), name(i), noisy(j, i))
		}
		for range 2 * marks { // and vectors across it, some repeated either way
			i, j := rnd.IntN(marks), rnd.IntN(marks)
			if i == j {
				continue
			}
			add(name(i), name(j), noisy(i, j))
			if rnd.IntN(4) == 0 {
				add(name(j), name(i), noisy(j, i))
			}
		}
		add(name(0), name(0)+"_spur", r3.Vector{X: 100})
	}
	add("LONE_A", "LONE_B", r3.Vector{Y: 700})
	rnd.Shuffle(len(edges), func(i, j int) { edges[i], edges[j] = edges[j], edges[i] })
	for i := range edges {
		edges[i].Index = i
	}

	// Marks and components by union–find.
	up := map[string]string{}
	var root func(string) string
	root = func(m string) string {
		if p, ok := up[m]; ok && p != m {
			r := root(p)
			up[m] = r
			return r
		}
		up[m] = m
		return m
	}
	components := 0
	for _, e := range edges {
		root(e.From)
		root(e.To)
	}
	marks := len(up)
	components = marks
	for _, e := range edges {
		if a, b := root(e.From), root(e.To); a != b {
			up[a] = b
			components--
		}
	}
	require.Equal(t, 4, components)

	loops, err := Loops(edges, testSettings())
	require.NoError(t, err)
	require.Len(t, loops, len(edges)-marks+components)
	assert.Equal(t, len(loops), gf2Rank(loops, len(edges)), "the loops are independent")
	repeats := 0
	for k, l := range loops {
		if k > 0 {
			assert.LessOrEqual(t, loops[k-1].Steps[0].Index, l.Steps[0].Index, "in the order of the vector each was found for")
		}
		assert.False(t, l.Steps[0].Reversed, "the first step in its delivered sense")
		used := map[int]bool{}
		var sum r3.Vector
		start, at := "", ""
		for i, st := range l.Steps {
			require.False(t, used[st.Index], "loop %d uses vector %d twice", k, st.Index)
			used[st.Index] = true
			e := edges[st.Index]
			a, b, d := e.From, e.To, e.Delta
			if st.Reversed {
				a, b, d = b, a, d.Mul(-1)
			}
			if i == 0 {
				start = a
			} else {
				require.Equal(t, at, a, "loop %d: step %d starts where the one before ends", k, i)
			}
			at = b
			sum = sum.Add(d)
		}
		assert.Equal(t, start, at, "loop %d closes", k)
		assert.InDelta(t, 0, sum.Sub(l.Misclosure).Norm(), 1e-9)
		assert.Equal(t, len(l.Steps) == 2, l.Repeat)
		if l.Repeat {
			repeats++
		}
	}
	assert.Positive(t, repeats)
}

// TestLoopsRingOfTriangles: a ring of triangles, each built on one side
// of a hexagon, has one loop more than its triangles, the ring itself,
// which no vector's shortest loop gives: the basis is completed with a
// loop through the spanning forest and stays independent.
func TestLoopsRingOfTriangles(t *testing.T) {
	const sides = 6
	var edges []Edge
	cov := DiagonalCovariance(2*mm, 2*mm, 3*mm)
	corner := func(i int) r3.Vector {
		a := 2 * math.Pi * float64(i%sides) / sides
		return r3.Vector{X: 1000 * math.Cos(a), Y: 1000 * math.Sin(a)}
	}
	add := func(a, b string, d r3.Vector) {
		edges = append(edges, Edge{Index: len(edges), From: a, To: b, Delta: d, Cov: cov})
	}
	for i := range sides {
		c, n := fmt.Sprintf("C%d", i), fmt.Sprintf("C%d", (i+1)%sides)
		apex := corner(i).Add(corner(i + 1)).Mul(0.75) // outside the side
		add(c, n, corner(i+1).Sub(corner(i)))
		add(c, "T"+c, apex.Sub(corner(i)))
		add("T"+c, n, corner(i+1).Sub(apex))
	}
	loops, err := Loops(edges, testSettings())
	require.NoError(t, err)
	require.Len(t, loops, 3*sides-2*sides+1)
	assert.Equal(t, len(loops), gf2Rank(loops, len(edges)))
	long := 0
	for _, l := range loops {
		if len(l.Steps) > 3 {
			long++
		}
		assert.Less(t, l.MM, 1e-6)
	}
	assert.Equal(t, 1, long, "the six triangles and one loop around")
}

// TestLoopsBlunder: one vector of a lattice 15 mm out is flagged by the
// loops that hold it, squares of four vectors, and by no other; in the
// basis of a breadth-first tree's fundamental loops, computed here for
// comparison, every loop that holds it is long enough for its tolerance
// to swallow the 15 mm, and it would pass.
func TestLoopsBlunder(t *testing.T) {
	const rows, cols = 10, 12
	edges := gridNetwork(rows, cols, rand.New(rand.NewPCG(3, 5)))
	for i := range edges {
		edges[i].Cov = DiagonalCovariance(mm, mm, mm) // the lattice's noise
	}
	bad := len(edges) - 3 // a vector of the square farthest from the first mark
	edges[bad].Delta = edges[bad].Delta.Add(r3.Vector{X: 15 * mm})
	s := testSettings()
	loops, err := Loops(edges, s)
	require.NoError(t, err)
	holding := 0
	for _, l := range loops {
		has := false
		for _, st := range l.Steps {
			has = has || st.Index == bad
		}
		if !has {
			assert.True(t, l.Pass, "a loop without the blunder passes: %+v", l)
			continue
		}
		holding++
		assert.False(t, l.Pass, "a loop with the blunder fails: %+v", l)
		assert.LessOrEqual(t, len(l.Steps), 4)
		assert.Greater(t, l.MM/(l.Sigma*1e3), s.Critical, "and is significant against its σ")
	}
	assert.Positive(t, holding)

	// The fundamental loops of a breadth-first tree from the first mark.
	adj := map[string][]int{}
	for i, e := range edges {
		adj[e.From] = append(adj[e.From], i)
		adj[e.To] = append(adj[e.To], i)
	}
	other := func(i int, m string) string {
		if edges[i].From == m {
			return edges[i].To
		}
		return edges[i].From
	}
	parent := map[string]int{edges[0].From: -1}
	depth := map[string]int{edges[0].From: 0}
	for queue := []string{edges[0].From}; len(queue) > 0; queue = queue[1:] {
		for _, i := range adj[queue[0]] {
			m := other(i, queue[0])
			if _, ok := parent[m]; !ok {
				parent[m], depth[m] = i, depth[queue[0]]+1
				queue = append(queue, m)
			}
		}
	}
	inTree := map[int]bool{}
	for _, i := range parent {
		if i >= 0 {
			inTree[i] = true
		}
	}
	fundamental := 0
	for i := range edges {
		if inTree[i] {
			continue
		}
		cycle := []int{i}
		a, b := edges[i].From, edges[i].To
		for a != b {
			if depth[a] < depth[b] {
				a, b = b, a
			}
			cycle = append(cycle, parent[a])
			a = other(parent[a], a)
		}
		if !slices.Contains(cycle, bad) {
			continue
		}
		fundamental++
		var sum r3.Vector
		length := 0.0
		for k, j := range cycle {
			d := edges[j].Delta
			length += d.Norm()
			// Orient each vector around the cycle by the mark it shares
			// with the next: a cycle's misclosure is independent of where
			// it starts.
			next := edges[cycle[(k+1)%len(cycle)]]
			if edges[j].From == next.From || edges[j].From == next.To {
				d = d.Mul(-1)
			}
			sum = sum.Add(d)
		}
		tol, err := s.Tolerance.At(length)
		require.NoError(t, err)
		assert.Greater(t, len(cycle), 4)
		assert.Less(t, sum.Norm(), tol, "the fundamental loop of %d vectors, %.0f m, hides the blunder", len(cycle), length)
	}
	assert.Positive(t, fundamental)
}

// gf2Rank is the rank over GF(2) of the loops' vector-incidence rows,
// by plain elimination of dense rows.
func gf2Rank(loops []Loop, edges int) int {
	rows := make([][]bool, len(loops))
	for k, l := range loops {
		rows[k] = make([]bool, edges)
		for _, st := range l.Steps {
			rows[k][st.Index] = !rows[k][st.Index]
		}
	}
	rank := 0
	for col := 0; col < edges && rank < len(rows); col++ {
		p := -1
		for r := rank; r < len(rows); r++ {
			if rows[r][col] {
				p = r
				break
			}
		}
		if p < 0 {
			continue
		}
		rows[rank], rows[p] = rows[p], rows[rank]
		for r := range rows {
			if r != rank && rows[r][col] {
				for c := range rows[r] {
					rows[r][c] = rows[r][c] != rows[rank][c]
				}
			}
		}
		rank++
	}
	return rank
}

// gridNetwork is an r × c grid of marks 500 m apart with vectors to the
// right and up; rnd, if set, adds noise of a millimetre.
func gridNetwork(r, c int, rnd *rand.Rand) []Edge {
	var edges []Edge
	name := func(i, j int) string { return fmt.Sprintf("M%d_%d", i, j) }
	cov := DiagonalCovariance(2*mm, 2*mm, 3*mm)
	noise := func() r3.Vector {
		if rnd == nil {
			return r3.Vector{}
		}
		return r3.Vector{X: rnd.NormFloat64() * mm, Y: rnd.NormFloat64() * mm, Z: rnd.NormFloat64() * mm}
	}
	for i := range r {
		for j := range c {
			if j+1 < c {
				edges = append(edges, Edge{Index: len(edges), From: name(i, j), To: name(i, j+1), Delta: r3.Vector{X: 500}.Add(noise()), Cov: cov})
			}
			if i+1 < r {
				edges = append(edges, Edge{Index: len(edges), From: name(i, j), To: name(i+1, j), Delta: r3.Vector{Y: 500}.Add(noise()), Cov: cov})
			}
		}
	}
	return edges
}

// BenchmarkLoops audits the loops of a network of about 10,000 vectors
// (a 71 × 71 grid of marks: 9,940 vectors, 4,900 loops).
func BenchmarkLoops(b *testing.B) {
	edges := gridNetwork(71, 71, rand.New(rand.NewPCG(1, 2)))
	s := testSettings()
	b.ReportMetric(float64(len(edges)), "vectors")
	for b.Loop() {
		loops, err := Loops(edges, s)
		if err != nil || len(loops) == 0 {
			b.Fatal(err)
		}
	}
}
