package reduce

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// unreduce runs the chain backwards: from the straight chord S3 between
// instrument and reflector to the raw distance a field instrument with the
// given settings would store. It inverts each stage by its own definition
// (the ray circle's arc from its chord, Newton on the second velocity
// polynomial, n_L/n_ref, the constants) and is independent of the forward
// code but for AmbientGroupRefractivity, checked on its own against IAG
// values.
func unreduce(t testing.TB, s3 float64, obs Observation, job Job, radius float64) float64 {
	k := job.K
	wave := s3
	if k != 0 {
		rr := radius / k
		wave = 2 * rr * math.Asin(s3/(2*rr))
	}
	c := (k - k*k) / (12 * radius * radius)
	s2 := wave
	for i := 0; i < 20; i++ { // Newton on s2 − c s2³ = wave
		s2 -= (s2 - c*s2*s2*s2 - wave) / (1 - 3*c*s2*s2)
	}
	m := obs.Meteorology
	var nL float64
	n := func(a Atmosphere) float64 {
		r, err := AmbientGroupRefractivity(job.Carrier.WavelengthUM, a)
		require.NoError(t, err)
		return r.Ambient
	}
	switch {
	case m.HaveInstrument && m.HaveTarget:
		mid := Atmosphere{(m.Instrument.TemperatureC + m.Target.TemperatureC) / 2, (m.Instrument.PressureHPa + m.Target.PressureHPa) / 2, (m.Instrument.HumidityPct + m.Target.HumidityPct) / 2}
		nL = (n(m.Instrument) + 4*n(mid) + n(m.Target)) / 6
	case m.HaveInstrument:
		nL = n(m.Instrument)
	default:
		nL = n(job.DefaultAtmosphere)
	}
	s1 := s2 * (1 + nL*1e-6) / (1 + job.Carrier.ReferenceRefractivity*1e-6)
	measured := (s1 - job.Instrument.AdditiveConstant - obs.PrismConstant) / (1 + job.Instrument.ScalePPM*1e-6)
	return measured*(1+job.Field.PPM*1e-6) + job.Field.PrismConstant
}

func demoJob(t testing.TB) Job {
	carrier, err := CarrierFromReferenceAtmosphere(0.658, Atmosphere{TemperatureC: 12, PressureHPa: 1013.25, HumidityPct: 60})
	require.NoError(t, err)
	return Job{
		Instrument:        Instrument{AdditiveConstant: 0.6 * mm, ScalePPM: 1.8},
		Field:             FieldSettings{PrismConstant: -30 * mm, PPM: 0},
		Carrier:           carrier,
		DefaultAtmosphere: Atmosphere{TemperatureC: 15, PressureHPa: 1013.25, HumidityPct: 50},
		K:                 0.13,
		Budget: Budget{
			Instrument:         DistanceSpec{Constant: 1 * mm, PPM: 1.5, Rule: RSS, Level: OneSigma},
			CentringInstrument: 0.5 * mm, CentringTarget: 0.5 * mm, HeightA: 3 * mm, HeightB: 3 * mm,
			Zenith: s1.Degree / 3600, K: 0.05,
		},
		Test: Test{Critical: DefaultCriticalValue, Tolerance: DistanceSpec{Constant: 5 * mm, PPM: 5, Rule: Linear, Level: Percent95}},
	}
}

// randomObservation makes an observation whose exact geometry is l, with
// random instrument and target heights and atmospheres, run backwards to
// the raw distance.
func randomObservation(t testing.TB, rng *rand.Rand, l sphereLine, job Job) (Observation, MarkHeight, MarkHeight) {
	hi, ht := 1+rng.Float64(), 1+rng.Float64()*2
	a, err := HeightFromEllipsoidal(DatumEllipsoid, l.hA-hi, Separation{})
	require.NoError(t, err)
	b, err := HeightFromEllipsoidal(DatumEllipsoid, l.hB-ht, Separation{})
	require.NoError(t, err)
	atm := func() Atmosphere {
		return Atmosphere{TemperatureC: -10 + rng.Float64()*40, PressureHPa: 600 + rng.Float64()*430, HumidityPct: rng.Float64() * 100}
	}
	obs := Observation{InstrumentHeight: hi, TargetHeight: ht, PrismConstant: -30 * mm}
	switch rng.IntN(3) {
	case 0:
		obs.Meteorology = Meteorology{Instrument: atm(), Target: atm(), HaveInstrument: true, HaveTarget: true}
	case 1:
		obs.Meteorology = Meteorology{Instrument: atm(), HaveInstrument: true}
	}
	obs.Zenith, _ = l.observedZenith()
	obs.SlopeDistance = unreduce(t, l.slope(), obs, job, l.R)
	return obs, a, b
}

