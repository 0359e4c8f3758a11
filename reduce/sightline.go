package reduce

import (
	"math"
	"sort"
)

// The line of sight over the curved Earth. The surface is a sphere of
// radius R (for a line between marks, R_α in the line's azimuth at its
// midpoint) and the ray a circle of curvature k/R bending towards the
// Earth, the model of a near-horizontal sight (RefractionAngle with
// sin ζ = 1). Heights are above that surface, metres; distances are along
// it from A, metres. The usual rules of thumb (common practice) are these
// results to first order in h/R:
//
//	horizon distance  d ≈ sqrt(2Rh / (1 − k))
//	drop below a level sight at distance L  ≈ (1 − k) L² / 2R
//	hidden height of a target at L beyond the eye's horizon ≈ (1 − k)(L − d)² / 2R
//
// (effective radius R/(1 − k)); the functions here are exact on the sphere
// and the circle, and the ...Approx functions give the rules.

// checkSightInputs validates a radius and a coefficient of refraction.
func checkSightInputs(radius, k float64) error {
	const stage = "sightline"
	if err := needRange(stage, "radius", radius, "m", 1e5, 1e8); err != nil {
		return err
	}
	return needRange(stage, "coefficient of refraction", k, "", -4, 0.999)
}

// HorizonDistance returns the distance along the surface from the foot of
// an eye at height h (metres) to where its grazing ray touches the
// surface, on a sphere of radius R with the ray of curvature k/R. The ray
// is tangent to the surface at T and its circle passes through the eye,
// so in the triangle of the Earth's centre, the eye and the ray's centre
// (at R − R/k along the normal at T) the angle θ at the Earth's centre
// between the eye and T satisfies
//
//	sin²(θ/2) = h (2R + k h) / (4 R (R + h)(1 − k))
//
// and the distance is Rθ. For k = 0 this is cos θ = R/(R + h), and to
// first order θ² = 2h/(R(1 − k)): sqrt(2Rh/(1 − k)) (HorizonDistanceApprox).
// k must be below 1: at k ≥ 1 the ray bends as fast as the Earth and there
// is no horizon.
func HorizonDistance(height, radius, k float64) (float64, error) {
	if err := checkSightInputs(radius, k); err != nil {
		return 0, err
	}
	if err := needRange("sightline", "eye height", height, "m", 0, radius); err != nil {
		return 0, err
	}
	s2 := height * (2*radius + k*height) / (4 * radius * (radius + height) * (1 - k))
	if s2 > 1 {
		return 0, &InputError{Stage: "sightline", Quantity: "eye height", Got: height, Unit: "m", Want: "a height whose horizon lies within half the globe"}
	}
	return 2 * radius * math.Asin(math.Sqrt(s2)), nil
}

// HorizonDistanceApprox returns the rule of thumb sqrt(2Rh/(1 − k))
// (common practice): 4.83 km for an eye 1.83 m up, k = 0, R = 6371 km. It
// is short of HorizonDistance by about d·h/R·(1/3 + …): 0.5 mm at 4.8 km.
func HorizonDistanceApprox(height, radius, k float64) float64 {
	return math.Sqrt(2 * radius * height / (1 - k))
}

// GrazingRayHeight returns the height above the surface of a ray that
// grazes the surface (is level there), at the distance arc (metres) along
// the surface from the grazing point, on a sphere of radius R with the
// ray of curvature k/R. It is HorizonDistance solved for the height:
// with s = 4R(1 − k) sin²(θ/2), θ = arc/R,
//
//	k h² + (2R − s) h − s R = 0,  h = 2sR / ((2R − s) + sqrt((2R − s)² + 4ksR))
//
// It is the drop of the surface below a level sight from an eye at the
// surface, curvature and refraction together: (1 − k) L²/2R to first order
// (CurvatureDropApprox), 0.0785 m at 1 km for k = 0.
func GrazingRayHeight(arc, radius, k float64) (float64, error) {
	if err := checkSightInputs(radius, k); err != nil {
		return 0, err
	}
	if err := needRange("sightline", "distance from the grazing point", arc, "m", 0, math.Pi/2*radius); err != nil {
		return 0, err
	}
	h := math.Sin(arc / (2 * radius))
	s := 4 * radius * (1 - k) * h * h
	b := 2*radius - s
	d := b*b + 4*k*s*radius
	if b <= 0 || d < 0 {
		return 0, &InputError{Stage: "sightline", Quantity: "distance from the grazing point", Got: arc, Unit: "m", Want: "a distance the grazing ray reaches"}
	}
	return 2 * s * radius / (b + math.Sqrt(d)), nil
}

