package reduce_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// randomProfile varies the demo instrument: field settings on or off,
// calibration constants and the coefficient of refraction.
func randomProfile(rng *rand.Rand, base reduce.Job) reduce.Job {
	j := base
	j.Instrument = reduce.Instrument{AdditiveConstant: (rng.Float64() - 0.5) * 4 * mm, ScalePPM: (rng.Float64() - 0.5) * 10}
	switch rng.IntN(3) {
	case 0:
		j.Field = reduce.FieldSettings{}
	case 1:
		j.Field = reduce.FieldSettings{PrismConstant: -30 * mm}
	default:
		j.Field = reduce.FieldSettings{PrismConstant: -17.5 * mm, PPM: (rng.Float64() - 0.3) * 60}
	}
	j.K = rng.Float64() * 0.3
	return j
}

// randomMeteorology records both ends, one end or nothing (the job default).
func randomMeteorology(rng *rand.Rand, hA, hB float64) reduce.Meteorology {
	atm := func(h float64) reduce.Atmosphere {
		return reduce.Atmosphere{TemperatureC: -10 + rng.Float64()*40, PressureHPa: 1013.25 - h/8.5 + (rng.Float64()-0.5)*20, HumidityPct: rng.Float64() * 100}
	}
	switch rng.IntN(4) {
	case 0:
		return reduce.Meteorology{Instrument: atm(hA), Target: atm(hB), HaveInstrument: true, HaveTarget: true}
	case 1:
		return reduce.Meteorology{Instrument: atm(hA), HaveInstrument: true}
	case 2:
		return reduce.Meteorology{Target: atm(hB), HaveTarget: true}
	}
	return reduce.Meteorology{}
}

