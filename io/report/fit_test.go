package report

import (
	"bytes"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
)

// lines makes n lines from 100 m to 10 km whose residuals follow
// constant + scale·d plus noise of the given σ.
func fitLines(n int, constantMM, scalePPM, sigmaMM float64, seed uint64) []Line {
	rng := rand.New(rand.NewPCG(seed, 7))
	out := make([]Line, n)
	for i := range out {
		d := 100 + rng.Float64()*9900
		out[i] = Line{Geodesic: d, SigmaMM: sigmaMM, ResidualMM: constantMM + scalePPM*d/1000 + rng.NormFloat64()*sigmaMM}
	}
	return out
}

// A wrong prism constant (−30 mm) and a wrong ppm (+4 ppm) are found by
// the fit, to within 3σ of its own estimate; a few gross blunders do not
// bend it.
func TestFitFindsConstantAndScale(t *testing.T) {
	lines := fitLines(200, -30, 4, 2, 1)
	lines[3].ResidualMM += 500
	lines[77].ResidualMM -= 900
	lines[150].ResidualMM += 60
	f := FitResiduals(lines, 3.29)
	require.NotNil(t, f)
	assert.Equal(t, 197, f.N, "the three blunders are left out")
	assert.InDelta(t, -30, f.ConstantMM, 3*f.ConstantSigma)
	assert.InDelta(t, 4, f.ScalePPM, 3*f.ScaleSigma)
	assert.True(t, f.ConstantSignificant)
	assert.True(t, f.ScaleSignificant)
	assert.InDelta(t, 1, f.VarianceFactor, 0.3, "the noise is as its σ says")

	clean := FitResiduals(fitLines(50, 0, 0, 2, 2), 3.29)
	require.NotNil(t, clean)
	assert.False(t, clean.ConstantSignificant)
	assert.False(t, clean.ScaleSignificant)

	assert.Nil(t, FitResiduals(fitLines(2, 0, 0, 2, 3), 3.29), "two lines do not make a fit")
	same := fitLines(10, 0, 0, 2, 4)
	for i := range same {
		same[i].Geodesic = 500
	}
	assert.Nil(t, FitResiduals(same, 3.29), "lines of one length cannot separate constant from scale")
}

// Many blunders cost few rounds: 20 % of 100 000 lines off by metres.
func TestFitWithManyBlundersIsQuick(t *testing.T) {
	lines := fitLines(100000, 1, 0.5, 2, 5)
	for i := 0; i < len(lines); i += 5 {
		lines[i].ResidualMM += 1000 + float64(i%97)*50
	}
	f := FitResiduals(lines, 3.29)
	require.NotNil(t, f)
	assert.InDelta(t, 80000, f.N, 200)
	assert.InDelta(t, 1, f.ConstantMM, 3*f.ConstantSigma)
}

// The spread test: for two observations it is |x₁ − x₂| > c·√2·σ; for
// many, (n − 1)s²/σ² against χ²(n − 1) at α = 2(1 − Φ(c)). Reference
// quantiles: χ²(1) at 0.999 is c² exactly; common statistical tables give
// 10.83 for χ²(1) and 90.57 for χ²(53) at 0.999 [memory].
func TestSpreadLimit(t *testing.T) {
	const c = 3.2905267314919255
	assert.InDelta(t, c*c, spreadLimit(c, 1), 1e-9, "χ²(1) quantile is c²")
	assert.InDelta(t, 10.83, spreadLimit(c, 1), 0.01)
	assert.InDelta(t, 90.57, spreadLimit(c, 53), 0.05)
	limits := spreadLimits{critical: c}
	assert.Equal(t, spreadLimit(c, 53), limits.at(53))
	assert.Equal(t, spreadLimit(c, 53), limits.at(53), "remembered")
}

