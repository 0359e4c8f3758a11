package drift

import (
	"math"
	"slices"
)

// MannKendall is the Mann–Kendall test of a monotonic trend in y over its
// order (y[i] observed before y[i+1]; ties in time do not arise).
//
//	S = Σ_{i<j} sgn(y_j − y_i)
//	Var(S) = [n(n−1)(2n+5) − Σ_p t_p(t_p−1)(2t_p+5)] / 18
//
// t_p the size of the p-th group of tied values of y (the tie
// correction). With the normal approximation and its continuity
// correction,
//
//	Z = (S − 1)/√Var(S) for S > 0, 0 for S = 0, (S + 1)/√Var(S) for S < 0,
//
// and the two-sided p-value is 2(1 − Φ(|Z|)) = erfc(|Z|/√2). Sources:
// Mann, H. B. (1945), Nonparametric tests against trend, Econometrica 13;
// Kendall, M. G. (1975), Rank Correlation Methods, 4th ed., Griffin;
// Gilbert, R. O. (1987), Statistical Methods for Environmental Pollution
// Monitoring, Wiley, §16.4 (the formulas above as used there). The
// normal approximation is good from about n = 10; below that Z is still
// returned and the p-value is approximate.
type MannKendall struct {
	N    int
	S    int
	VarS float64
	Z    float64
	P    float64 // two-sided
}

// MannKendallTest computes the test over y (n ≥ 3; fewer give N only and
// P = 1).
func MannKendallTest(y []float64) MannKendall {
	n := len(y)
	mk := MannKendall{N: n, P: 1}
	if n < 3 {
		return mk
	}
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			switch {
			case y[j] > y[i]:
				mk.S++
			case y[j] < y[i]:
				mk.S--
			}
		}
	}
	s := slices.Clone(y)
	slices.Sort(s)
	ties := 0.0
	for i := 0; i < n; {
		j := i + 1
		for j < n && s[j] == s[i] {
			j++
		}
		if t := float64(j - i); t > 1 {
			ties += t * (t - 1) * (2*t + 5)
		}
		i = j
	}
	fn := float64(n)
	mk.VarS = (fn*(fn-1)*(2*fn+5) - ties) / 18
	if mk.VarS <= 0 {
		return mk
	}
	sd := math.Sqrt(mk.VarS)
	switch {
	case mk.S > 0:
		mk.Z = float64(mk.S-1) / sd
	case mk.S < 0:
		mk.Z = float64(mk.S+1) / sd
	}
	mk.P = math.Erfc(math.Abs(mk.Z) / math.Sqrt2)
	return mk
}

// TheilSen is a robust straight line y = Intercept + Slope·x through
// points, with the confidence interval of its slope.
type TheilSen struct {
	Slope, Intercept float64
	// Lower and Upper bound the slope at confidence 1 − α (Sen 1968).
	Lower, Upper float64
	Confidence   float64 // 1 − α
}

// At is the line's value at x.
func (t TheilSen) At(x float64) float64 { return t.Intercept + t.Slope*x }

// TheilSenLine fits y against x (x distinct, at least two points) with
// confidence 1 − alpha for the slope.
//
// The slope is the median of the N' = n(n−1)/2 pairwise slopes
// (y_j − y_i)/(x_j − x_i) (Theil, H. (1950), A rank-invariant method of
// linear and polynomial regression analysis, Proc. KNAW 53; Sen, P. K.
// (1968), Estimates of the regression coefficient based on Kendall's
// tau, JASA 63). The intercept is the median of y_i − slope·x_i (Gilbert
// 1987 §16.5 uses the medians of x and y; both give a line of that slope
// through the bulk of the points). Sen's interval: with
// C = z_{1−α/2} √Var(S) (Var(S) of the Mann–Kendall test of y, with its
// tie correction), M1 = (N' − C)/2 and M2 = (N' + C)/2, the bounds are
// the M1-th and (M2+1)-th of the ordered slopes (1-based, M1 and M2
// rounded to the nearest integer and clamped to the slopes there are),
// as in Gilbert 1987 §16.5.1.
func TheilSenLine(x, y []float64, alpha float64) TheilSen {
	n := len(x)
	var slopes []float64
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			if dx := x[j] - x[i]; dx != 0 {
				slopes = append(slopes, (y[j]-y[i])/dx)
			}
		}
	}
	t := TheilSen{Confidence: 1 - alpha}
	if len(slopes) == 0 {
		return t
	}
	slices.Sort(slopes)
	t.Slope = median(slopes)
	off := make([]float64, n)
	for i := range off {
		off[i] = y[i] - t.Slope*x[i]
	}
	slices.Sort(off)
	t.Intercept = median(off)
	c := zTwoSided(alpha) * math.Sqrt(MannKendallTest(y).VarS)
	np := float64(len(slopes))
	m1 := int(math.Round((np - c) / 2))
	m2 := int(math.Round((np+c)/2)) + 1
	t.Lower = slopes[min(max(m1, 1), len(slopes))-1]
	t.Upper = slopes[min(max(m2, 1), len(slopes))-1]
	return t
}

// median of sorted values.
func median(s []float64) float64 {
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// zTwoSided is the standard normal quantile z_{1−α/2}: Φ⁻¹(1 − α/2) =
// √2 erf⁻¹(1 − α).
func zTwoSided(alpha float64) float64 { return math.Sqrt2 * math.Erfinv(1-alpha) }
