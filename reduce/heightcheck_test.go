package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// arcsec is one second of arc.
const arcsec = s1.Degree / 3600

// checkBudget is a budget for the height check: σ_z = 5″, σ_k = 0.1 and
// 1 mm on each of the heights.
var checkBudget = Budget{Zenith: 5 * arcsec, K: 0.1, HeightA: 1 * mm, HeightB: 1 * mm}

var checkTest = Test{Critical: DefaultCriticalValue}

// checkLine returns the heights-route geometry of an exact sphere line and
// the zenith angle a theodolite reads along it (helpers_test.go).
func checkLine(t *testing.T, l sphereLine) (GeometryResult, s1.Angle) {
	t.Helper()
	g, err := EllipsoidDistance(l.slope(), l.hA, l.hB, Section{Radius: l.R})
	require.NoError(t, err)
	z, _ := l.observedZenith()
	return g, z
}

// A target height booked 0.5 m too high on a level 1 km line is flagged
// with |w| as its σ says, and the same sight with the right height is not.
//
// σ by hand, level line (sin z ≈ 1, cos z′ ≈ 0), R = 6 371 008.8 m:
//
//	zenith   S σ_z          = 1000 m · 5/206 264.806   = 24.241 mm
//	k        S²/2R · σ_k    = 1e6/12 742 017.6 · 0.1   =  7.848 mm
//	heights  sqrt(1² + 1²)                             =  1.414 mm
//	σ = sqrt(24.241² + 7.848² + 1.414²) = sqrt(651.19) = 25.519 mm
//	w = 500 / 25.519 = 19.59
func TestHeightCheckFindsWrongTargetHeight(t *testing.T) {
	l := sphereLine{R: meanRadius, s: 1000, hA: 101.6, hB: 101.6, k: 0.13}
	g, z := checkLine(t, l)
	c := HeightCheck{Zenith: z, K: l.k}

	right, err := CheckTargetHeight(&g, &c, &checkBudget, &checkTest)
	require.NoError(t, err)
	assert.InDeltaf(t, 0, right.Difference, 0.01*mm, "difference with the right height (m)")
	assert.InDeltaf(t, l.hB, right.Implied, 0.01*mm, "implied reflector height (m)")
	assert.InDeltaf(t, 25.519*mm, right.Sigma, 0.005*mm, "σ of the difference (m)")
	assert.False(t, right.Flagged, "the right height is not flagged")

	g.HeightB += 0.5 // booked 0.5 m too high
	wrong, err := CheckTargetHeight(&g, &c, &checkBudget, &checkTest)
	require.NoError(t, err)
	assert.InDeltaf(t, 0.5, wrong.Difference, 0.01*mm, "difference with the height booked 0.5 m high (m)")
	assert.InDeltaf(t, 19.59, wrong.Standardized, 0.01, "w of the wrong height")
	assert.True(t, wrong.Flagged, "the wrong height is flagged")

	g.HeightB -= 1 // booked 0.5 m too low
	low, err := CheckTargetHeight(&g, &c, &checkBudget, &checkTest)
	require.NoError(t, err)
	assert.InDeltaf(t, -19.59, low.Standardized, 0.01, "w of the height booked 0.5 m low")
	assert.True(t, low.Flagged)
}

// Curvature and refraction (1−k)L²/2R: 0.0675 m per km² at k = 0.14
// (common practice; REFERENCES.md §7): a sight read level (z = 90°) over
// 1 km from an axis on the surface meets a reflector 67.5 mm above it.
func TestHeightCheckRuleOfThumb(t *testing.T) {
	g := GeometryResult{Route: RouteHeights, Slope: 1000, Radius: meanRadius, HeightA: 0, HeightB: 0.0675}
	c := HeightCheck{Zenith: 90 * s1.Degree, K: 0.14}
	r, err := CheckTargetHeight(&g, &c, &checkBudget, &checkTest)
	require.NoError(t, err)
	// (1 − 0.14) · 1e6 / 12 742 017.6 = 0.067493 m; the rule is printed to 0.1 mm
	assert.InDeltaf(t, 0.0675, r.Implied, 0.05*mm, "implied reflector height (m)")
	assert.InDeltaf(t, 0, r.Difference, 0.05*mm, "difference (m)")
}