// The whole chain, run backwards from exact sphere lines to raw distances
// and forwards again, gives back the arc to 0.01 mm for lines of 1 m to
// 30 km and heights of −100 m to 4000 m, on both routes.
func TestReduceRecoversExactSphereLines(t *testing.T) {
	rng := newRand(t)
	job := demoJob(t)
	for i := 0; i < 5000; i++ {
		l := randomLine(rng, 1, 30000)
		l.k = job.K
		obs, a, b := randomObservation(t, rng, l, job)
		line := Line{Radius: l.R, Inverse: Inverse{Distance: l.s}, GridDistance: l.s * 0.9996, Scale: ScaleFactors{A: 0.9996, Mid: 0.9996, B: 0.9996}}
		r, err := Reduce(obs, job, line, a, b)
		require.NoErrorf(t, err, "line %+v", l)
		assert.InDeltaf(t, 0, r.EllipsoidResidual.Residual, 0.01*mm, "heights route residual of %+v (m)", l)
		assert.InDeltaf(t, 0, r.GridResidual.Residual, 0.01*mm, "heights route grid residual of %+v (m)", l)
		assert.Equal(t, RouteHeights, r.Geometry.Route)

		rz, err := Reduce(obs, job, line, a, MarkHeight{})
		require.NoErrorf(t, err, "line %+v", l)
		assert.InDeltaf(t, 0, rz.EllipsoidResidual.Residual, 0.01*mm, "zenith route residual of %+v (m)", l)
		assert.InDeltaf(t, b.Height, rz.Heights.HeightB-obs.TargetHeight, 0.01*mm, "zenith route target mark height of %+v (m)", l)
		assert.Equal(t, RouteZenith, rz.Geometry.Route)
		if t.Failed() {
			return
		}
	}
}

// A row with impossible geometry is an error naming the stage; it never
// yields NaN.
func TestReduceRejects(t *testing.T) {
	job := demoJob(t)
	a, _ := HeightFromEllipsoidal(DatumEllipsoid, 100, Separation{})
	b, _ := HeightFromEllipsoidal(DatumEllipsoid, 200, Separation{})
	line := Line{Radius: meanRadius, Inverse: Inverse{Distance: 50}, GridDistance: 50, Scale: ScaleFactors{A: 1, Mid: 1, B: 1}}
	obs := Observation{SlopeDistance: 50, Zenith: 90 * s1.Degree, InstrumentHeight: 1.5, TargetHeight: 1.5}
	_, err := Reduce(obs, job, line, a, b)
	var ie *InputError
	require.Truef(t, errors.As(err, &ie), "50 m slope over a 100 m rise: want *InputError, got %v", err)
	assert.Equal(t, "geometry", ie.Stage)

	obs.SlopeDistance = math.NaN()
	_, err = Reduce(obs, job, line, a, b)
	require.Truef(t, errors.As(err, &ie), "NaN: want *InputError, got %v", err)
	assert.Equal(t, "instrument", ie.Stage)

	obs.SlopeDistance = 500
	obs.Zenith = 200 * s1.Degree
	_, err = Reduce(obs, job, line, a, MarkHeight{})
	require.Truef(t, errors.As(err, &ie), "zenith 200°: want *InputError, got %v", err)

	bad := job
	bad.Test = Test{}
	obs.Zenith = 90 * s1.Degree
	_, err = Reduce(obs, bad, Line{Radius: meanRadius, Inverse: Inverse{Distance: 500}, GridDistance: 500, Scale: ScaleFactors{A: 1, Mid: 1, B: 1}}, a, b)
	require.Truef(t, errors.As(err, &ie), "zero Test: want *InputError, got %v", err)
}
