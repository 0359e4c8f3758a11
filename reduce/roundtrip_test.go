package reduce_test

import (
	"math"
	"testing"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
	"github.com/golang/geo/r3"
	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

const mm = 1e-3

// roundTripCRS is a CRS and the area its random lines are drawn in.
type roundTripCRS struct {
	name           string
	definition     string
	latMin, latMax float64 // degrees
	lngMin, lngMax float64 // degrees
}

var roundTripCRSs = []roundTripCRS{
	// a UTM zone on WGS 84
	{"UTM zone 33N (WGS 84)", "EPSG:32633", 40, 62, 12, 18},
	// a Lambert conformal conic (two standard parallels) on GRS 80
	{"Lambert-93 (RGF93, GRS 80)", "EPSG:2154", 43, 50.5, -4, 7.5},
	// a national transverse Mercator on another ellipsoid
	{"British National Grid (OSGB 1936, Airy 1830)", "EPSG:27700", 50, 58.5, -5.5, 1.5},
}

// geoLine is one simulated line: control points, heights of instrument
// axis and reflector above the ellipsoid, and the truth from geodesic.
type geoLine struct {
	a, b    s2.LatLng
	hA, hB  float64 // instrument axis and reflector, m
	inverse geodesic.Line
	gridA   geodesic.GridPoint
	gridB   geodesic.GridPoint
	chord   float64  // 3-D chord between the two points, m
	zenith  s1.Angle // geometric zenith angle at A, from A's ellipsoid normal
}

// controlOf is the control geometry of the line from a to b: PROJ's
// geodesic and midpoint, and the projected ends and midpoint.
func controlOf(t testing.TB, g *geodesic.Geodesic, p *geodesic.Projector, a, b s2.LatLng) reduce.LineControl {
	t.Helper()
	inv, mid, err := g.InverseMidpoint(a, b)
	require.NoError(t, err)
	c := reduce.LineControl{A: a, Mid: mid, B: b,
		Inverse: reduce.Inverse{Distance: inv.Distance, Azimuth1: inv.Azimuth1, Azimuth2: inv.Azimuth2}}
	for _, q := range [...]struct {
		ll s2.LatLng
		g  *reduce.GridPoint
	}{{a, &c.GridA}, {mid, &c.GridMid}, {b, &c.GridB}} {
		gp, err := p.Forward(q.ll)
		require.NoError(t, err)
		*q.g = reduce.GridPoint(gp)
	}
	return c
}

func simulate(t *testing.T, g *geodesic.Geodesic, p *geodesic.Projector, a s2.LatLng, az s1.Angle, dist, hA, hB float64) geoLine {
	b, _, err := g.Direct(a, az, dist)
	require.NoError(t, err)
	inv, err := g.Inverse(a, b)
	require.NoError(t, err)
	ga, err := p.Forward(a)
	require.NoError(t, err)
	gb, err := p.Forward(b)
	require.NoError(t, err)
	xa, err := p.ToGeocentric(a, hA)
	require.NoError(t, err)
	xb, err := p.ToGeocentric(b, hB)
	require.NoError(t, err)
	d := xb.Sub(xa)
	up := r3.Vector{
		X: math.Cos(float64(a.Lat)) * math.Cos(float64(a.Lng)),
		Y: math.Cos(float64(a.Lat)) * math.Sin(float64(a.Lng)),
		Z: math.Sin(float64(a.Lat)),
	}
	return geoLine{
		a: a, b: b, hA: hA, hB: hB, inverse: inv, gridA: ga, gridB: gb,
		chord:  d.Norm(),
		zenith: s1.Angle(math.Atan2(d.Cross(up).Norm(), d.Dot(up))),
	}
}

// Round trip through real CRSs (issue 3): random lines of 1 m to 30 km with
// the instrument axis and reflector from −100 m to 4000 m above the
// ellipsoid; their true 3-D chord (geodetic → geocentric in PROJ) and
// zenith angle are run backwards through the chain with a known atmosphere
// and k to raw distances, then reduced again and compared with the geodesic
// (PROJ's Karney inverse) and with the distance between the projected
// control points.
func TestRoundTripThroughCRSs(t *testing.T) {
	rng := reduce.NewRand(t)
	job := reduce.DemoJob(t)
	for _, c := range roundTripCRSs {
		crs, err := geodesic.OpenCRS(c.definition)
		require.NoErrorf(t, err, "%s", c.name)
		proj, err := crs.NewProjector()
		require.NoErrorf(t, err, "%s", c.name)
		defer proj.Close()
		ell := crs.Ellipsoid()
		geod, err := geodesic.NewGeodesic(ell)
		require.NoErrorf(t, err, "%s", c.name)

		var worstHeights, worstZenith, worstGrid, worstTarget float64
		for i := 0; i < 1000; i++ {
			a := s2.LatLngFromDegrees(c.latMin+rng.Float64()*(c.latMax-c.latMin), c.lngMin+rng.Float64()*(c.lngMax-c.lngMin))
			dist := math.Pow(30000, rng.Float64()) // 1 m to 30 km, log-uniform
			hA := -100 + rng.Float64()*4100
			hB := -100 + rng.Float64()*4100
			if math.Abs(hB-hA) > 0.9*dist+1e-3 { // keep the sight physically possible for a level
				hB = hA + (hB-hA)*0.9*dist/math.Abs(hB-hA)
			}
			l := simulate(t, geod, proj, a, s1.Angle(rng.Float64()*2*math.Pi), dist, hA, hB)

			line, err := reduce.NewLine(controlOf(t, geod, proj, l.a, l.b), ell, proj)
			require.NoErrorf(t, err, "%s line %d", c.name, i)

			const hi, ht = 1.55, 1.80
			markA, err := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, hA-hi, reduce.Separation{})
			require.NoError(t, err)
			markB, err := reduce.HeightFromEllipsoidal(reduce.DatumEllipsoid, hB-ht, reduce.Separation{})
			require.NoError(t, err)
			obs := reduce.Observation{
				InstrumentHeight: hi, TargetHeight: ht, PrismConstant: -30 * mm,
				Meteorology: reduce.Meteorology{
					Instrument:     reduce.Atmosphere{TemperatureC: 18, PressureHPa: 1013.25 - hA/8.5, HumidityPct: 55},
					Target:         reduce.Atmosphere{TemperatureC: 17.5, PressureHPa: 1013.25 - hB/8.5, HumidityPct: 60},
					HaveInstrument: true, HaveTarget: true,
				},
			}
			// the observed zenith angle: geometric less the refraction angle
			// of the ray model reduce uses (RefractionAngle), ζ at the chord's
			// midpoint
			psi := l.inverse.Distance / line.Radius
			delta, err := reduce.RefractionAngle(l.chord, l.zenith-s1.Angle(psi/2), job.K, line.Radius)
			require.NoError(t, err)
			obs.Zenith = l.zenith - delta
			obs.SlopeDistance = reduce.Unreduce(t, l.chord, obs, job, line.Radius)

			r, err := reduce.Reduce(obs, job, line, markA, markB)
			require.NoErrorf(t, err, "%s line %d", c.name, i)
			rz, err := reduce.Reduce(obs, job, line, markA, reduce.MarkHeight{})
			require.NoErrorf(t, err, "%s line %d", c.name, i)

			worstHeights = math.Max(worstHeights, math.Abs(r.EllipsoidResidual.Residual))
			worstGrid = math.Max(worstGrid, math.Abs(r.GridResidual.Residual))
			worstZenith = math.Max(worstZenith, math.Abs(rz.EllipsoidResidual.Residual))
			worstTarget = math.Max(worstTarget, math.Abs(rz.Heights.HeightB-hB))
		}
		t.Logf("%s: worst |residual| heights route %.4f mm, grid %.4f mm, zenith route %.4f mm, target height %.4f mm",
			c.name, worstHeights/mm, worstGrid/mm, worstZenith/mm, worstTarget/mm)
		assert.Lessf(t, worstHeights, 0.01*mm, "%s: heights route against the geodesic (m)", c.name)
		assert.Lessf(t, worstGrid, 0.01*mm, "%s: grid distance against the projected control (m)", c.name)
		assert.Lessf(t, worstZenith, 0.01*mm, "%s: zenith route against the geodesic (m)", c.name)
		// the zenith route's target height is its height above the sphere
		// of R_α, not the ellipsoid: about 0.5 mm apart at 30 km
		assert.Lessf(t, worstTarget, 1*mm, "%s: zenith route target height against the ellipsoidal height (m)", c.name)
	}
}