// CurvatureDropApprox returns the rule of thumb (1 − k) L²/2R (common
// practice): 0.0785 m per km² for k = 0 and 0.0675 m per km² for k = 0.14,
// R = 6371 km.
func CurvatureDropApprox(arc, radius, k float64) float64 {
	return (1 - k) * arc * arc / (2 * radius)
}

// HiddenHeight returns how much of a target at the distance arc (metres)
// from an eye at height h (metres) lies below the eye's grazing ray: zero
// within the eye's horizon, else GrazingRayHeight of the distance beyond
// HorizonDistance, the ray being one circle on both sides of its grazing
// point.
func HiddenHeight(height, arc, radius, k float64) (float64, error) {
	d, err := HorizonDistance(height, radius, k)
	if err != nil {
		return 0, err
	}
	if err := needRange("sightline", "distance to the target", arc, "m", 0, math.Pi/2*radius); err != nil {
		return 0, err
	}
	if arc <= d {
		return 0, nil
	}
	return GrazingRayHeight(arc-d, radius, k)
}

// HiddenHeightApprox returns the rule of thumb (L − sqrt(2Rh'))²/2R' with
// the effective radius R' = R/(1 − k) (common practice; k = 0 gives
// (L − sqrt(2Rh))²/2R).
func HiddenHeightApprox(height, arc, radius, k float64) float64 {
	re := radius / (1 - k)
	beyond := arc - math.Sqrt(2*re*height)
	if beyond <= 0 {
		return 0
	}
	return beyond * beyond / (2 * re)
}

// Sightline is a line of sight from an eye at HeightA over A to a target
// at HeightB over B, Arc along the surface apart, on a sphere of Radius
// with the ray of curvature K/Radius. Build it with NewSightline.
type Sightline struct {
	Arc              float64 // distance along the surface from A to B, metres
	HeightA, HeightB float64 // eye and target above the surface, metres
	Radius           float64 // R, metres
	K                float64 // coefficient of refraction

	// the chord between eye and target in the plane through the Earth's
	// centre: A' = (0, ρA), B' = ρB (sin Ψ, cos Ψ), Ψ = Arc/R
	psi, rhoA, rhoB float64
	ax, ay, bx, by  float64
	chord           float64 // |A'B'|
	ex, ey          float64 // unit vector from A' to B'
	nx, ny          float64 // unit normal to the chord, towards the Earth
	curvature       float64 // κ = k/R
	w               float64 // sqrt(1 − κ² chord²/4)
}

// NewSightline validates and prepares a sightline. The eye and the target
// may be anywhere from 1 km below the surface (a valley floor under a
// datum) to 100 km above it; Arc up to a quarter of the globe.
func NewSightline(arc, heightA, heightB, radius, k float64) (Sightline, error) {
	const stage = "sightline"
	if err := checkSightInputs(radius, k); err != nil {
		return Sightline{}, err
	}
	if err := needRange(stage, "distance along the line", arc, "m", math.SmallestNonzeroFloat64, math.Pi/2*radius); err != nil {
		return Sightline{}, err
	}
	for _, h := range [...]struct {
		name string
		v    float64
	}{{"eye height", heightA}, {"target height", heightB}} {
		if err := needRange(stage, h.name, h.v, "m", -1000, 1e5); err != nil {
			return Sightline{}, err
		}
	}
	s := Sightline{Arc: arc, HeightA: heightA, HeightB: heightB, Radius: radius, K: k,
		psi: arc / radius, rhoA: radius + heightA, rhoB: radius + heightB, curvature: k / radius}
	sp, cp := math.Sincos(s.psi)
	s.ax, s.ay = 0, s.rhoA
	s.bx, s.by = s.rhoB*sp, s.rhoB*cp
	// B' − A' with ρB cos Ψ − ρA = (hB − hA) − 2ρB sin²(Ψ/2) for short lines
	h := math.Sin(s.psi / 2)
	dx, dy := s.rhoB*sp, (heightB-heightA)-2*s.rhoB*h*h
	s.chord = math.Hypot(dx, dy)
	s.ex, s.ey = dx/s.chord, dy/s.chord
	s.nx, s.ny = s.ey, -s.ex
	if mx, my := s.ax+dx/2, s.ay+dy/2; s.nx*mx+s.ny*my > 0 {
		s.nx, s.ny = -s.nx, -s.ny
	}
	half := s.curvature * s.chord / 2
	if math.Abs(half) >= 1 {
		return Sightline{}, &InputError{Stage: stage, Quantity: "coefficient of refraction", Got: k, Want: "a ray whose circle is longer than the line"}
	}
	s.w = math.Sqrt(1 - half*half)
	return s, nil
}

