package reduce

import "math"

// DefaultCriticalValue is the two-sided 0.1 % quantile of the standard
// normal distribution, the usual critical value for the standardized
// residual (Baarda's data snooping with α = 0.001; common practice).
const DefaultCriticalValue = 3.2905267314919255

// Test configures the comparison of a reduced distance with the inverse
// from control. The zero value is refused (no critical value, no
// tolerance).
type Test struct {
	Critical  float64      // |w| above this flags the residual (e.g. DefaultCriticalValue)
	Tolerance DistanceSpec // the job's tolerance, e.g. from AccuracyClassNamed
}

// ResidualResult keeps the comparison of one reduced distance with the
// distance implied by control.
type ResidualResult struct {
	Observed       float64 // reduced distance, metres
	Reference      float64 // inverse from control, metres
	Residual       float64 // Observed − Reference, metres
	MM             float64 // Residual in millimetres
	PPM            float64 // Residual / Reference · 1e6
	Sigma          float64 // σ of the residual, metres
	Standardized   float64 // w = Residual / Sigma
	Critical       float64 // the critical value used
	Outlier        bool    // |w| > Critical
	Tolerance      float64 // the job's tolerance at Reference, metres (at the tolerance's own level)
	OutOfTolerance bool    // |Residual| > Tolerance
}

// CompareDistance compares a reduced distance with the one the control
// coordinates imply (metres), given the residual's standard deviation sigma
// (metres, e.g. UncertaintyResult.Total, scaled by the combined factor for
// grid distances):
//
//	r = observed − reference,  ppm = r / reference · 1e6,  w = r / σ
//
// and flags |w| > t.Critical and |r| > t.Tolerance.At(reference).
func CompareDistance(observed, reference, sigma float64, t Test) (ResidualResult, error) {
	const stage = "residual"
	if err := needPositive(stage, "reduced distance", observed, "m"); err != nil {
		return ResidualResult{}, err
	}
	if err := needPositive(stage, "control distance", reference, "m"); err != nil {
		return ResidualResult{}, err
	}
	if err := needPositive(stage, "σ of the residual", sigma, "m"); err != nil {
		return ResidualResult{}, err
	}
	if err := needPositive(stage, "critical value", t.Critical, ""); err != nil {
		return ResidualResult{}, err
	}
	tol, err := t.Tolerance.At(reference)
	if err != nil {
		return ResidualResult{}, err
	}
	r := observed - reference
	w := r / sigma
	return ResidualResult{
		Observed:       observed,
		Reference:      reference,
		Residual:       r,
		MM:             r * 1e3,
		PPM:            r / reference * 1e6,
		Sigma:          sigma,
		Standardized:   w,
		Critical:       t.Critical,
		Outlier:        math.Abs(w) > t.Critical,
		Tolerance:      tol,
		OutOfTolerance: math.Abs(r) > tol,
	}, nil
}
