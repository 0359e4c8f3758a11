package reduce

import (
	"math"

	"github.com/golang/geo/s1"
)

// needZenith returns an *InputError unless the zenith angle z lies strictly
// between 0 and the half circle: 0 is straight up and π straight down, and
// neither can be sighted along a slope distance to a target beside the
// instrument. Face-right readings (over π) must be reduced to face left
// before the chain. The test is inlined where it is called.
func needZenith(stage string, z s1.Angle) error {
	if z > 0 && z < math.Pi { // NaN fails
		return nil
	}
	return zenithError(stage, z)
}

func zenithError(stage string, z s1.Angle) error {
	return &InputError{Stage: stage, Quantity: "zenith angle", Got: z.Degrees(), Unit: "deg",
		Want: "a value strictly between 0 and 180 deg (face left: 0 is straight up, 180 straight down)"}
}

// HeightCheckResult keeps the check of a reflector's known height against
// the one its zenith angle implies, on the heights route. Heights are on
// the reduction datum, metres. The zero value is no check (the zenith
// route, where the zenith angle gives the target's height and there is
// nothing to compare).
type HeightCheckResult struct {
	Implied      float64 // reflector height from the zenith angle, k and the geoid's rise
	Difference   float64 // known reflector height − Implied
	Sigma        float64 // σ of Difference
	Standardized float64 // w = Difference / Sigma (0 where Sigma is 0)
	Flagged      bool    // |w| > the job's critical value
}

// HeightCheck is what CheckTargetHeight needs of one sight besides its
// geometry: the observed zenith angle, the coefficient of refraction, the
// geoid's rise along the line and the σ of the slope distance.
type HeightCheck struct {
	Zenith     s1.Angle // observed zenith angle at the instrument, face left
	K          float64  // coefficient of refraction
	GeoidRise  float64  // N_B − N_A, metres: 0 where the heights are on the geoid or N is unknown
	SigmaSlope float64  // σ of the slope distance S, metres (the instrument's a + b ppm)
}