// Issue 5: predict is the exact inverse of reduce. Thousands of random lines
// of 1 m to 30 km (log-uniform) with marks from −100 m to 4000 m above the
// ellipsoid, in a UTM zone, a Lambert conic and a national transverse
// Mercator on the Airy ellipsoid, random instrument profiles (field ppm and
// prism constant on or off), atmospheres and k: reducing the prediction
// gives back the control geodesic (PROJ's Karney inverse) and the plane
// distance between the projected control points to 0.01 mm, on the
// heights route and on the zenith route. Rerun a failure with
// -reduce.seed.
func TestPredictReducesToControl(t *testing.T) {
	rng := reduce.NewRand(t)
	base := reduce.DemoJob(t)
	for _, c := range roundTripCRSs {
		proj, ell, geod := openRoundTripCRS(t, c)

		var worst struct{ heights, grid, zenith, zenithGrid, target float64 }
		for i := 0; i < 1000; i++ {
			a := s2.LatLngFromDegrees(c.latMin+rng.Float64()*(c.latMax-c.latMin), c.lngMin+rng.Float64()*(c.lngMax-c.lngMin))
			dist := math.Pow(30000, rng.Float64())
			hi, ht := 1+rng.Float64(), 1+rng.Float64()*2
			markHA := -100 + rng.Float64()*4100
			markHB := -100 + rng.Float64()*4100
			if d := markHB + ht - markHA - hi; math.Abs(d) > 0.9*dist { // a sight a level could hold
				markHB = markHA + hi - ht + d*0.9*dist/math.Abs(d)
			}
			b, _, err := geod.Direct(a, s1.Angle(rng.Float64()*2*math.Pi), dist)
			require.NoError(t, err)
			line := newLine(t, geod, proj, ell, a, b)
			markA, err := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, markHA, reduce.Separation{})
			require.NoError(t, err)
			markB, err := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, markHB, reduce.Separation{})
			require.NoError(t, err)
			job := randomProfile(rng, base)
			obs := reduce.Observation{InstrumentHeight: hi, TargetHeight: ht, PrismConstant: -30 * mm,
				Meteorology: randomMeteorology(rng, markHA+hi, markHB+ht)}

			p, err := reduce.Predict(obs, job, line, markA, markB)
			require.NoErrorf(t, err, "%s line %d", c.name, i)
			r, err := reduce.Reduce(p.Observation, job, line, markA, markB)
			require.NoErrorf(t, err, "%s line %d", c.name, i)
			rz, err := reduce.Reduce(p.Observation, job, line, markA, reduce.MarkHeight{})
			require.NoErrorf(t, err, "%s line %d", c.name, i)

			worst.heights = math.Max(worst.heights, math.Abs(r.Geometry.Arc-line.Inverse.Distance))
			worst.grid = math.Max(worst.grid, math.Abs(r.Grid.GridDistance-line.GridDistance))
			worst.zenith = math.Max(worst.zenith, math.Abs(rz.Geometry.Arc-line.Inverse.Distance))
			worst.zenithGrid = math.Max(worst.zenithGrid, math.Abs(rz.Grid.GridDistance-line.GridDistance))
			// the zenith route's reflector height, weighted by the cosine of
			// the chord's zenith angle at B (see below)
			zB := math.Pi - p.ChordZenith.Radians() + p.Geometry.CentralAngle.Radians()
			worst.target = math.Max(worst.target, math.Abs(rz.Heights.HeightB-(markHB+ht))*math.Abs(math.Cos(zB)))
			// the stages agree with Reduce's own, stage by stage
			if !assert.InDeltaf(t, r.SecondVelocity.Distance, p.Geometry.Slope, 1e-9*p.Geometry.Slope+1e-9, "%s line %d: S3 (m)", c.name, i) {
				return
			}
		}
		t.Logf("%s: worst |reduced − control|: heights route %.5f mm, grid %.5f mm; zenith route %.5f mm, grid %.5f mm, target height × |cos z_B| %.5f mm",
			c.name, worst.heights/mm, worst.grid/mm, worst.zenith/mm, worst.zenithGrid/mm, worst.target/mm)
		assert.Lessf(t, worst.heights, 0.01*mm, "%s: heights route against the geodesic (m)", c.name)
		assert.Lessf(t, worst.grid, 0.01*mm, "%s: heights route against the grid distance (m)", c.name)
		assert.Lessf(t, worst.zenith, 0.01*mm, "%s: zenith route against the geodesic (m)", c.name)
		assert.Lessf(t, worst.zenithGrid, 0.01*mm, "%s: zenith route against the grid distance (m)", c.name)
		// The zenith route's reflector height: where the sight is
		// horizontal at B, the central angle ψ of the zenith route is at
		// its largest over z, so the height it gives moves by a residual
		// δS of the chord over |cos z_B| (millimetres within 0.3° of
		// horizontal); weighted by |cos z_B| it is well conditioned.
		assert.Lessf(t, worst.target, 0.1*mm, "%s: zenith route reflector height times |cos z_B| (m)", c.name)
	}
}

// openRoundTripCRS opens a CRS with its projector (closed at the end of
// the test), ellipsoid and geodesic.
func openRoundTripCRS(t testing.TB, c roundTripCRS) (*geodesic.Projector, geodesic.Ellipsoid, *geodesic.Geodesic) {
	t.Helper()
	crs, err := geodesic.OpenCRS(c.definition)
	require.NoErrorf(t, err, "%s", c.name)
	proj, err := crs.NewProjector()
	require.NoErrorf(t, err, "%s", c.name)
	t.Cleanup(proj.Close)
	ell := crs.Ellipsoid()
	geod, err := geodesic.NewGeodesic(ell)
	require.NoErrorf(t, err, "%s", c.name)
	return proj, ell, geod
}

func newLine(t testing.TB, geod *geodesic.Geodesic, proj *geodesic.Projector, ell geodesic.Ellipsoid, a, b s2.LatLng) reduce.Line {
	t.Helper()
	line, err := reduce.NewLine(controlOf(t, geod, proj, a, b), ell, proj)
	require.NoError(t, err)
	return line
}