// Clearance returns the height of the ray above the surface at the
// distance x (metres, 0..Arc) along the surface from A.
//
// The normal at x, at the angle θ = x/R from A's, meets the chord A'B' at
// the radius (the polar equation of the line through A' and B')
//
//	t = ρA ρB sin Ψ / (ρA sin θ + ρB sin(Ψ − θ))
//
// at λ along the chord from its midpoint; the ray, a circle of curvature κ
// through A' and B', lies s further out along the normal, where
//
//	κ s² + 2B s + κ (λ² − S²/4) = 0,  B = κ λ (e·u) − sqrt(1 − κ²S²/4) (n·u)
//
// (e along the chord, n its normal towards the Earth, u the normal at x),
// of which the small root s = −κc / (B + sqrt(B² − κ²c)) keeps its digits
// for any κ, zero included. The clearance is t + s − R.
func (s Sightline) Clearance(x float64) (float64, error) {
	if err := needRange("sightline", "distance along the line", x, "m", 0, s.Arc); err != nil {
		return 0, err
	}
	if s.chord == 0 {
		return 0, &InputError{Stage: "sightline", Quantity: "sightline", Got: 0, Want: "a sightline made by NewSightline"}
	}
	theta := x / s.Radius
	ux, uy := math.Sincos(theta)
	t := s.rhoA * s.rhoB * math.Sin(s.psi) / (s.rhoA*ux + s.rhoB*math.Sin(s.psi-theta))
	if x == 0 {
		t = s.rhoA
	}
	if x == s.Arc {
		t = s.rhoB
	}
	// λ: the chord point's offset from the chord's midpoint
	px, py := t*ux-s.ax, t*uy-s.ay
	lambda := px*s.ex + py*s.ey - s.chord/2
	c := lambda*lambda - s.chord*s.chord/4
	b := s.curvature*lambda*(s.ex*ux+s.ey*uy) - s.w*(s.nx*ux+s.ny*uy)
	ds := -s.curvature * c / (b + math.Sqrt(b*b-s.curvature*s.curvature*c))
	return t + ds - s.Radius, nil
}

// Lowest returns the distance from A (metres) where the ray runs lowest
// above the surface, and its clearance there. The clearance along the
// line is sampled at 64 intervals and the lowest interval pair refined by
// golden-section search to a millimetre of distance; for k < 1 the
// clearance is convex along the line, so this is its minimum.
func (s Sightline) Lowest() (x, clearance float64, err error) {
	const n = 64
	best, bestC := 0, math.Inf(1)
	for i := 0; i <= n; i++ {
		c, err := s.Clearance(s.Arc * float64(i) / n)
		if err != nil {
			return 0, 0, err
		}
		if c < bestC {
			best, bestC = i, c
		}
	}
	lo := s.Arc * float64(max(best-1, 0)) / n
	hi := s.Arc * float64(min(best+1, n)) / n
	f := func(x float64) float64 { c, _ := s.Clearance(x); return c }
	const g = 0.6180339887498949
	a, b := hi-g*(hi-lo), lo+g*(hi-lo)
	fa, fb := f(a), f(b)
	for hi-lo > 1e-3 {
		if fa < fb {
			hi, b, fb = b, a, fa
			a = hi - g*(hi-lo)
			fa = f(a)
		} else {
			lo, a, fa = a, b, fb
			b = lo + g*(hi-lo)
			fb = f(b)
		}
	}
	x = (lo + hi) / 2
	clearance = f(x)
	// an end may be lower than the interior (a ray climbing from A)
	for _, end := range [...]float64{0, s.Arc} {
		if c := f(end); c < clearance {
			x, clearance = end, c
		}
	}
	return x, clearance, nil
}

// ProfilePoint is a point of the ground or an obstacle under the line:
// its distance from A along the surface and its height above the surface,
// metres.
type ProfilePoint struct {
	Distance, Height float64
}

// PointClearance is the ray over one profile point, metres.
type PointClearance struct {
	ProfilePoint
	Ray       float64 // the ray's height above the surface there
	Clearance float64 // Ray − Height
	// Below: the point fails the minimum clearance (FailsClearance);
	// Blocks: it reaches the ray (Clearance ≤ 0), an obstruction, which
	// also fails.
	Below, Blocks bool
}

// FailsClearance reports whether a clearance c (metres) of the ray over
// the surface or a profile point fails the minimum clearance asked for:
// c under the minimum, or the ray not above the point at all (c ≤ 0, a
// ray that touches an obstacle is stopped by it). It is the one rule of
// the verdict (SightlineCheck), applied alike to the surface and to every
// profile point.
func FailsClearance(c, minClearance float64) bool {
	return c < minClearance || c <= 0
}

// checkMinClearance validates a minimum clearance: zero or more, metres.
func checkMinClearance(minClearance float64) error {
	return needRange("sightline", "minimum clearance", minClearance, "m", 0, 1e5)
}