// A large job lists its flagged lines only, at most MaxListedLines of
// them and the worst by |w|; the counts still say how many there are.
func TestSummaryListsTheWorstFlaggedLines(t *testing.T) {
	a := NewAggregator(3.29, reduce.DistanceSpec{}, false, sameLine{Inverse: reduce.Inverse{Distance: 1000}, GridDistance: 1000, Radius: 6.4e6})
	n := MaxListedLines * 3
	for i := range n {
		acc := observed(a, int32(n-1-i), lineAcc{from: 0, to: 1, dirN: [2]int32{1, 0}, mean: 1000, sumVar: 1e-6, maxAbsW: float64(i % 7)})
		if i%2 == 0 {
			acc.outliers, acc.maxAbsW = 1, 4+float64(i)
		}
	}
	var s Summary
	a.Finish(&s)
	assert.Equal(t, n/2, s.Counts.FlaggedLines)
	require.Len(t, s.Lines, MaxListedLines)
	assert.Equal(t, n-MaxListedLines, s.LinesNotListed)
	for i, l := range s.Lines {
		assert.True(t, l.Flagged())
		assert.GreaterOrEqual(t, l.MaxAbsW, 4+float64(n-2*MaxListedLines), "line %d is among the worst", i)
		if i > 0 {
			assert.Greater(t, l.MaxAbsW, s.Lines[i-1].MaxAbsW, "in the order first observed")
		}
	}
}

// observed gives a the record l of the next line first observed, under
// number id (numbered here otherwise than in that order, as a run's lines
// may be).
func observed(a *Aggregator, id int32, l lineAcc) *lineAcc {
	acc := a.lines.get(id)
	*acc = l
	a.order = append(a.order, id)
	return acc
}

// sameLine is a LineSource whose every line is the same, between points
// A (0) and B (1) with marks at 0 m.
type sameLine reduce.Line

func (s sameLine) KnownLine(id, from, to int32) (reduce.Line, bool) { return reduce.Line(s), true }
func (sameLine) PointID(i int32) string                             { return string(rune('A' + i)) }
func (sameLine) MarkHeight(int32) float64                           { return 0 }

// WriteLines, formatting blocks of lines on every core after Finish, and
// without Finish, writes what EachLine gives, in its order: flagged lines
// first, then the others, each in the order first observed.
func TestWriteLinesInEachLinesOrder(t *testing.T) {
	u := Units{Length: units.Metre, Angle: units.Degrees}
	build := func() *Aggregator {
		a := NewAggregator(3.29, reduce.DistanceSpec{}, false, sameLine{Inverse: reduce.Inverse{Distance: 1000}, GridDistance: 1000, Radius: 6.4e6})
		n := 3*lineBlock + 17
		for i := range n {
			acc := observed(a, int32(n-1-i), lineAcc{from: 0, to: 1, dirN: [2]int32{1, 0}, mean: 1000 + float64(i)*1e-5, sumVar: 1e-6, maxAbsW: float64(i % 7)})
			if i%5 == 0 || (i > lineBlock && i < lineBlock+40) {
				acc.outliers, acc.maxAbsW = 1, 4+float64(i)
			}
		}
		return a
	}
	var want bytes.Buffer
	want.Write(AppendHeader(nil, LinesHeader(u)))
	a := build()
	require.NoError(t, a.EachLine(func(l *Line) error {
		want.Write(AppendLineRow(nil, l, u))
		return nil
	}))
	var without bytes.Buffer
	require.NoError(t, a.WriteLines(&without, u))
	assert.Equal(t, want.String(), without.String(), "without Finish")

	a.Finish(&Summary{})
	var with bytes.Buffer
	require.NoError(t, a.WriteLines(&with, u))
	assert.Equal(t, want.String(), with.String(), "after Finish, in blocks")
	rows := strings.Split(strings.TrimSuffix(with.String(), "\n"), "\n")
	require.Len(t, rows, 1+3*lineBlock+17)
	assert.Contains(t, rows[1], "outlier", "flagged lines first")
	assert.NotContains(t, rows[len(rows)-1], "outlier")
}