// The predicted chord and zenith angle against the 3-D truth: the straight
// line between the instrument axis and the reflector converted to
// geocentric coordinates by PROJ, its length and its zenith angle from the
// ellipsoid normal at A, and the observed zenith angle less the refraction
// angle of the ray model. The chord agrees to 0.01 mm; the zenith angle to
// 0.02 mm across the line (0.004 mm seen; without the tilt of the chord by
// the change of curvature, Predict's κ′c²/12, it was 0.7 mm).
func TestPredictAgainstGeocentricChord(t *testing.T) {
	rng := reduce.NewRand(t)
	job := reduce.DemoJob(t)
	c := roundTripCRSs[0]
	proj, ell, geod := openRoundTripCRS(t, c)
	var worstChord, worstZ, worstZs float64
	for i := 0; i < 300; i++ {
		a := s2.LatLngFromDegrees(c.latMin+rng.Float64()*(c.latMax-c.latMin), c.lngMin+rng.Float64()*(c.lngMax-c.lngMin))
		dist := math.Pow(30000, rng.Float64())
		hA := -100 + rng.Float64()*4100
		hB := math.Max(-100, math.Min(4000, hA+(rng.Float64()-0.5)*1.8*math.Min(dist, 4000)))
		const hi, ht = 1.6, 2.0
		l := simulate(t, geod, proj, a, s1.Angle(rng.Float64()*2*math.Pi), dist, hA, hB)
		line := newLine(t, geod, proj, ell, l.a, l.b)
		markA, err := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, hA-hi, reduce.Separation{})
		require.NoError(t, err)
		markB, err := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, hB-ht, reduce.Separation{})
		require.NoError(t, err)
		p, err := reduce.Predict(reduce.Observation{InstrumentHeight: hi, TargetHeight: ht}, job, line, markA, markB)
		require.NoError(t, err)
		assert.InDeltaf(t, l.chord, p.Geometry.Slope, 0.01*mm, "line %d of %.1f m: chord (m)", i, dist)
		assert.InDeltaf(t, l.zenith.Radians(), p.ChordZenith.Radians(), 0.02*mm/dist, "line %d of %.1f m: zenith of the chord (rad)", i, dist)
		worstChord = math.Max(worstChord, math.Abs(l.chord-p.Geometry.Slope))
		worstZ = math.Max(worstZ, math.Abs((l.zenith-p.ChordZenith).Radians())*dist)
		worstZs = math.Max(worstZs, math.Abs((l.zenith-p.ChordZenith).Degrees()*3600))
		if t.Failed() {
			return
		}
	}
	t.Logf("worst chord %.5f mm, zenith %.5f mm across the line, %.5f″", worstChord/mm, worstZ/mm, worstZs)
}

// Setting the field ppm and prism constant changes what is displayed, not
// what is bare; and the displayed horizontal distance is slope · sin z.
func TestPredictFieldSettings(t *testing.T) {
	base := reduce.DemoJob(t)
	line := reduce.Line{Radius: 6378000, Inverse: reduce.Inverse{Distance: 1500}, GridDistance: 1500 * 0.9996,
		Scale: reduce.ScaleFactors{A: 0.9996, Mid: 0.9996, B: 0.9996}}
	markA, _ := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, 100, reduce.Separation{})
	markB, _ := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, 130, reduce.Separation{})
	obs := reduce.Observation{InstrumentHeight: 1.5, TargetHeight: 1.5, PrismConstant: -30 * mm}

	off := base
	off.Field = reduce.FieldSettings{}
	on := base
	on.Field = reduce.FieldSettings{PrismConstant: -30 * mm, PPM: 12}
	pOff, err := reduce.Predict(obs, off, line, markA, markB)
	require.NoError(t, err)
	pOn, err := reduce.Predict(obs, on, line, markA, markB)
	require.NoError(t, err)
	assert.Equal(t, pOff.Displayed, pOff.Bare, "no field settings: displayed is bare")
	assert.InDelta(t, pOff.Bare.Slope, pOn.Bare.Slope, 1e-9, "bare slope does not depend on the field settings (m)")
	assert.InDelta(t, pOn.Bare.Slope*(1+12e-6)-30*mm, pOn.Displayed.Slope, 1e-9, "displayed = bare (1 + ppm) + prism (m)")
	assert.InDelta(t, pOn.Displayed.Slope*math.Sin(pOn.Observation.Zenith.Radians()), pOn.Displayed.Horizontal, 1e-9, "horizontal = slope sin z (m)")
	// 30 m up over 1.5 km: the zenith angle is a little under 90° − atan(30/1500)
	assert.InDelta(t, 90-math.Atan2(30, 1500)*180/math.Pi, pOn.Observation.Zenith.Degrees(), 0.01, "zenith angle (deg)")

	// An instrument that corrects its horizontal distance for curvature
	// and refraction shows hd' = Y − (1 − k/2)·X·Y/R (X = S cos z,
	// Y = S sin z; the first-order form of total-station manuals, from
	// memory); one that corrects only its height difference shows Y.
	both := on
	both.Field.Curvature = reduce.FieldCurvature{Mode: reduce.FieldCurvatureBoth, K: 0.13, Radius: 6378000}
	pBoth, err := reduce.Predict(obs, both, line, markA, markB)
	require.NoError(t, err)
	s, z := pBoth.Displayed.Slope, pBoth.Observation.Zenith.Radians()
	x, y := s*math.Cos(z), s*math.Sin(z)
	assert.Equal(t, pOn.Displayed.Slope, s, "the slope distance is not the instrument's to correct")
	assert.InDelta(t, y-(1-0.13/2)*x*y/6378000, pBoth.Displayed.Horizontal, 1e-9, "horizontal shown (m)")
	assert.Greater(t, math.Abs(pBoth.Displayed.Horizontal-pOn.Displayed.Horizontal), 5e-3, "the correction is seen (about 7 mm here)")
	vertical := on
	vertical.Field.Curvature = reduce.FieldCurvature{Mode: reduce.FieldCurvatureVertical, K: 0.13, Radius: 6378000}
	pVert, err := reduce.Predict(obs, vertical, line, markA, markB)
	require.NoError(t, err)
	assert.Equal(t, pOn.Displayed, pVert.Displayed)
}