// ProfileClearance returns the ray's clearance over each profile point in
// order of distance, flagging those that fail minClearance (metres, zero
// or more; FailsClearance). A point outside 0..Arc is an *InputError.
func (s Sightline) ProfileClearance(points []ProfilePoint, minClearance float64) ([]PointClearance, error) {
	if err := checkMinClearance(minClearance); err != nil {
		return nil, err
	}
	out := make([]PointClearance, 0, len(points))
	for _, p := range points {
		if err := needRange("sightline", "profile height", p.Height, "m", -1e4, 1e5); err != nil {
			return nil, err
		}
		ray, err := s.Clearance(p.Distance)
		if err != nil {
			return nil, err
		}
		c := ray - p.Height
		out = append(out, PointClearance{ProfilePoint: p, Ray: ray, Clearance: c,
			Below: FailsClearance(c, minClearance), Blocks: c <= 0})
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Distance < out[j].Distance })
	return out, nil
}

// SightlineSummary keeps what a planner asks of a line: where the ray is
// lowest, the horizons of both ends, and how much of the target the
// curved Earth hides from the eye. Metres.
type SightlineSummary struct {
	Sightline
	LowestAt, LowestClearance float64
	HorizonA, HorizonB        float64 // HorizonDistance of the eye and of the target (0 below the surface)
	// HiddenAtB is HiddenHeight of a target at B for the eye at A, over
	// the surface; Visible is the part of the target above it
	// (HeightB − HiddenAtB, negative when all of it is hidden).
	HiddenAtB, Visible float64
	// AboveSurface: the ray stays above the surface all along. It is a
	// fact of the geometry, not the verdict on the line, which weighs the
	// minimum clearance and the profile too (SightlineCheck).
	AboveSurface bool
}

// Summarize computes the summary of a sightline.
func (s Sightline) Summarize() (SightlineSummary, error) {
	r := SightlineSummary{Sightline: s}
	var err error
	if r.LowestAt, r.LowestClearance, err = s.Lowest(); err != nil {
		return r, err
	}
	r.AboveSurface = r.LowestClearance > 0
	if s.HeightA >= 0 {
		if r.HorizonA, err = HorizonDistance(s.HeightA, s.Radius, s.K); err != nil {
			return r, err
		}
		if r.HiddenAtB, err = HiddenHeight(s.HeightA, s.Arc, s.Radius, s.K); err != nil {
			return r, err
		}
	}
	if s.HeightB >= 0 {
		if r.HorizonB, err = HorizonDistance(s.HeightB, s.Radius, s.K); err != nil {
			return r, err
		}
	}
	r.Visible = s.HeightB - r.HiddenAtB
	return r, nil
}

// SightlineCheck is the verdict on a line of sight, with what it rests
// on: the line clears only if the ray keeps the minimum clearance over
// the surface all along and over every profile point (FailsClearance on
// each). Compute it once, with Sightline.Check, and let every output of
// the line (its headline, table, CSV, plot and exit status) read it, so
// that they cannot disagree.
type SightlineCheck struct {
	SightlineSummary
	MinClearance float64          // metres, zero or more
	Profile      []PointClearance // in order of distance
	// SurfaceFails: the ray's lowest clearance over the surface
	// (LowestClearance, at LowestAt) fails the minimum clearance.
	SurfaceFails bool
	// Failing profile points (Below), and how many of them reach the
	// ray (Blocks).
	Failing, Blocking int
	// Worst is the index in Profile of the point of least clearance, the
	// first of equals; −1 without a profile.
	Worst int
}

// Clear reports whether the line clears: the surface and every profile
// point by the minimum clearance.
func (c SightlineCheck) Clear() bool { return !c.SurfaceFails && c.Failing == 0 }

// Check computes the verdict on the sightline over the profile points
// (none for the surface alone) with minClearance, metres, zero or more.
func (s Sightline) Check(points []ProfilePoint, minClearance float64) (SightlineCheck, error) {
	if err := checkMinClearance(minClearance); err != nil {
		return SightlineCheck{}, err
	}
	sum, err := s.Summarize()
	if err != nil {
		return SightlineCheck{}, err
	}
	prof, err := s.ProfileClearance(points, minClearance)
	if err != nil {
		return SightlineCheck{}, err
	}
	c := SightlineCheck{SightlineSummary: sum, MinClearance: minClearance, Profile: prof, Worst: -1,
		SurfaceFails: FailsClearance(sum.LowestClearance, minClearance)}
	for i, p := range prof {
		if p.Below {
			c.Failing++
		}
		if p.Blocks {
			c.Blocking++
		}
		if c.Worst < 0 || p.Clearance < prof[c.Worst].Clearance {
			c.Worst = i
		}
	}
	return c, nil
}