// The closed form agrees with the zenith route's fixed-point construction
// within the bound of its doc comment, k(1−k)S³·0.385/(4R²) (0.27 mm at
// 10 km), plus 0.01 mm, on lines of 10 m to 30 km at heights of −100 m to
// 4000 m.
func TestHeightCheckMatchesZenithRoute(t *testing.T) {
	rng := newRand(t)
	for i := 0; i < 20000; i++ {
		l := randomLine(rng, 10, 30000)
		S := l.slope()
		z, _ := l.observedZenith()
		exact, err := EllipsoidDistanceFromZenith(S, z, l.hA, l.k, l.R)
		require.NoErrorf(t, err, "line %+v", l)
		g := GeometryResult{Route: RouteHeights, Slope: S, Radius: l.R, HeightA: l.hA, HeightB: l.hB}
		c := HeightCheck{Zenith: z, K: l.k}
		r, err := CheckTargetHeight(&g, &c, &checkBudget, &checkTest)
		require.NoErrorf(t, err, "line %+v", l)
		bound := l.k*(1-l.k)*S*S*S*0.385/(4*l.R*l.R) + 0.01*mm
		require.InDeltaf(t, exact.HeightB, r.Implied, bound, "implied height of %+v (m)", l)
		require.InDeltaf(t, 0, r.Difference, bound, "difference on the exact line %+v (m)", l)
		require.Falsef(t, r.Flagged, "exact line %+v flagged: w = %g", l, r.Standardized)
	}
}

// Each term of the σ is a partial derivative of the doc comment times its
// σ; the partials agree with central differences of the zenith route's
// exact construction (EllipsoidDistanceFromZenith) to 0.1 % on lines of
// 100 m to 20 km, level and steep. A budget with a single σ isolates each.
func TestHeightCheckPartials(t *testing.T) {
	cases := []sphereLine{
		{R: meanRadius, s: 100, hA: 50, hB: 70, k: 0.13},
		{R: meanRadius, s: 1000, hA: 101.6, hB: 101.6, k: 0.13},
		{R: 6380000, s: 2500, hA: 151.6, hB: 900, k: 0.2},
		{R: 6360000, s: 8000, hA: 3000, hB: 400, k: 0.1},
		{R: meanRadius, s: 20000, hA: 10, hB: 1500, k: 0.13},
	}
	for _, l := range cases {
		S := l.slope()
		z, _ := l.observedZenith()
		exact := func(S float64, z s1.Angle, hA, k float64) float64 {
			g, err := EllipsoidDistanceFromZenith(S, z, hA, k, l.R)
			require.NoError(t, err)
			return g.HeightB
		}
		central := func(f func(x float64) float64, x, h float64) float64 { return (f(x+h) - f(x-h)) / (2 * h) }
		dz := central(func(x float64) float64 { return exact(S, s1.Angle(x), l.hA, l.k) }, float64(z), 1e-6)
		dk := central(func(x float64) float64 { return exact(S, z, l.hA, x) }, l.k, 1e-3)
		dS := central(func(x float64) float64 { return exact(x, z, l.hA, l.k) }, S, 1e-2)
		dh := central(func(x float64) float64 { return exact(S, z, x, l.k) }, l.hA, 1e-2)

		g := GeometryResult{Route: RouteHeights, Slope: S, Radius: l.R, HeightA: l.hA, HeightB: l.hB}
		sigma := func(b Budget, sigmaSlope float64) float64 {
			c := HeightCheck{Zenith: z, K: l.k, SigmaSlope: sigmaSlope}
			r, err := CheckTargetHeight(&g, &c, &b, &checkTest)
			require.NoError(t, err)
			return r.Sigma
		}
		const sz, sk, sS, sh = 1e-5, 0.1, 0.01, 0.01
		for _, p := range []struct {
			name      string
			got, want float64
		}{
			{"∂hB/∂z", sigma(Budget{Zenith: sz}, 0), math.Abs(dz) * sz},
			{"∂hB/∂k", sigma(Budget{K: sk}, 0), math.Abs(dk) * sk},
			{"∂hB/∂S", sigma(Budget{}, sS), math.Abs(dS) * sS},
			{"∂hB/∂hA", sigma(Budget{HeightA: sh}, 0), math.Abs(dh) * sh},
		} {
			assert.InDeltaf(t, p.want, p.got, 1e-3*p.want+1e-9, "%s times its σ on %+v (m)", p.name, l)
		}
		assert.Equalf(t, 0.02, sigma(Budget{HeightB: 0.02}, 0), "σ of the reflector's height passes unchanged on %+v (m)", l)
	}
}

