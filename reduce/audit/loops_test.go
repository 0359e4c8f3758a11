package audit

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestLoopsKnownMisclosure: a triangle A→B→C closed by A→C with 12 mm
// put into it, and a repeated A→B observed B→A, 3 mm apart.
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
	tri, rep := loops[0], loops[1]
	assert.InDelta(t, 12, tri.MM, 1e-6)
	assert.False(t, tri.Repeat)
	// The tree from A holds A→B and A→C, so B→C closes the loop: B→C,
	// then C→A and A→B through the tree, −12 mm in Z.
	assert.Equal(t, []Step{{1, false}, {2, true}, {0, false}}, tri.Steps)
	assert.InDelta(t, -12*mm, tri.Misclosure.Z, 1e-9)
	lenTri := ab.Norm() + bc.Norm() + ab.Add(bc).Add(r3.Vector{Z: 12 * mm}).Norm()
	assert.InDelta(t, lenTri, tri.Length, 1e-9)
	assert.InDelta(t, 12*mm/lenTri*1e6, tri.PPM, 1e-9)
	tol := 5*mm + 2e-6*lenTri
	assert.InDelta(t, tol-12*mm, tri.Margin, 1e-9)
	assert.Equal(t, tol >= 12*mm, tri.Pass)
	assert.True(t, rep.Repeat)
	assert.InDelta(t, 3, rep.MM, 1e-6)
	assert.True(t, rep.Pass)
}

// TestLoopsCount: a grid network of r × c marks with every horizontal and
// vertical vector has (vectors − marks + 1) independent loops, each of
// four vectors, closing to 0 when the vectors do.
func TestLoopsCount(t *testing.T) {
	edges := gridNetwork(10, 12, nil)
	loops, err := Loops(edges, testSettings())
	require.NoError(t, err)
	assert.Len(t, loops, len(edges)-10*12+1)
	for _, l := range loops {
		assert.Less(t, l.MM, 1e-6)
	}
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