// The curvature of a geodesic's image on the grid, from the circle through
// the projected ends and midpoint (NewLine), against Schreiber's formula
// for a conformal projection, κ = (1/k) ∂ln k/∂n with n to the right of
// the line (the image turns towards smaller k, left when k grows to the
// right), from PROJ's point scale factors 1 km either side of the line
// across its azimuth. Where κ itself nearly vanishes (by a Lambert
// conic's central parallel) it changes along the line by more than its
// midpoint value, so the circle is held against Schreiber's κ at the ends
// and the midpoint weighted as the circle weighs them: for κ = κ₀ + κ₁s +
// κ₂s²/2 along the line (s from the midpoint), the circle through s = 0,
// ±L/2 has curvature κ₀ + κ₂L²/48 (the odd term cancels), which is
// (κA + 10 κM + κB)/12 (derived here). Random lines of 1 to 30 km in each CRS; the two agree to 0.1 %
// of the scale's gradient (the central differences and the circle both
// approximate a slowly changing κ), beyond what the geodesic's 15 nm can
// move the circle.
func TestGridCurvatureAgainstScaleFactors(t *testing.T) {
	rng := reduce.NewRand(t)
	const step = 1000.0 // m
	for _, c := range roundTripCRSs {
		proj, ell, geod := openRoundTripCRS(t, c)
		// schreiber is κ at p for a line in azimuth az, and the size of
		// the scale's gradient there.
		schreiber := func(p s2.LatLng, az s1.Angle) (kappa, gradient float64) {
			at := func(az s1.Angle) float64 { // k a step from p in azimuth az
				q, _, err := geod.Direct(p, az, step)
				require.NoError(t, err)
				k, err := proj.PointScaleFactor(q)
				require.NoError(t, err)
				return k
			}
			k, err := proj.PointScaleFactor(p)
			require.NoError(t, err)
			kl, kr, kf := at(az-math.Pi/2), at(az+math.Pi/2), at(az)
			kappa = math.Log(kr/kl) / (2 * step) / k
			return kappa, math.Hypot(kappa, math.Log(kf/k)/step/k)
		}
		var worst float64
		for i := 0; i < 300; i++ {
			a := s2.LatLngFromDegrees(c.latMin+rng.Float64()*(c.latMax-c.latMin), c.lngMin+rng.Float64()*(c.lngMax-c.lngMin))
			dist := 1000 * math.Pow(30, rng.Float64())
			b, _, err := geod.Direct(a, s1.Angle(rng.Float64()*2*math.Pi), dist)
			require.NoError(t, err)
			ctl := controlOf(t, geod, proj, a, b)
			line, err := reduce.NewLine(ctl, ell, proj)
			require.NoError(t, err)

			ab, err := geod.Inverse(a, b)
			require.NoError(t, err)
			along, err := geod.Inverse(ctl.Mid, b)
			require.NoError(t, err)
			ka, ga := schreiber(a, ab.Azimuth1)
			km, gm := schreiber(ctl.Mid, along.Azimuth1)
			kb, gb := schreiber(b, ab.Azimuth2)
			want := (ka + 10*km + kb) / 12
			gradient := math.Max(gm, math.Max(ga, gb))
			require.Greaterf(t, gradient, 0.0, "%s line %d: a scale that does not change", c.name, i)
			// The circle through points known to δ resolves κ to 8δ/L²
			// (its sagitta is κ L²/8); δ = 15 nm, the accuracy of
			// Karney's geodesic routines that place the midpoint
			// (Karney, "Algorithms for geodesics", J. Geodesy 2013
			// [memory]). On a short line where κ nearly vanishes, that is
			// the bound.
			noise := 8 * 15e-9 / (dist * dist)
			d := math.Max(0, math.Abs(line.Scale.Curvature-want)-noise) / gradient
			worst = math.Max(worst, d)
			assert.Lessf(t, d, 1e-3, "%s line %d (%.0f m): curvature %.6g, Schreiber %.6g 1/m", c.name, i, dist, line.Scale.Curvature, want)
		}
		t.Logf("%s: worst difference %.2g of the scale's gradient", c.name, worst)
	}
}
