package reduce

import (
	"math"

	"github.com/golang/geo/s1"
)

// Combination says how the two terms of an "a mm + b ppm" specification
// combine. The zero value is not a combination.
type Combination int

// Combinations of a constant and a proportional term.
const (
	Linear Combination = iota + 1 // a + b·d
	RSS                           // sqrt(a² + (b·d)²)
)

func (c Combination) String() string {
	switch c {
	case Linear:
		return "linear"
	case RSS:
		return "root-sum-square"
	}
	return "unknown"
}

// Level says what probability an "a + b ppm" figure stands for.
type Level int

// Confidence levels. The zero value is not a level.
const (
	OneSigma  Level = iota + 1 // standard deviation (68.3 % in one dimension)
	Percent95                  // 95 % in one dimension: 1.96 σ
)

// z95 is the two-sided 95 % quantile of the normal distribution.
const z95 = 1.959963984540054

// DistanceSpec is a specification "a + b ppm" for a distance, such as an
// EDM instrument's accuracy or a job's tolerance. The zero value (Rule 0) is
// refused.
type DistanceSpec struct {
	Constant float64     // a, metres
	PPM      float64     // b, ppm
	Rule     Combination // linear or root-sum-square
	Level    Level       // what the figure stands for
}

// At returns the specification's value for a distance d (metres), in
// metres at the specification's own level:
//
//	Linear: a + b·1e-6·d        RSS: sqrt(a² + (b·1e-6·d)²)
//
// 2 mm + 2 ppm at 1500 m is 5.00 mm linear and 3.61 mm RSS (common
// practice; REFERENCES.md §6).
func (s DistanceSpec) At(d float64) (float64, error) {
	const stage = "uncertainty"
	if s.Rule != Linear && s.Rule != RSS {
		return 0, &InputError{Stage: stage, Quantity: "combination rule", Got: float64(s.Rule), Want: "linear or root-sum-square"}
	}
	if s.Level != OneSigma && s.Level != Percent95 {
		return 0, &InputError{Stage: stage, Quantity: "confidence level", Got: float64(s.Level), Want: "one sigma or 95 %"}
	}
	if err := needRange(stage, "constant term", s.Constant, "m", 0, 100); err != nil {
		return 0, err
	}
	if err := needRange(stage, "proportional term", s.PPM, "ppm", 0, 1e5); err != nil {
		return 0, err
	}
	if err := needRange(stage, "distance", d, "m", 0, 1e8); err != nil {
		return 0, err
	}
	p := s.PPM * 1e-6 * d
	if s.Rule == Linear {
		return s.Constant + p, nil
	}
	return math.Hypot(s.Constant, p), nil
}

// Sigma returns the specification at distance d as a standard deviation,
// metres: At(d), divided by 1.96 if the figure is a 95 % one.
func (s DistanceSpec) Sigma(d float64) (float64, error) {
	v, err := s.At(d)
	if err != nil {
		return 0, err
	}
	if s.Level == Percent95 {
		v /= z95
	}
	return v, nil
}

// Budget lists the sources of uncertainty of one reduced distance, each as
// a standard deviation. The zero value has no instrument specification and
// is refused.
type Budget struct {
	Instrument         DistanceSpec // the EDM's a + b ppm
	CentringInstrument float64      // σ of centring the instrument over its mark, metres
	CentringTarget     float64      // σ of centring the reflector over its mark, metres
	HeightA, HeightB   float64      // σ of the heights of instrument axis and reflector, metres
	Zenith             s1.Angle     // σ of the zenith angle (zenith route)
	K                  float64      // σ of the coefficient of refraction (zenith route)
	Control            float64      // σ of the distance between the control points, metres
}

// UncertaintyResult keeps each term of the budget propagated to the
// distance on the reference surface, and their root-sum-square, metres
// (one sigma).
type UncertaintyResult struct {
	Instrument       float64
	Centring         float64
	HeightDifference float64
	MeanHeight       float64
	Zenith           float64
	Refraction       float64
	Control          float64
	Total            float64 // sqrt of the sum of the squares of the above
}

// DistanceUncertainty propagates the budget to the reduced distance of g
// (first-order, terms taken as independent):
//
//	instrument     σ_spec(S)
//	centring       sqrt(σ_cA² + σ_cB²)
//	heights route  |Δh|/c · sqrt(σ_hA² + σ_hB²)       (∂c/∂Δh = −Δh/c)
//	               s/(2R) · sqrt(σ_hA² + σ_hB²)       (1 m is 0.157 ppm)
//	zenith route   S |cos z'| σ_z  and  S |cos z'| S/(2R) σ_k
//	control        σ_control
//
// The height and zenith terms are scaled from the horizontal distance to the
// arc by R/(R + h), which changes them by under 0.1 %.
func DistanceUncertainty(b Budget, g GeometryResult) (UncertaintyResult, error) {
	const stage = "uncertainty"
	inst, err := b.Instrument.Sigma(g.Slope)
	if err != nil {
		return UncertaintyResult{}, err
	}
	for _, v := range [...]struct {
		name string
		v    float64
	}{{"centring of the instrument", b.CentringInstrument}, {"centring of the target", b.CentringTarget},
		{"σ of the instrument's height", b.HeightA}, {"σ of the target's height", b.HeightB},
		{"σ of k", b.K}, {"σ of the control distance", b.Control}, {"σ of the zenith angle", float64(b.Zenith)}} {
		if err := needRange(stage, v.name, v.v, "m", 0, 1000); err != nil {
			return UncertaintyResult{}, err
		}
	}
	if err := needPositive(stage, "radius", g.Radius, "m"); err != nil {
		return UncertaintyResult{}, err
	}
	r := UncertaintyResult{
		Instrument: inst,
		Centring:   math.Hypot(b.CentringInstrument, b.CentringTarget),
		Control:    b.Control,
	}
	sh := math.Hypot(b.HeightA, b.HeightB)
	switch g.Route {
	case RouteHeights:
		if g.Chord > 0 {
			r.HeightDifference = math.Abs(g.HeightB-g.HeightA) / g.Chord * sh
		}
		r.MeanHeight = g.Arc / (2 * g.Radius) * sh
	case RouteZenith:
		horiz := g.Slope * math.Abs(math.Cos(float64(g.Zenith+g.Refraction)))
		r.Zenith = horiz * float64(b.Zenith)
		r.Refraction = horiz * g.Slope / (2 * g.Radius) * b.K
		r.MeanHeight = g.Arc / (2 * g.Radius) * b.HeightA
	default:
		return UncertaintyResult{}, &InputError{Stage: stage, Quantity: "route", Got: float64(g.Route), Want: "heights or zenith angle"}
	}
	r.Total = math.Sqrt(r.Instrument*r.Instrument + r.Centring*r.Centring + r.HeightDifference*r.HeightDifference +
		r.MeanHeight*r.MeanHeight + r.Zenith*r.Zenith + r.Refraction*r.Refraction + r.Control*r.Control)
	return r, nil
}
