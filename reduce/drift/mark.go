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
	// displacement and common change are fitted to: one more than the
	// three unknowns.
	MinMarkLines = 4
	// minCross is |sin| of the smallest angle between two lines that
	// count as two directions (30°).
	minCross = 0.5
)

// A MarkLine is one night's residual of one line at a mark: the other
// end's name, the unit direction from the mark to it (east, north) and
// the residual and its σ, mm (observed − control).
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
	// CommonMM is the change common to every line at the mark, fitted
	// beside u.
	CommonMM float64
	Chi2, P  float64
	// Misfit is Σ v²/σ² of the lines about the fitted displacement, on
	// Lines − 3 degrees of freedom.
	Misfit float64
	Lines  int
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
// times that of their mean; common practice). Where the baselines scatter
// more than their σ say, every σ is scaled by that factor: 1.4826 times
// the median of |r − baseline|/σ over the baseline nights of all the
// mark's lines (the normal consistency factor of the median absolute
// deviation; common practice), so that a night's scatter, or errors the
// σ leave out, do not pass for a move. A mark moved by u (east,
// north) lengthens the line to the other end whose direction from the
// mark is d̂ by −u·d̂ to first order, and control does not move; a
// change of the instruments' additive constant changes every line at the
// mark alike, by c. So
//
//	Δr_i = −d̂_i·u + c + e_i,   e_i ~ N(0, σ_i²).
//
// u and c are fitted by weighted least squares (normal matrix
// N = Σ a_i a_iᵀ/σ_i², a_i = (−d̂_E, −d̂_N, 1)), and u is tested with
// χ² = uᵀ Q_uu⁻¹ u, Q_uu the 2×2 block of N⁻¹ (u's covariance), against
// χ²(2), whose tail is exactly P = exp(−χ²/2) (common practice). The mark
// moved when P < alpha with at least MinMarkLines lines in two directions
// (two lines at least 30° apart, either way round), and every subset of
// the lines less one, in two directions still, gives P < alpha as well:
// one bad line alone (a line flag, not a mark) does not move a mark; and
// the lines must fit the displacement: their misfit Σ v²/σ² about it
// within the 1 − alpha quantile of χ²(n − 3) (Wilson–Hilferty's
// approximation), or the changes are scatter or bad lines, not a mark
// that moved as one. Once
// a mark has moved, its baselines start again from that night.
func MarkShifts(nights []MarkNight, alpha float64) []Shift {
	var out []Shift
	// seen holds each line's residuals and variances on the nights since
	// the mark last moved, by its other end.
	type past struct{ r, v []float64 }
	seen := map[string]*past{}
	var base []float64
	for _, nt := range nights {
		var dirs [][2]float64
		var change, sigma, scatter []float64
		for _, l := range nt.Lines {
			p := seen[l.Other]
			if p == nil || len(p.r) < MinBaselineNights {
				continue
			}
			base = append(base[:0], p.r...)
			slices.Sort(base)
			k := float64(len(base))
			mean := 0.0
			for _, v := range p.v {
				mean += v / k
			}
			med := median(base)
			for j, r := range p.r {
				scatter = append(scatter, math.Abs(r-med)/math.Sqrt(p.v[j]))
			}
			dirs = append(dirs, [2]float64{l.E, l.N})
			change = append(change, l.ResidualMM-med)
			sigma = append(sigma, math.Sqrt(l.SigmaMM*l.SigmaMM+math.Pi/(2*k)*mean))
		}
		if len(scatter) > 0 {
			slices.Sort(scatter)
			if f := 1.4826 * median(scatter); f > 1 {
				for j := range sigma {
					sigma[j] *= f
				}
			}
		}
		s, moved := displacement(dirs, change, sigma, -1)
		moved = moved && s.P < alpha && s.Misfit <= chi2Quantile(1-alpha, s.Lines-3)
		for drop := range dirs {
			if !moved {
				break
			}
			if t, ok := displacement(dirs, change, sigma, drop); ok && t.P >= alpha {
				moved = false
			}
		}
		if moved {
			s.Night = nt.Night
			out = append(out, s)
			clear(seen)
		}
		for _, l := range nt.Lines {
			p := seen[l.Other]
			if p == nil {
				p = &past{}
				seen[l.Other] = p
			}
			p.r = append(p.r, l.ResidualMM)
			p.v = append(p.v, l.SigmaMM*l.SigmaMM)
		}
	}
	return out
}

