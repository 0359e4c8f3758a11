package drift

import (
	"math"
	"slices"
)

// Defaults of the mark rule, stated in the command's help.
const (
	// MarkAlpha is the level of the χ²(2) test of a mark's displacement.
	MarkAlpha = 0.001
	// MinBaselineNights is the fewest earlier nights of a line that its
	// baseline is the median of.
	MinBaselineNights = 3
	// MinMarkLines is the fewest lines with a baseline that a mark's
	// displacement is fitted to.
	MinMarkLines = 3
	// minCross is |sin| of the smallest angle between two lines that
	// count as two directions (30°).
	minCross = 0.5
)

// A MarkLine is one night's residual of one line at a mark: the other
// end's name, the unit direction from the mark to it (east, north) and
// the residual and its σ, mm (observed − control, after the night's
// instrument calibration is taken off).
type MarkLine struct {
	Other      string
	E, N       float64
	ResidualMM float64
	SigmaMM    float64
}

// A MarkNight is one night of a mark: its number (days from any fixed
// night), its name in the history, and its lines.
type MarkNight struct {
	X     float64
	Night string
	Lines []MarkLine
}

// A Shift is a mark found displaced on a night.
type Shift struct {
	Night string
	// EastMM and NorthMM are the displacement, with their σ and the
	// covariance between them.
	EastMM, NorthMM, SigmaEastMM, SigmaNorthMM, CovMM2 float64
	Chi2, P                                           float64
	Lines                                             int
}

// DistanceMM is the displacement's length, mm.
func (s Shift) DistanceMM() float64 { return math.Hypot(s.EastMM, s.NorthMM) }

// Bearing is the displacement's direction, degrees clockwise from grid
// north in [0, 360).
func (s Shift) Bearing() float64 {
	b := math.Atan2(s.EastMM, s.NorthMM) * 180 / math.Pi
	if b < 0 {
		b += 360
	}
	return b
}

// MarkShifts walks a mark's nights in order and returns the nights on
// which the mark moved.
//
// The rule: each line's change on a night is its residual minus its
// baseline, the median of its residuals on at least MinBaselineNights
// earlier nights since the mark last moved; its variance is the night's
// σ² plus that of the median, π/(2k) times the mean σ² of its k baseline
// nights (the median of k normal values has an asymptotic variance π/2
// times that of their mean; common practice). A mark moved by u (east,
// north) lengthens the line to the other end whose direction from the
// mark is d̂ by −u·d̂ to first order, and control does not move, so
//
//	Δr_i = −d̂_i·u + e_i,   e_i ~ N(0, σ_i²).
//
// u is fitted by weighted least squares, N = Σ d̂_i d̂_iᵀ/σ_i²,
// u = −N⁻¹ Σ d̂_i Δr_i/σ_i², Cov(u) = N⁻¹, and tested with
// χ² = uᵀ N u against χ²(2), whose tail is exactly P = exp(−χ²/2)
// (common practice). The mark moved when P < alpha with at least
// MinMarkLines lines in two directions (two lines at least 30° apart,
// either way round), and every subset of the lines less one, in two
// directions still, gives P < alpha as well: one bad line alone (a line
// flag, not a mark) does not move a mark. Once a mark has moved, its
// baselines start again from that night.
func MarkShifts(nights []MarkNight, alpha float64) []Shift {
	var out []Shift
	start := 0 // first night of the baselines
	for i, nt := range nights {
		var dirs [][2]float64
		var change, sigma []float64
		for _, l := range nt.Lines {
			var base, vars []float64
			for _, prev := range nights[start:i] {
				for _, p := range prev.Lines {
					if p.Other == l.Other {
						base = append(base, p.ResidualMM)
						vars = append(vars, p.SigmaMM*p.SigmaMM)
					}
				}
			}
			if len(base) < MinBaselineNights {
				continue
			}
			slices.Sort(base)
			k := float64(len(base))
			mean := 0.0
			for _, v := range vars {
				mean += v / k
			}
			dirs = append(dirs, [2]float64{l.E, l.N})
			change = append(change, l.ResidualMM-median(base))
			sigma = append(sigma, math.Sqrt(l.SigmaMM*l.SigmaMM+math.Pi/(2*k)*mean))
		}
		s, ok := displacement(dirs, change, sigma, -1)
		if !ok || s.P >= alpha {
			continue
		}
		moved := true
		for drop := range dirs {
			if t, ok := displacement(dirs, change, sigma, drop); ok && t.P >= alpha {
				moved = false
				break
			}
		}
		if moved {
			s.Night = nt.Night
			out = append(out, s)
			start = i
		}
	}
	return out
}

// displacement fits u to the lines but drop (-1: none); ok is false
// with fewer than MinMarkLines lines (2 when one is dropped) or not two
// directions.
func displacement(dirs [][2]float64, change, sigma []float64, drop int) (Shift, bool) {
	var n11, n12, n22, b1, b2 float64
	lines := 0
	twoWays := false
	for i, d := range dirs {
		if i == drop {
			continue
		}
		for j := range i {
			if j != drop && math.Abs(d[0]*dirs[j][1]-d[1]*dirs[j][0]) >= minCross {
				twoWays = true
			}
		}
		w := 1 / (sigma[i] * sigma[i])
		n11 += w * d[0] * d[0]
		n12 += w * d[0] * d[1]
		n22 += w * d[1] * d[1]
		b1 -= w * d[0] * change[i]
		b2 -= w * d[1] * change[i]
		lines++
	}
	need := MinMarkLines
	if drop >= 0 {
		need = 2
	}
	det := n11*n22 - n12*n12
	if lines < need || !twoWays || det <= 0 {
		return Shift{}, false
	}
	c11, c12, c22 := n22/det, -n12/det, n11/det
	ue, un := c11*b1+c12*b2, c12*b1+c22*b2
	chi2 := ue*(n11*ue+n12*un) + un*(n12*ue+n22*un)
	return Shift{EastMM: ue, NorthMM: un, SigmaEastMM: math.Sqrt(c11), SigmaNorthMM: math.Sqrt(c22), CovMM2: c12,
		Chi2: chi2, P: math.Exp(-chi2 / 2), Lines: lines}, true
}
