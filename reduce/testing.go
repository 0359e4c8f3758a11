package reduce

import (
	"math"

	"gonum.org/v1/gonum/mathext"
)

// TwoSidedAlpha is the probability that a standard normal variable
// exceeds c in absolute value, α = P(|w| > c) = erfc(c/√2): the chance
// that one observation free of blunders is flagged at the critical value
// c. 3.29 gives 0.001 and 1.96 gives 0.05 (tables of the normal
// distribution; common practice).
func TwoSidedAlpha(c float64) float64 { return math.Erfc(c / math.Sqrt2) }

// SidakCritical returns the critical value for |w| that holds the
// probability of at least one false flag among n independent tests of
// standardized residuals at alpha (Šidák, Z. (1967) Rectangular
// confidence regions for the means of multivariate normal distributions,
// J. Amer. Statist. Assoc. 62(318):626–633): each test runs at
//
//	α₁ = 1 − (1 − α)^(1/n)
//	c  = Φ⁻¹(1 − α₁/2) = √2 · erfc⁻¹(α₁)
//
// α₁ is formed as −expm1(log1p(−α)/n) so that it keeps its digits when n
// is millions. Bonferroni's α₁ = α/n is smaller by less than α²/2n and
// gives a critical value larger by under 0.01 at α = 0.05. With α = 0.05,
// n = 100 gives c = 3.47 and n = 1,000,000 gives c = 5.45.
//
// alpha must be in (0, 1) and n at least 1; otherwise an *InputError.
func SidakCritical(alpha float64, n int) (float64, error) {
	const stage = "testing"
	if !(alpha > 0 && alpha < 1) {
		return 0, &InputError{Stage: stage, Quantity: "job-wide α", Got: alpha, Want: "a probability between 0 and 1"}
	}
	if n < 1 {
		return 0, &InputError{Stage: stage, Quantity: "number of tests", Got: float64(n), Want: "at least one test"}
	}
	a1 := -math.Expm1(math.Log1p(-alpha) / float64(n))
	return math.Sqrt2 * math.Erfcinv(a1), nil
}

// Global test outcomes.
const (
	GlobalPass     = "pass"      // the variance factor is within its bounds
	GlobalTooLarge = "too large" // residuals larger than their σ allow: blunders, systematic errors or σ understated
	GlobalTooSmall = "too small" // residuals smaller than their σ allow: σ overstated
)

// GlobalTestResult is the test of the a posteriori variance factor of a
// set of standardized residuals.
type GlobalTestResult struct {
	N              int     // residuals tested: the degrees of freedom (control is held fixed, nothing is estimated)
	SumSquares     float64 // Σw²
	VarianceFactor float64 // s₀²/σ₀² = Σw²/N
	Alpha          float64 // the test's two-sided α
	Lower, Upper   float64 // the variance factor's bounds, χ²(N; α/2)/N and χ²(N; 1 − α/2)/N
	Outcome        string  // GlobalPass, GlobalTooLarge or GlobalTooSmall
}

// GlobalTest tests whether n standardized residuals w = r/σ, whose
// squares sum to sumSquares, agree with their a priori σ: with the
// control held fixed each residual is an observation minus a known
// value, so without blunders and with the right σ, Σw² follows χ² with n
// degrees of freedom, and the variance factor Σw²/n lies within
//
//	χ²(n; α/2)/n  ≤  Σw²/n  ≤  χ²(n; 1 − α/2)/n
//
// with probability 1 − α (the global or overall model test of a
// network; Baarda, W. (1968) A testing procedure for use in geodetic
// networks, Netherlands Geodetic Commission, Publications on Geodesy
// 2(5) [memory]). The χ² quantiles are 2 P⁻¹(n/2, p), P the regularised
// lower incomplete gamma function. Observations of one line share their
// control and centring errors, so where those are a large part of σ the
// squares are not quite independent and the test is only approximate.
//
// n must be at least 1, sumSquares finite and non-negative, alpha in
// (0, 1); otherwise an *InputError.
func GlobalTest(sumSquares float64, n int, alpha float64) (GlobalTestResult, error) {
	const stage = "testing"
	if n < 1 {
		return GlobalTestResult{}, &InputError{Stage: stage, Quantity: "residuals tested", Got: float64(n), Want: "at least one residual"}
	}
	if err := needRange(stage, "sum of squared standardized residuals", sumSquares, "", 0, math.MaxFloat64); err != nil {
		return GlobalTestResult{}, err
	}
	if !(alpha > 0 && alpha < 1) {
		return GlobalTestResult{}, &InputError{Stage: stage, Quantity: "global test α", Got: alpha, Want: "a probability between 0 and 1"}
	}
	dof := float64(n)
	r := GlobalTestResult{N: n, SumSquares: sumSquares, VarianceFactor: sumSquares / dof, Alpha: alpha,
		Lower: ChiSquareQuantile(alpha/2, n) / dof, Upper: ChiSquareQuantile(1-alpha/2, n) / dof}
	switch {
	case r.VarianceFactor > r.Upper:
		r.Outcome = GlobalTooLarge
	case r.VarianceFactor < r.Lower:
		r.Outcome = GlobalTooSmall
	default:
		r.Outcome = GlobalPass
	}
	return r, nil
}

// ChiSquareQuantile is the p quantile of the χ² distribution with dof
// degrees of freedom, 2 P⁻¹(dof/2, p), P the regularised lower incomplete
// gamma function (gonum's mathext). χ²(10; 0.975) = 20.483 and
// χ²(10; 0.025) = 3.247 (tables of the χ² distribution).
func ChiSquareQuantile(p float64, dof int) float64 {
	return 2 * mathext.GammaIncRegInv(float64(dof)/2, p)
}
