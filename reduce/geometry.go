package reduce

import (
	"math"

	"github.com/golang/geo/s1"
)

// EulerRadius returns the radius of curvature of the normal section in
// azimuth α, given the meridian radius M and the prime-vertical radius N at
// the point (metres), by Euler's theorem:
//
//	R_α = M N / (M sin²α + N cos²α)
//
// Taken at the mid-latitude in the line's azimuth, it reduces lines up to
// 20 km to within 0.01 mm (REFERENCES.md §2); a fixed mean radius costs
// millimetres at high elevations.
func EulerRadius(m, n float64, azimuth s1.Angle) float64 {
	s, c := math.Sincos(float64(azimuth))
	return m * n / (m*s*s + n*c*c)
}

// Route says how a slope distance was brought to the ellipsoid.
type Route int

// Routes to the ellipsoid. The zero value is not a route.
const (
	RouteHeights Route = iota + 1 // both ends' heights known: chord then arc
	RouteZenith                   // target height unknown: from the zenith angle and k
)

func (r Route) String() string {
	switch r {
	case RouteHeights:
		return "heights"
	case RouteZenith:
		return "zenith angle"
	}
	return "unknown"
}

// GeometryResult keeps the values of the reduction of a slope chord to the
// reference surface. Lengths and heights in metres.
type GeometryResult struct {
	Route         Route
	Slope         float64  // S3, straight chord from instrument axis to reflector
	Radius        float64  // R_α, radius in the line's azimuth at the mid-latitude
	CurvatureRate float64  // κ′ used on RouteHeights, 1/m²
	HeightA       float64  // height of the instrument axis above the reference surface
	HeightB       float64  // height of the reflector (computed on RouteZenith)
	Zenith        s1.Angle // observed zenith angle (RouteZenith only)
	Refraction    s1.Angle // refraction angle δ added to the zenith angle (RouteZenith only)
	CentralAngle  s1.Angle // ψ, angle at the centre of curvature between the two normals
	Chord         float64  // chord between the two foot points on the reference surface
	Arc           float64  // distance along the reference surface, R_α ψ
}

// Section describes the reference surface along one line: the radius of
// the normal section in the line's azimuth at its midpoint, and how fast
// the curvature changes along the line. The zero CurvatureRate is a sphere.
type Section struct {
	Radius        float64 // R_α at the mid-latitude, metres
	CurvatureRate float64 // κ′ = d(1/R_α)/ds from A towards B, 1/m²
}

// EllipsoidDistance reduces the slope chord S (metres) between an
// instrument axis at height hA and a reflector at height hB above the
// reference surface (metres) to the distance along it.
//
// On a sphere of radius R, in the triangle centre–A–B (Rüeger 1996; Torge &
// Müller 2012 [memory]):
//
//	c = sqrt((S² − (hB − hA)²) / ((1 + hA/R)(1 + hB/R)))
//	s = 2R asin(c / 2R)
//
// On the ellipsoid the curvature of the normal section changes along the
// line (on a north–south line at 45° by about 5e-5 of itself over 30 km),
// so the chord meets the two normals at angles c/2R ∓ κ′c²/12 instead of
// c/2R each, and
//
//	S² = Δh² + c² (1 + hA/R)(1 + hB/R) + κ′ c³ Δh / 6
//
// which is solved for c with the sphere's c in the small last term. That
// term is 0.04 mm on a 25 km meridian line rising 3.4 km; with it the
// reduction agrees with PROJ's geodesic to 0.01 mm for lines up to 30 km
// and heights to 4000 m (roundtrip_test.go). S² − Δh² is formed as
// (S − Δh)(S + Δh) so that steep short lines keep their digits.
//
// A slope distance shorter than the height difference, a height below −R/2,
// or a chord longer than the diameter is an *InputError.
func EllipsoidDistance(slope, heightA, heightB float64, sec Section) (GeometryResult, error) {
	const stage = "geometry"
	radius := sec.Radius
	if err := needPositive(stage, "slope distance", slope, "m"); err != nil {
		return GeometryResult{}, err
	}
	if err := needPositive(stage, "radius", radius, "m"); err != nil {
		return GeometryResult{}, err
	}
	if err := needRange(stage, "curvature rate times R²", sec.CurvatureRate*radius*radius, "", -0.1, 0.1); err != nil {
		return GeometryResult{}, err
	}
	if err := needRange(stage, "instrument height above the reference surface", heightA, "m", -radius/2, radius); err != nil {
		return GeometryResult{}, err
	}
	if err := needRange(stage, "target height above the reference surface", heightB, "m", -radius/2, radius); err != nil {
		return GeometryResult{}, err
	}
	dh := heightB - heightA
	if slope < math.Abs(dh) {
		return GeometryResult{}, &InputError{Stage: stage, Quantity: "slope distance", Got: slope, Unit: "m",
			Want: "at least the height difference " + formatMetres(math.Abs(dh))}
	}
	scale := (1 + heightA/radius) * (1 + heightB/radius)
	c2 := (slope - dh) * (slope + dh) / scale
	if sec.CurvatureRate != 0 {
		c := math.Sqrt(c2)
		c2 = math.Max(0, c2-sec.CurvatureRate*c2*c*dh/(6*scale))
	}
	c := math.Sqrt(c2)
	half := c / (2 * radius)
	if half > 1 {
		return GeometryResult{}, &InputError{Stage: stage, Quantity: "chord", Got: c, Unit: "m", Want: "at most the diameter " + formatMetres(2*radius)}
	}
	psi := 2 * math.Asin(half)
	return GeometryResult{
		Route:         RouteHeights,
		Slope:         slope,
		Radius:        radius,
		CurvatureRate: sec.CurvatureRate,
		HeightA:       heightA,
		HeightB:       heightB,
		CentralAngle:  s1.Angle(psi),
		Chord:         c,
		Arc:           radius * psi,
	}, nil
}

