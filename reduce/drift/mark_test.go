package drift

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// network is a mark at the origin and the other ends of its lines
// (east, north, metres).
var others = map[string][2]float64{"P1": {800, 150}, "P2": {-300, 900}, "P3": {-700, -400}, "P4": {200, -1100}}

// markNights simulates a mark's lines over nights: residual noise of
// sigma mm, the mark moved by move (mm, east and north) from night
// movedOn, and the line to bad off by badMM on night badOn. The
// residual changes come from the distances between the coordinates, not
// from the model.
func markNights(n, movedOn int, move [2]float64, bad string, badOn int, badMM float64, names []string) []MarkNight {
	rng := rand.New(rand.NewPCG(3, 5))
	const sigma = 0.8
	out := make([]MarkNight, n)
	for i := range out {
		m := [2]float64{}
		if movedOn > 0 && i >= movedOn {
			m = [2]float64{move[0] / 1e3, move[1] / 1e3}
		}
		out[i] = MarkNight{X: float64(i), Night: string(rune('a' + i))}
		for _, o := range names {
			p := others[o]
			d0 := math.Hypot(p[0], p[1])
			d := math.Hypot(p[0]-m[0], p[1]-m[1])
			r := (d-d0)*1e3 + sigma*rng.NormFloat64()
			if o == bad && i == badOn {
				r += badMM
			}
			out[i].Lines = append(out[i].Lines, MarkLine{Other: o, E: p[0] / d0, N: p[1] / d0, ResidualMM: r, SigmaMM: sigma})
		}
	}
	return out
}

// TestMarkShifts: a mark moved 15 mm to the north-east on night 20 is
// found on night 20 alone (its baselines start again there), with its
// displacement; a single line off by 15 mm is not a moved mark, nor a
// change common to every line; two lines, or lines all one way, are not
// enough to tell.
func TestMarkShifts(t *testing.T) {
	all := []string{"P1", "P2", "P3", "P4"}
	move := [2]float64{15 / math.Sqrt2, 15 / math.Sqrt2}
	got := MarkShifts(markNights(30, 20, move, "", 0, 0, all), MarkAlpha)
	require.Len(t, got, 1)
	s := got[0]
	require.Equal(t, string(rune('a'+20)), s.Night)
	require.InDelta(t, 15, s.DistanceMM(), 2.5)
	require.InDelta(t, 45, s.Bearing(), 10)
	require.Less(t, s.P, MarkAlpha)
	require.Equal(t, 4, s.Lines)

	require.Empty(t, MarkShifts(markNights(30, 0, move, "P2", 12, 15, all), MarkAlpha), "one bad line")
	require.Empty(t, MarkShifts(markNights(30, 20, move, "", 0, 0, []string{"P1", "P2"}), MarkAlpha), "two lines")
	// P1 and a line to a point just beside it: one direction.
	others["P1b"] = [2]float64{810, 180}
	others["P1c"] = [2]float64{790, 120}
	defer delete(others, "P1b")
	defer delete(others, "P1c")
	require.Empty(t, MarkShifts(markNights(30, 20, move, "", 0, 0, []string{"P1", "P1b", "P1c"}), MarkAlpha), "one direction")
	// Every line 3 mm longer from night 15 (an instrument's constant) is
	// not a move: the common change takes it.
	common := markNights(30, 0, move, "", 0, 0, all)
	for i := 15; i < 30; i++ {
		for k := range common[i].Lines {
			common[i].Lines[k].ResidualMM += 3
		}
	}
	require.Empty(t, MarkShifts(common, MarkAlpha), "a change common to every line")
	// With no move nothing is found in 30 quiet nights.
	require.Empty(t, MarkShifts(markNights(30, 0, move, "", 0, 0, all), MarkAlpha))
}

// TestChi2Quantile: χ²(1) 0.999 = 10.828, χ²(5) 0.999 = 20.515,
// χ²(10) 0.999 = 29.588 (the χ² table, e.g. NIST/SEMATECH e-Handbook
// of Statistical Methods §1.3.6.7.4 [memory]), to 6 % at k = 1, 1.5 % at
// k = 5 and 1 % at k = 10.
func TestChi2Quantile(t *testing.T) {
	require.InEpsilon(t, 10.828, chi2Quantile(0.999, 1), 0.06)
	require.InEpsilon(t, 20.515, chi2Quantile(0.999, 5), 0.015)
	require.InEpsilon(t, 29.588, chi2Quantile(0.999, 10), 0.01)
	require.True(t, math.IsInf(chi2Quantile(0.999, 0), 1))
}