// The zenith angle is read from the plumb line: a sight along the level
// surface climbs with the geoid. A line whose reflector's ellipsoidal
// height includes a geoid 0.05 m higher at B than at A checks clean with
// the rise and shows 0.05 m without it.
func TestHeightCheckGeoidRise(t *testing.T) {
	l := sphereLine{R: meanRadius, s: 1500, hA: 101.6, hB: 121.6, k: 0.13} // orthometric
	g, z := checkLine(t, l)
	const nA, nB = 47.30, 47.35
	g.HeightA, g.HeightB = l.hA+nA, l.hB+nB // ellipsoidal
	with := HeightCheck{Zenith: z, K: l.k, GeoidRise: nB - nA}
	r, err := CheckTargetHeight(&g, &with, &checkBudget, &checkTest)
	require.NoError(t, err)
	// the axis raised by N_A = 47.3 m changes ρB − ρA by 47.3 · S²/(2ρ²),
	// about 1e-6 m
	assert.InDeltaf(t, 0, r.Difference, 0.05*mm, "difference with the geoid's rise (m)")
	without := HeightCheck{Zenith: z, K: l.k}
	r, err = CheckTargetHeight(&g, &without, &checkBudget, &checkTest)
	require.NoError(t, err)
	assert.InDeltaf(t, 0.05, r.Difference, 0.05*mm, "difference without the geoid's rise (m)")

	a, _ := HeightFromOrthometric(DatumEllipsoid, 100, Separation{N: nA, Source: SeparationGrid})
	b, _ := HeightFromOrthometric(DatumEllipsoid, 120, Separation{N: nB, Source: SeparationGrid})
	h, err := NewLineHeights(a, b, 1.6, 1.6)
	require.NoError(t, err)
	assert.InDeltaf(t, 0.05, geoidRise(&h), 1e-12, "rise from the marks' N (m)")
	b.Separation.Source = SeparationNone
	h, _ = NewLineHeights(a, b, 1.6, 1.6)
	assert.Equal(t, 0.0, geoidRise(&h), "no rise where one N is unknown")
	a, _ = HeightFromOrthometric(DatumSeaLevel, 100, Separation{N: nA, Source: SeparationGrid})
	b, _ = HeightFromOrthometric(DatumSeaLevel, 120, Separation{N: nB, Source: SeparationGrid})
	h, _ = NewLineHeights(a, b, 1.6, 1.6)
	assert.Equal(t, 0.0, geoidRise(&h), "no rise on the geoid")
}

// A budget with no σ at all on a level sight gives σ = 0: w is 0 and
// nothing is flagged, rather than a division by zero.
func TestHeightCheckZeroSigma(t *testing.T) {
	g := GeometryResult{Route: RouteHeights, Slope: 1000, Radius: meanRadius, HeightA: 0, HeightB: 0.5}
	c := HeightCheck{Zenith: s1.Angle(math.Pi/2 + 1000/(2*meanRadius)), K: 0} // the chord level at its middle: hB′ = hA
	r, err := CheckTargetHeight(&g, &c, &Budget{}, &checkTest)
	require.NoError(t, err)
	assert.Equal(t, 0.0, r.Sigma)
	assert.Equal(t, 0.0, r.Standardized)
	assert.False(t, r.Flagged)
	assert.InDeltaf(t, 0.5, r.Difference, 0.01*mm, "the difference is still shown (m)")
}