// Bad input is an *InputError naming the quantity, never NaN.
func TestPredictRejects(t *testing.T) {
	job := reduce.DemoJob(t)
	line := reduce.Line{Radius: 6378000, Inverse: reduce.Inverse{Distance: 1500}, GridDistance: 1500, Scale: reduce.ScaleFactors{A: 1, Mid: 1, B: 1}}
	markA, _ := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, 100, reduce.Separation{})
	markB, _ := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, 130, reduce.Separation{})
	obs := reduce.Observation{InstrumentHeight: 1.5, TargetHeight: 1.5}
	for name, tc := range map[string]struct {
		obs   reduce.Observation
		job   reduce.Job
		line  reduce.Line
		markB reduce.MarkHeight
		want  string
	}{
		"unknown target mark":    {obs, job, line, reduce.MarkHeight{}, "height of the target's mark"},
		"NaN instrument height":  {reduce.Observation{InstrumentHeight: math.NaN(), TargetHeight: 1}, job, line, markB, "instrument height"},
		"zero control distance":  {obs, job, reduce.Line{Radius: 6378000, Scale: line.Scale}, markB, "control distance"},
		"no radius":              {obs, job, reduce.Line{Inverse: line.Inverse, Scale: line.Scale}, markB, "radius"},
		"k of a tight ray":       {obs, func() reduce.Job { j := job; j.K = math.Inf(1); return j }(), line, markB, "coefficient of refraction"},
		"bad meteorology":        {reduce.Observation{InstrumentHeight: 1.5, TargetHeight: 1.5, Meteorology: reduce.Meteorology{HaveInstrument: true}}, job, line, markB, "pressure 0 hPa"},
		"huge negative constant": {reduce.Observation{InstrumentHeight: 1.5, TargetHeight: 1.5, PrismConstant: 0.5}, func() reduce.Job { j := job; j.Instrument.AdditiveConstant = 0.5; return j }(), reduce.Line{Radius: 6378000, Inverse: reduce.Inverse{Distance: 0.5}, Scale: line.Scale}, markA, "measured slope distance"},
	} {
		_, err := reduce.Predict(tc.obs, tc.job, tc.line, markA, tc.markB)
		var ie *reduce.InputError
		if assert.Truef(t, errors.As(err, &ie), "%s: want *InputError, got %v", name, err) {
			assert.Containsf(t, ie.Error(), tc.want, "%s", name)
		}
	}
}