// CheckTargetHeight compares the reflector height g.HeightB that the
// marks' heights and the booked target height give (the heights route)
// with the one that the observed zenith angle, the coefficient of
// refraction and the slope chord g.Slope imply from the instrument axis at
// g.HeightA, and tests the difference against its σ from the budget b
// (Zenith, K, HeightA, HeightB) and c.SigmaSlope with the critical value
// of t. A target height booked 0.5 m wrong, a common blunder, moves the
// reduced distance by only Δh/S · 0.5 m, but shows here in full.
//
// The implied height is the zenith route's construction
// (EllipsoidDistanceFromZenith) in closed form, with the first-order
// refraction angle δ = k S sin z / 2R:
//
//	z′ = z + δ,   ρA = R + hA,   ρB = sqrt(ρA² + S² + 2 ρA S cos z′)
//	hB′ = ρB − R + ΔN
//
// (ρA² is 4e13 m², whose rounding moves ρB by 6e-10 m). The zenith route
// takes δ = asin(k sin ζ S/2R) at the chord's midpoint zenith
// ζ = z′ − ψ/2, ψ ≈ S sin z / R; to first order that δ differs from
// this one by (kS/2R) cos z (δ − ψ/2) = −(kS/2R) cos z (1 − k) ψ/2,
// which moves hB′ by
//
//	k (1 − k) S³ sin²z cos z / (4R²)  ≤  0.39 k (1 − k) S³ / (4R²)
//
// (sin²z cos z is at most 2/(3√3) = 0.385): 0.27 mm at 10 km for
// k = 0.13 and R = 6371 km, against a σ of 0.2 m there from a 5″ zenith
// angle alone (10 km · 2.4e-5), about a thousandth of it; asin(x) − x is
// x³/6 = 2e-13 rad. cos z′ = cos z (1 − δ²/2) − sin z · δ leaves out
// δ³/6, 2e-13 at 10 km: one sine and cosine serve both. (The test
// checks the closed form against the zenith route up to 30 km.)
//
// ΔN = N_B − N_A: the zenith angle is read from the plumb line, not the
// ellipsoid's normal, so a sight along the level surface climbs with the
// geoid; the geoid model's slope along the line stands for the mean
// deflection of the vertical in the line's azimuth (Torge & Müller 2012,
// trigonometric levelling [memory]). On the geoid (DatumSeaLevel) it is 0.
//
// The σ of d = hB − hB′ propagates, to first order and as independent
// terms, σ_hB of the reflector, σ_hA of the instrument axis, σ_z, σ_k and
// σ_S through the partial derivatives of the closed form:
//
//	∂hB′/∂z  = −(ρA S sin z′ / ρB) (1 + k S cos z / 2R)      ≈ −S sin z
//	∂hB′/∂k  = −(ρA S sin z′ / ρB) S sin z / 2R               ≈ −S² sin²z / 2R
//	∂hB′/∂S  = (S + ρA cos z′)/ρB − (ρA S sin z′ / ρB) k sin z / 2R   ≈ cos z′
//	∂hB′/∂hA = (ρA + S cos z′)/ρB                              ≈ 1
//
// from ∂ρB/∂z′ = −ρA S sin z′/ρB, ∂ρB/∂S = (S + ρA cos z′)/ρB,
// ∂ρB/∂ρA = (ρA + S cos z′)/ρB and ∂z′/∂(z, k, S) = (1 + kS cos z/2R,
// S sin z/2R, k sin z/2R) (heightcheck_test.go checks them against finite
// differences of the zenith route). On a level 1 km line with σ_z = 5″
// and σ_k = 0.1 the two largest terms are 24.2 mm and 7.8 mm.
//
// w = d/σ is flagged when |w| > t.Critical; a σ of 0 (a budget with no
// σ of z, k and the heights, on a level line) gives w = 0, unflagged,
// rather than a division by zero. A zenith angle outside (0, π) is an
// *InputError, as on the zenith route.
func CheckTargetHeight(g *GeometryResult, c *HeightCheck, b *Budget, t *Test) (HeightCheckResult, error) {
	const stage = "height check"
	if err := needZenith(stage, c.Zenith); err != nil {
		return HeightCheckResult{}, err
	}
	if err := needPositive(stage, "slope distance", g.Slope, "m"); err != nil {
		return HeightCheckResult{}, err
	}
	if err := needPositive(stage, "radius", g.Radius, "m"); err != nil {
		return HeightCheckResult{}, err
	}
	if err := needRange(stage, "instrument height above the reference surface", g.HeightA, "m", -g.Radius/2, g.Radius); err != nil {
		return HeightCheckResult{}, err
	}
	if err := needRange(stage, "target height above the reference surface", g.HeightB, "m", -g.Radius/2, g.Radius); err != nil {
		return HeightCheckResult{}, err
	}
	if err := needRange(stage, "coefficient of refraction", c.K, "", -4, 4); err != nil {
		return HeightCheckResult{}, err
	}
	if err := needRange(stage, "geoid rise", c.GeoidRise, "m", -400, 400); err != nil {
		return HeightCheckResult{}, err
	}
	if err := needRange(stage, "σ of the slope distance", c.SigmaSlope, "m", 0, 1000); err != nil {
		return HeightCheckResult{}, err
	}
	return checkTargetHeight(g, c, b, t)
}

// checkTargetHeight is CheckTargetHeight after its checks of the input,
// for ReduceTo, whose earlier stages have made them (all but the zenith
// angle's).
func checkTargetHeight(g *GeometryResult, c *HeightCheck, b *Budget, t *Test) (HeightCheckResult, error) {
	const stage = "height check"
	s, r := g.Slope, g.Radius
	sz, cz := math.Sincos(float64(c.Zenith))
	inv2R := 0.5 / r
	q := s * inv2R
	delta := c.K * q * sz
	d2 := delta * delta / 2
	szp := sz*(1-d2) + cz*delta // sin z′
	czp := cz*(1-d2) - sz*delta // cos z′
	rhoA := r + g.HeightA
	rhoB := math.Sqrt(rhoA*rhoA + s*(s+2*rhoA*czp))
	implied := rhoB - r + c.GeoidRise

	iB := 1 / rhoB
	dz := rhoA * s * szp * iB // −∂hB′/∂z′
	pz := dz * (1 + c.K*q*cz)
	pk := dz * q * sz
	ps := (s+rhoA*czp)*iB - dz*c.K*sz*inv2R
	ph := (rhoA + s*czp) * iB
	ez, ek, es, eh := pz*float64(b.Zenith), pk*b.K, ps*c.SigmaSlope, ph*b.HeightA
	sigma := math.Sqrt(b.HeightB*b.HeightB + eh*eh + ez*ez + ek*ek + es*es)
	if err := needFinite(stage, "σ of the height difference", sigma, "m"); err != nil {
		return HeightCheckResult{}, err // a budget with a NaN or infinite σ
	}

	res := HeightCheckResult{Implied: implied, Difference: g.HeightB - implied, Sigma: sigma}
	if sigma > 0 {
		res.Standardized = res.Difference / sigma
		res.Flagged = math.Abs(res.Standardized) > t.Critical
	}
	return res, nil
}