// displacement fits u and c to the lines but drop (-1: none); ok is
// false with fewer than MinMarkLines lines (MinMarkLines − 1 when one is
// dropped) or not two directions.
func displacement(dirs [][2]float64, change, sigma []float64, drop int) (Shift, bool) {
	// Normal equations of Δr_i = −d_E u_E − d_N u_N + c.
	var n [3][3]float64
	var b [3]float64
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
		a := [3]float64{-d[0], -d[1], 1}
		for r := range 3 {
			for c := range 3 {
				n[r][c] += w * a[r] * a[c]
			}
			b[r] += w * a[r] * change[i]
		}
		lines++
	}
	need := MinMarkLines
	if drop >= 0 {
		need--
	}
	if lines < need || !twoWays {
		return Shift{}, false
	}
	q, ok := inverse3(n)
	if !ok {
		return Shift{}, false
	}
	var x [3]float64
	for r := range 3 {
		for c := range 3 {
			x[r] += q[r][c] * b[c]
		}
	}
	// χ² of u with its own covariance, the 2×2 block of N⁻¹.
	det := q[0][0]*q[1][1] - q[0][1]*q[0][1]
	if !(det > 0) {
		return Shift{}, false
	}
	ue, un := x[0], x[1]
	chi2 := (ue*ue*q[1][1] - 2*ue*un*q[0][1] + un*un*q[0][0]) / det
	misfit := 0.0
	for i, d := range dirs {
		if i == drop {
			continue
		}
		v := change[i] - (-d[0]*ue - d[1]*un + x[2])
		misfit += v * v / (sigma[i] * sigma[i])
	}
	return Shift{EastMM: ue, NorthMM: un, SigmaEastMM: math.Sqrt(q[0][0]), SigmaNorthMM: math.Sqrt(q[1][1]), CovMM2: q[0][1],
		CommonMM: x[2], Chi2: chi2, P: math.Exp(-chi2 / 2), Misfit: misfit, Lines: lines}, true
}

// inverse3 inverts a symmetric 3×3 matrix by its cofactors; ok is false
// when it is (nearly) singular.
func inverse3(m [3][3]float64) ([3][3]float64, bool) {
	var q [3][3]float64
	q[0][0] = m[1][1]*m[2][2] - m[1][2]*m[2][1]
	q[0][1] = m[0][2]*m[2][1] - m[0][1]*m[2][2]
	q[0][2] = m[0][1]*m[1][2] - m[0][2]*m[1][1]
	q[1][1] = m[0][0]*m[2][2] - m[0][2]*m[2][0]
	q[1][2] = m[0][2]*m[1][0] - m[0][0]*m[1][2]
	q[2][2] = m[0][0]*m[1][1] - m[0][1]*m[1][0]
	det := m[0][0]*q[0][0] + m[0][1]*q[0][1] + m[0][2]*q[0][2]
	if !(det > 1e-12*m[0][0]*m[1][1]*m[2][2]) {
		return q, false
	}
	q[1][0], q[2][0], q[2][1] = q[0][1], q[0][2], q[1][2]
	for r := range 3 {
		for c := range 3 {
			q[r][c] /= det
		}
	}
	return q, true
}

// chi2Quantile is the p-quantile of χ²(k) by Wilson and Hilferty's cube
// root approximation (Wilson, E. B. and Hilferty, M. M. (1931), The
// distribution of chi-square, PNAS 17): k (1 − 2/(9k) + z_p √(2/(9k)))³,
// z_p the standard normal p-quantile; at p = 0.999 it is 1.2 % low at
// k = 5 and 0.6 % at k = 10 (against the χ² table). k ≤ 0 gives +Inf: nothing to test.
func chi2Quantile(p float64, k int) float64 {
	if k <= 0 {
		return math.Inf(1)
	}
	z := math.Sqrt2 * math.Erfinv(2*p-1)
	fk := float64(k)
	c := 1 - 2/(9*fk) + z*math.Sqrt(2/(9*fk))
	return fk * c * c * c
}