// RefractionAngle returns δ, the angle between a chord of length S
// (metres) and the tangent at either end of the light ray, an arc of a
// circle whose curvature is k sin ζ / R:
//
//	δ = asin(k sin ζ · S / 2R)
//
// where ζ is the zenith angle of the chord at its midpoint (the chord's
// inclination there) and R the radius (metres). A ray in air layered by
// height curves by −(1/n)(dn/dh) sin z (Snell's law in spherical layers;
// Bomford, Geodesy, 1980 [memory]), and k is defined for a horizontal sight,
// hence the factor sin ζ; taking ζ at the midpoint makes δ the same at both
// ends, as reciprocal observation assumes. The textbook form δ = kψ/2 (ψ the
// central angle) takes S ≈ Rψ and sin ζ ≈ 1: at 45° inclination it
// overstates δ by 40 %, 2 mm of arc on a 1 km line at k = 0.13.
func RefractionAngle(slope float64, chordZenith s1.Angle, k, radius float64) (s1.Angle, error) {
	x := k * math.Sin(float64(chordZenith)) * slope / (2 * radius)
	if !finite(x) || math.Abs(x) >= 1 {
		return 0, &InputError{Stage: "geometry", Quantity: "coefficient of refraction", Got: k, Unit: "",
			Want: "a ray whose circle is longer than the line"}
	}
	return s1.Angle(math.Asin(x)), nil
}

// EllipsoidDistanceFromZenith reduces the slope chord S (metres) observed
// at zenith angle z from an instrument axis at height hA (metres) when the
// target's height is unknown, with the coefficient of refraction k and the
// radius R_α (metres). It also gives the reflector's height HeightB.
//
// The refraction-free zenith angle of the chord is z' = z + δ with δ from
// RefractionAngle; then in the plane through the centre of curvature, with
// ρA = R + hA,
//
//	ψ  = atan2(S sin z', ρA + S cos z')
//	s  = R ψ
//	hB = sqrt(ρA² + S² + 2 ρA S cos z') − R
//
// δ depends on the chord's zenith at its midpoint, z' − ψ/2, so δ and ψ are
// found together by fixed-point iteration from the first-order δ = kS sin z/2R,
// which contracts by about kS/2R per step; it stops when a step moves δ
// by at most a picoradian, two steps on lines of a few kilometres.
//
// exact on the sphere of radius R for a circular ray. S sin z' is the
// horizontal distance at the target's height, not at the instrument's or
// the mean height: scaling it by R/(R + h_mean) instead is wrong by
// millimetres on a 1.5 km line (REFERENCES.md §2).
func EllipsoidDistanceFromZenith(slope float64, zenith s1.Angle, heightA, k, radius float64) (GeometryResult, error) {
	const stage = "geometry"
	if err := needPositive(stage, "slope distance", slope, "m"); err != nil {
		return GeometryResult{}, err
	}
	if err := needPositive(stage, "radius", radius, "m"); err != nil {
		return GeometryResult{}, err
	}
	if err := needZenith(stage, zenith); err != nil {
		return GeometryResult{}, err
	}
	if err := needRange(stage, "instrument height above the reference surface", heightA, "m", -radius/2, radius); err != nil {
		return GeometryResult{}, err
	}
	if err := needRange(stage, "coefficient of refraction", k, "", -4, 4); err != nil {
		return GeometryResult{}, err
	}
	rhoA := radius + heightA
	// Start from the first-order δ = k S sin z / 2R, within about
	// cot z · S/2R of itself: two steps then settle it, not four.
	delta := s1.Angle(k * slope * math.Sin(float64(zenith)) / (2 * radius))
	var psi, sz, cz float64
	for i := 0; i < 6; i++ {
		sz, cz = math.Sincos(float64(zenith + delta))
		psi = math.Atan2(slope*sz, rhoA+slope*cz)
		next, err := RefractionAngle(slope, zenith+delta-s1.Angle(psi/2), k, radius)
		if err != nil {
			return GeometryResult{}, err
		}
		// A step that moves δ by 1e-12 rad leaves it within c·1e-12 of
		// the fixed point, c = kS/2R the contraction: 1e-14 rad at worst
		// (k = 4 on 100 km), 3e-10 m across a 30 km line.
		settled := math.Abs(float64(next-delta)) <= 1e-12
		delta = next
		if settled {
			break
		}
	}
	sz, cz = math.Sincos(float64(zenith + delta))
	psi = math.Atan2(slope*sz, rhoA+slope*cz)
	rhoB := math.Sqrt(rhoA*rhoA + slope*slope + 2*rhoA*slope*cz)
	// the chord's closest approach to the centre, to refuse sights through
	// the solid Earth (deeper than 20 km below the reference surface)
	lowest := math.Min(rhoA, rhoB)
	if t := -rhoA * cz; t > 0 && t < slope {
		lowest = rhoA * sz
	}
	if psi < 0 || psi > math.Pi/2 || lowest < radius-20e3 {
		return GeometryResult{}, &InputError{Stage: stage, Quantity: "zenith angle", Got: zenith.Degrees(), Unit: "deg",
			Want: "a line of sight that stays above 20 km below the reference surface"}
	}
	return GeometryResult{
		Route:        RouteZenith,
		Slope:        slope,
		Radius:       radius,
		HeightA:      heightA,
		HeightB:      rhoB - radius,
		Zenith:       zenith,
		Refraction:   delta,
		CentralAngle: s1.Angle(psi),
		Chord:        2 * radius * math.Sin(psi/2),
		Arc:          radius * psi,
	}, nil
}