// Through the whole chain: a target height booked 0.5 m wrong on a 1 km
// heights-route sight is flagged by the height check, while its distance
// residual moves by about Δh/S · 0.5 m; the same row booked right is clean.
// A zenith angle of 0, of the half circle or over it is refused on the
// heights route, where the distance does not need it.
func TestReduceHeightCheck(t *testing.T) {
	job := demoJob(t)
	rng := newRand(t)
	l := sphereLine{R: meanRadius, s: 1000, hA: 151.6, hB: 153.6, k: job.K}
	obs, a, b := randomObservation(t, rng, l, job)
	line := Line{Radius: l.R, Inverse: Inverse{Distance: l.s}, GridDistance: l.s, Scale: ScaleFactors{A: 1, Mid: 1, B: 1}}

	right, err := Reduce(obs, job, line, a, b)
	require.NoError(t, err)
	assert.InDeltaf(t, 0, right.HeightCheck.Difference, 0.01*mm, "difference booked right (m)")
	assert.False(t, right.HeightCheck.Flagged)
	assert.InDeltaf(t, 0, right.EllipsoidResidual.Residual, 0.01*mm, "distance residual booked right (m)")

	wrong := obs
	wrong.TargetHeight += 0.5
	r, err := Reduce(wrong, job, line, a, b)
	require.NoError(t, err)
	assert.InDeltaf(t, 0.5, r.HeightCheck.Difference, 0.01*mm, "difference booked 0.5 m high (m)")
	assert.True(t, r.HeightCheck.Flagged, "w = %g", r.HeightCheck.Standardized)
	// demoJob: σ_z 1″, σ_k 0.05, σ_h 3 mm each; S ≈ 1000.0 m, sin z ≈ 1:
	// 1000 · 4.8481e-6 = 4.848 mm, 0.05 · 1e6/12 742 017.6 = 3.924 mm,
	// σ = sqrt(4.848² + 3.924² + 3² + 3²) = sqrt(56.90) = 7.543 mm, and
	// w = 500/7.543 = 66.3 (σ_S cos z′ = 1.8 mm · 0.002 adds nothing)
	assert.InDeltaf(t, 66.3, r.HeightCheck.Standardized, 0.1, "w booked 0.5 m high")
	// the chord shrinks by (2.5² − 2²)/(2 · 1000) = 1.125 mm for the
	// height difference, and by 1000 · 0.5/(2R) = 0.039 mm for the
	// reflector 0.5 m higher: 1.164 mm
	assert.InDeltaf(t, -1.164*mm, r.EllipsoidResidual.Residual, 0.002*mm, "the distance barely shows it (m)")
	assert.False(t, r.EllipsoidResidual.Outlier, "the distance residual alone does not expose it")

	zr, err := Reduce(obs, job, line, a, MarkHeight{})
	require.NoError(t, err)
	assert.Equal(t, HeightCheckResult{}, zr.HeightCheck, "no check on the zenith route")

	for _, z := range []s1.Angle{0, math.Pi, 200 * s1.Degree, -arcsec, s1.Angle(math.NaN())} {
		bad := obs
		bad.Zenith = z
		_, err := Reduce(bad, job, line, a, b)
		var ie *InputError
		require.Truef(t, errors.As(err, &ie), "zenith %g° on the heights route: want *InputError, got %v", z.Degrees(), err)
		assert.Equal(t, "height check", ie.Stage)
		assert.Equal(t, "zenith angle", ie.Quantity)
	}
	bad := obs
	bad.Zenith = 0
	_, err = Reduce(bad, job, line, a, b)
	assert.EqualError(t, err, "height check: zenith angle 0 deg, want a value strictly between 0 and 180 deg (face left: 0 is straight up, 180 straight down)")
}

// A Reduction written in place over a heights-route one keeps no height
// check on the zenith route.
func TestReduceToClearsHeightCheck(t *testing.T) {
	obs, job, line, a, m := benchSetup(t)
	var r Reduction
	obs.TargetHeight += 0.5
	require.NoError(t, ReduceTo(&r, &obs, &job, &line, &a, &m))
	require.True(t, r.HeightCheck.Flagged)
	none := MarkHeight{}
	require.NoError(t, ReduceTo(&r, &obs, &job, &line, &a, &none))
	assert.Equal(t, HeightCheckResult{}, r.HeightCheck)
}
