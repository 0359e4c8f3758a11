package reduce

import (
	"math"

	"github.com/golang/geo/s1"
)

// Reading is what an instrument shows for one sight, metres.
type Reading struct {
	Slope      float64 // slope distance
	Horizontal float64 // Slope · sin z, z the observed zenith angle (see Predict)
}

// Prediction keeps every stage of the chain run backwards for one sight:
// what an instrument set up over mark A should read to a reflector over
// mark B, given the control. Lengths are metres.
type Prediction struct {
	// Observation is the input with SlopeDistance (Displayed.Slope) and
	// Zenith filled in: Reduce(p.Observation, job, line, markA, markB)
	// gives back the control.
	Observation Observation
	Heights     LineHeights

	// Geometry holds the sight on the reference surface: Arc is the
	// control geodesic, Slope the straight chord S3 from instrument axis
	// to reflector, Zenith the observed zenith angle and Refraction δ.
	Geometry GeometryResult
	// ChordZenith is z' = Zenith + Refraction, the zenith angle of the
	// straight chord at the instrument, free of refraction.
	ChordZenith s1.Angle

	// The forward stages as Reduce computes them from Displayed.Slope;
	// each one's Distance is the next one's input to rounding.
	SecondVelocity SecondVelocityResult
	FirstVelocity  FirstVelocityResult
	Instrument     InstrumentResult

	// Displayed is what the instrument stores and shows, with its own
	// field ppm and prism constant (the job's FieldSettings, and the
	// shot's obs.FieldPrismConstant where it has one) applied;
	// Bare is the same sight without them, as with both set to zero.
	Displayed, Bare Reading
}

