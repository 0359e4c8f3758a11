package reduce

import (
	"math"

	"github.com/golang/geo/s1"
)

// ReciprocalResult keeps the values derived from simultaneous reciprocal
// zenith angles on one line.
type ReciprocalResult struct {
	K                float64  // coefficient of refraction of the ray
	Refraction       s1.Angle // δ, the refraction angle at each end
	CentralAngle     s1.Angle // ψ between the normals at the two ends
	HeightDifference float64  // refraction-free hB − hA, metres
}

// Reciprocal derives the coefficient of refraction and a refraction-free
// height difference from the zenith angles z12 (observed at A towards B) and
// z21 (at B towards A) observed at the same time along the same chord of
// length S (metres; instrument and target heights equal at each end, or the
// angles already reduced to one chord), with the radius R_α and the
// approximate height hA of A's end above the reference surface (metres; 100 m
// of error in hA moves ψ by 1.6e-5 of itself).
//
// One circular ray meets the chord at the same angle δ at both ends, and in
// the triangle centre–A–B the geometric zenith angles sum to π + ψ, so
//
//	δ = (π + ψ − z12 − z21) / 2
//	ψ = atan2(S sin(z12 + δ), ρA + S cos(z12 + δ)),  ρA = R + hA
//
// solved by fixed-point iteration (the map contracts by about S/2R; it
// stops when a step moves δ by at most a picoradian), then
// k = 2R sin δ / (S sin ζ), ζ = z12 + δ − ψ/2 the chord's zenith at its
// midpoint (inverse of RefractionAngle), and
// hB − hA = sqrt(ρA² + S² + 2ρA S cos(z12 + δ)) − ρA.
// The textbook forms k = 1 − R(z12 + z21 − π)/s and
// Δh = S (cos z12 − cos z21)/2 are approximations of these
// (see ReciprocalApprox).
func Reciprocal(slope float64, z12, z21 s1.Angle, heightA, radius float64) (ReciprocalResult, error) {
	const stage = "reciprocal zenith angles"
	if err := needPositive(stage, "slope distance", slope, "m"); err != nil {
		return ReciprocalResult{}, err
	}
	if err := needPositive(stage, "radius", radius, "m"); err != nil {
		return ReciprocalResult{}, err
	}
	if err := needRange(stage, "zenith angle at A", z12.Degrees(), "deg", 0, 180); err != nil {
		return ReciprocalResult{}, err
	}
	if err := needRange(stage, "zenith angle at B", z21.Degrees(), "deg", 0, 180); err != nil {
		return ReciprocalResult{}, err
	}
	if err := needRange(stage, "height of A above the reference surface", heightA, "m", -radius/2, radius); err != nil {
		return ReciprocalResult{}, err
	}
	rhoA := radius + heightA
	sum := float64(z12 + z21)
	var delta, psi float64
	for i := 0; i < 8; i++ {
		sz, cz := math.Sincos(float64(z12) + delta)
		psi = math.Atan2(slope*sz, rhoA+slope*cz)
		next := (math.Pi + psi - sum) / 2
		// A step that moves δ by 1e-12 rad leaves it within
		// S/2ρA·1e-12 of the fixed point (the contraction).
		settled := math.Abs(next-delta) <= 1e-12
		delta = next
		if settled {
			break
		}
	}
	k := 2 * radius * math.Sin(delta) / (slope * math.Sin(float64(z12)+delta-psi/2))
	if !finite(k) || math.Abs(k) > 4 {
		return ReciprocalResult{}, &InputError{Stage: stage, Quantity: "sum of zenith angles", Got: sum / math.Pi * 180, Unit: "deg",
			Want: "within a few times the central angle of π, as for a refraction coefficient in [-4, 4]"}
	}
	cz := math.Cos(float64(z12) + delta)
	return ReciprocalResult{
		K:                k,
		Refraction:       s1.Angle(delta),
		CentralAngle:     s1.Angle(psi),
		HeightDifference: math.Sqrt(rhoA*rhoA+slope*slope+2*rhoA*slope*cz) - rhoA,
	}, nil
}

// ReciprocalApprox returns the textbook approximations of Reciprocal's
// results (Torge & Müller, Geodesy, 4th ed., 2012, §5.3 [memory]), given the
// arc s on the reference surface (metres):
//
//	k  = 1 − R (z12 + z21 − π) / s
//	Δh = S (cos z12 − cos z21) / 2
//
// For a 5 km line 1000 m high they differ from Reciprocal by about 1e-4 in k
// and under a millimetre in Δh.
func ReciprocalApprox(slope, arc float64, z12, z21 s1.Angle, radius float64) (k, heightDifference float64) {
	k = 1 - radius*float64(z12+z21-math.Pi)/arc
	heightDifference = slope * (math.Cos(float64(z12)) - math.Cos(float64(z21))) / 2
	return k, heightDifference
}