// Predict runs the reduction chain exactly backwards for one sight on a
// prepared line: from the control (line.Inverse.Distance, the geodesic
// between the marks) and the marks' heights markA and markB on one datum,
// with the instrument height obs.InstrumentHeight over A, the reflector
// obs.TargetHeight over B (metres), the reflector's prism constant
// obs.PrismConstant (and the one the instrument applies,
// obs.FieldPrismConstant where HasFieldPrismConstant), the air obs.Meteorology (both ends, one end, or none
// for job.DefaultAtmosphere) and the instrument profile job (its
// calibration, carrier, field settings and coefficient of refraction
// job.K), it returns the raw slope distance the instrument would store, the
// zenith angle it would read at A towards B and the horizontal distance it
// would display. obs.SlopeDistance and obs.Zenith are ignored; both marks'
// heights must be known.
//
// Each stage of Reduce is inverted by its own definition:
//
//	arc → chord     ψ = s/R, c = 2R sin(ψ/2); c₀ from c² = c₀² − κ′c₀³Δh/(6q)
//	                by Newton, q = (1 + hA/R)(1 + hB/R); S3² = Δh² + q c₀²
//	chord → ray     S′ = (2R/k) asin(k S3/2R); S2 from S2 − (k − k²)S2³/(12R²) = S′ by Newton
//	ray → S1        S1 = S2 · n_L/n_ref, N_L chosen as FirstVelocityCorrection chooses it
//	S1 → raw        measured = (S1 − a − prism)/(1 + scale·1e-6)
//	                raw = measured (1 + field ppm·1e-6) + field prism constant
//
// The observed zenith angle is z = z' − δ, δ = RefractionAngle(S3,
// z' − ψ/2, k, R), with z' the zenith angle of the straight chord at the
// instrument: on the sphere of R_α, with ρ = R + h at each end,
//
//	z' = atan2(ρB sin ψ, Δh − 2ρB sin²(ψ/2)) − κ′c²/12
//
// where the last term is the tilt of the chord at A by the change of
// curvature along the line (the angle between the chord and the tangent at
// A is c/2R − κ′c²/12 for curvature growing by κ′ per metre; the same term
// as in EllipsoidDistance): 0.4 mm across a 30 km meridian line. z' agrees
// with the zenith of the 3-D chord between the two points (geocentric
// through PROJ, from A's ellipsoid normal) to 0.01 mm across the line, and
// the zenith route of Reduce turns z back into the control geodesic to
// 0.01 mm (predict_test.go).
//
// Displayed.Horizontal is Displayed.Slope · sin z, the horizontal distance
// an instrument shows with its own curvature-and-refraction correction
// switched off, or, where job.Field.Curvature says it corrects its
// horizontal distance (FieldCurvatureBoth), that corrected distance
// (FieldCurvature.Forward); Bare is Slope · sin z without the field
// settings.
//
// Reducing the prediction with Reduce gives back the control geodesic and
// grid distance to 0.01 mm on lines of 1 m to 30 km at heights of −100 m to
// 4000 m, on both routes (predict_test.go). Impossible input (a chord
// shorter than the height difference cannot occur here, but a k whose ray
// circle is shorter than the line, a mark of unknown height, non-finite
// values) returns an *InputError.
func Predict(obs Observation, job Job, line Line, markA, markB MarkHeight) (Prediction, error) {
	const stage = "predict"
	if !markB.Known() {
		return Prediction{}, &InputError{Stage: stage, Quantity: "height of the target's mark", Got: 0, Unit: "m", Want: "a known height"}
	}
	radius := line.Radius
	if err := needPositive(stage, "radius", radius, "m"); err != nil {
		return Prediction{}, err
	}
	arc := line.Inverse.Distance
	if err := needRange(stage, "control distance", arc, "m", math.SmallestNonzeroFloat64, radius); err != nil {
		return Prediction{}, err
	}
	if err := needRange(stage, "curvature rate times R²", line.CurvatureRate*radius*radius, "", -0.1, 0.1); err != nil {
		return Prediction{}, err
	}
	if err := needRange(stage, "coefficient of refraction", job.K, "", -4, 4); err != nil {
		return Prediction{}, err
	}
	heights, err := NewLineHeights(markA, markB, obs.InstrumentHeight, obs.TargetHeight)
	if err != nil {
		return Prediction{}, err
	}
	hA, hB := heights.HeightA, heights.HeightB
	if err := needRange(stage, "instrument height above the reference surface", hA, "m", -radius/2, radius); err != nil {
		return Prediction{}, err
	}
	if err := needRange(stage, "target height above the reference surface", hB, "m", -radius/2, radius); err != nil {
		return Prediction{}, err
	}

	// arc → straight chord S3 between instrument axis and reflector
	psi := arc / radius
	c := 2 * radius * math.Sin(psi/2)
	dh := hB - hA
	q := (1 + hA/radius) * (1 + hB/radius)
	c0 := c
	if a := line.CurvatureRate * dh / (6 * q); a != 0 {
		for i := 0; i < 20; i++ { // c0² − a c0³ = c², Newton from c0 = c
			next := c0 - (c0*c0-a*c0*c0*c0-c*c)/(2*c0-3*a*c0*c0)
			if next == c0 {
				break
			}
			c0 = next
		}
	}
	s3 := math.Hypot(dh, c0*math.Sqrt(q))
	if err := needPositive(stage, "chord from instrument to reflector", s3, "m"); err != nil {
		return Prediction{}, err
	}

	// zenith angle of the chord at the instrument: on the sphere of R_α,
	// B lies at (ρB sin ψ, ρB cos ψ − ρA) in A's frame, and ρB cos ψ − ρA
	// = Δh − 2ρB sin²(ψ/2) keeps its digits; then the tilt of the chord
	// by the change of curvature along the line
	rhoB := radius + hB
	h := math.Sin(psi / 2)
	chordZenith := s1.Angle(math.Atan2(rhoB*math.Sin(psi), dh-2*rhoB*h*h) - line.CurvatureRate*c*c/12)
	delta, err := RefractionAngle(s3, chordZenith-s1.Angle(psi/2), job.K, radius)
	if err != nil {
		return Prediction{}, err
	}
	zenith := chordZenith - delta
	if err := needRange(stage, "zenith angle", zenith.Degrees(), "deg", 0, 180); err != nil {
		return Prediction{}, err
	}

	// S3 → S2: the ray's arc from its chord, then the second velocity
	// correction undone
	k := job.K
	wave := s3
	if x := k * s3 / (2 * radius); x != 0 {
		if math.Abs(x) >= 1 {
			return Prediction{}, &InputError{Stage: stage, Quantity: "coefficient of refraction", Got: k, Want: "a ray whose circle is longer than the line"}
		}
		wave = s3 * math.Asin(x) / x
	}
	cv := (k - k*k) / (12 * radius * radius)
	s2 := wave
	for i := 0; i < 20; i++ { // s2 − cv s2³ = wave, Newton from s2 = wave
		next := s2 - (s2-cv*s2*s2*s2-wave)/(1-3*cv*s2*s2)
		if next == s2 {
			break
		}
		s2 = next
	}

	// S2 → S1: n_L/n_ref with the refractivity the forward stage uses
	fv, err := FirstVelocityCorrection(s2, job.Carrier, obs.Meteorology, job.DefaultAtmosphere)
	if err != nil {
		return Prediction{}, err
	}
	s1Dist := s2 * (1 + fv.Line*1e-6) / (1 + fv.Reference*1e-6)

	// S1 → measured → raw
	in := job.Instrument
	measured := (s1Dist - in.AdditiveConstant - obs.PrismConstant) / (1 + in.ScalePPM*1e-6)
	if err := needPositive(stage, "measured slope distance", measured, "m"); err != nil {
		return Prediction{}, err
	}
	field := obs.field(&job)
	raw := measured*(1+field.PPM*1e-6) + field.PrismConstant

	p := Prediction{Observation: obs, Heights: heights, ChordZenith: chordZenith}
	p.Observation.SlopeDistance = raw
	p.Observation.Zenith = zenith
	if p.Instrument, err = InstrumentCorrection(raw, in, obs.PrismConstant, field); err != nil {
		return Prediction{}, err
	}
	if p.FirstVelocity, err = FirstVelocityCorrection(p.Instrument.Distance, job.Carrier, obs.Meteorology, job.DefaultAtmosphere); err != nil {
		return Prediction{}, err
	}
	if p.SecondVelocity, err = SecondVelocityCorrection(p.FirstVelocity.Distance, k, radius); err != nil {
		return Prediction{}, err
	}
	p.Geometry = GeometryResult{
		Route:         RouteHeights,
		Slope:         s3,
		Radius:        radius,
		CurvatureRate: line.CurvatureRate,
		HeightA:       hA,
		HeightB:       hB,
		Zenith:        zenith,
		Refraction:    delta,
		CentralAngle:  s1.Angle(psi),
		Chord:         c,
		Arc:           arc,
	}
	sz := math.Sin(float64(zenith))
	p.Displayed = Reading{Slope: raw, Horizontal: raw * sz}
	if job.Field.Curvature.Mode == FieldCurvatureBoth {
		p.Displayed.Horizontal, _ = job.Field.Curvature.Forward(raw, zenith)
	}
	p.Bare = Reading{Slope: measured, Horizontal: measured * sz}
	return p, nil
}
