package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Rules of thumb of the trade (common practice; REFERENCES.md §7), checked
// through the zenith route: a sight observed horizontal (z = 90°) from an
// instrument on the surface reaches a target whose height above the
// surface is the drop of the surface below the line of sight.
func TestRulesOfThumb(t *testing.T) {
	cases := []struct {
		name  string
		slope float64 // m
		k     float64
		want  float64 // target height, m
		tol   float64 // m
	}{
		// curvature drop L²/2R: 0.0785 m per km² (common practice)
		{"curvature drop at 1 km", 1000, 0, 0.0785, 0.05 * mm},
		{"curvature drop at 3 km", 3000, 0, 9 * 0.0785, 9 * 0.05 * mm},
		// curvature and refraction (1−k)L²/2R: 0.0675 m/km² at k = 0.14,
		// 0.0683 at k = 0.13 (common practice)
		{"curvature and refraction k=0.14 at 1 km", 1000, 0.14, 0.0675, 0.05 * mm},
		{"curvature and refraction k=0.13 at 1 km", 1000, 0.13, 0.0683, 0.05 * mm},
		{"curvature and refraction k=0.13 at 2 km", 2000, 0.13, 4 * 0.0683, 4 * 0.05 * mm},
		// horizon distance sqrt(2Rh): 1.83 m eye height sees 4.83 km; with
		// refraction sqrt(2Rh/(1−k)), 5.18 km at k = 0.13 (common practice;
		// distances printed to 10 m, so heights to 2·0.0785·4.83·0.005 m)
		{"horizon of a 1.83 m eye", 4830, 0, 1.83, 4 * mm},
		{"horizon of a 1.83 m eye with k=0.13", 5180, 0.13, 1.83, 4 * mm},
	}
	for _, c := range cases {
		g, err := EllipsoidDistanceFromZenith(c.slope, 90*s1.Degree, 0, c.k, meanRadius)
		require.NoErrorf(t, err, "%s", c.name)
		assert.InDeltaf(t, c.want, g.HeightB, c.tol, "%s: target height (m)", c.name)
	}
}

// Self-consistency: exact lines on a sphere (helpers_test.go) reduce back
// to their arc through both routes, and to their target height through the
// zenith route, within 0.01 mm for lines 1 m to 30 km and heights −100 m to
// 4000 m.
func TestGeometryRecoversExactSphereLines(t *testing.T) {
	rng := newRand(t)
	for i := 0; i < 20000; i++ {
		l := randomLine(rng, 1, 30000)
		S := l.slope()
		g, err := EllipsoidDistance(S, l.hA, l.hB, Section{Radius: l.R})
		require.NoErrorf(t, err, "line %+v", l)
		assert.InDeltaf(t, l.s, g.Arc, 0.01*mm, "heights route arc of %+v (m)", l)

		z, _ := l.observedZenith()
		gz, err := EllipsoidDistanceFromZenith(S, z, l.hA, l.k, l.R)
		require.NoErrorf(t, err, "line %+v", l)
		assert.InDeltaf(t, l.s, gz.Arc, 0.01*mm, "zenith route arc of %+v (m)", l)
		assert.InDeltaf(t, l.hB, gz.HeightB, 0.01*mm, "zenith route target height of %+v (m)", l)
		if t.Failed() {
			return
		}
	}
}

// REFERENCES.md §2 pitfall: S sin z' is the horizontal distance at the
// target's height. Scaling it by R/(R + h_mean) instead is wrong by
// millimetres on a 1.5 km line; this shows the size on one line, so that
// nobody "simplifies" the zenith route to it.
func TestZenithRouteHorizontalDistancePitfall(t *testing.T) {
	l := sphereLine{R: meanRadius, s: 1500, hA: 100, hB: 400, k: 0.13}
	z, _ := l.observedZenith()
	g, err := EllipsoidDistanceFromZenith(l.slope(), z, l.hA, l.k, l.R)
	require.NoError(t, err)
	assert.InDeltaf(t, l.s, g.Arc, 0.001*mm, "rigorous zenith route (m)")
	zp := float64(z + g.Refraction)
	wrong := l.slope() * math.Sin(zp) * l.R / (l.R + (l.hA+l.hB)/2)
	assert.Greaterf(t, math.Abs(wrong-l.s), 1*mm, "the mean-height shortcut should be off by over a millimetre on this line")
}

func TestEulerRadius(t *testing.T) {
	// GRS80 at 45°: M = 6 367 381.8 m, N = 6 388 838.3 m (computed from
	// a = 6 378 137, 1/f = 298.257222101 by M = a(1−e²)/W³, N = a/W;
	// Moritz 1980 tabulates the same radii).
	const m, n = 6367381.8156, 6388838.2901
	assert.InDeltaf(t, m, EulerRadius(m, n, 0), 1e-6, "R in the meridian is M (m)")
	assert.InDeltaf(t, n, EulerRadius(m, n, 90*s1.Degree), 1e-6, "R in the prime vertical is N (m)")
	assert.InDeltaf(t, EulerRadius(m, n, 30*s1.Degree), EulerRadius(m, n, 210*s1.Degree), 1e-6, "R does not depend on the sense (m)")
	// 1/R_45 = (1/M + 1/N)/2
	assert.InDeltaf(t, 2/(1/m+1/n), EulerRadius(m, n, 45*s1.Degree), 1e-6, "R at 45° azimuth is the harmonic mean (m)")
}

// Bad geometry is an *InputError naming the stage, never NaN, Inf or a
// panic.
func TestGeometryRejectsBadInput(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	heights := []struct {
		name                  string
		slope, hA, hB, radius float64
	}{
		{"slope shorter than height difference", 10, 100, 112.5, meanRadius},
		{"negative slope", -5, 0, 0, meanRadius},
		{"zero slope", 0, 0, 0, meanRadius},
		{"NaN slope", nan, 0, 0, meanRadius},
		{"Inf slope", inf, 0, 0, meanRadius},
		{"NaN height", 100, nan, 0, meanRadius},
		{"height below the centre", 100, -meanRadius, 0, meanRadius},
		{"zero radius", 100, 0, 0, 0},
		{"chord longer than the diameter", 3 * meanRadius, 0, 0, meanRadius},
	}
	for _, c := range heights {
		g, err := EllipsoidDistance(c.slope, c.hA, c.hB, Section{Radius: c.radius})
		var ie *InputError
		require.Truef(t, errors.As(err, &ie), "%s: want *InputError, got %v (%+v)", c.name, err, g)
		assert.Equalf(t, "geometry", ie.Stage, "%s", c.name)
		assert.Equalf(t, GeometryResult{}, g, "%s: no partial result", c.name)
	}
	_, err := EllipsoidDistance(10, 100, 112.5, Section{Radius: meanRadius})
	assert.EqualError(t, err, "geometry: slope distance 10 m, want at least the height difference 12.5000 m")

	zeniths := []struct {
		name     string
		slope    float64
		z        s1.Angle
		hA, k, R float64
	}{
		{"zenith 200°", 100, 200 * s1.Degree, 0, 0.13, meanRadius},
		{"zenith negative", 100, -1 * s1.Degree, 0, 0.13, meanRadius},
		{"zenith NaN", 100, s1.Angle(nan), 0, 0.13, meanRadius},
		{"k NaN", 100, 90 * s1.Degree, 0, nan, meanRadius},
		{"k absurd", 100, 90 * s1.Degree, 0, 1e6, meanRadius},
		{"slope Inf", inf, 90 * s1.Degree, 0, 0.13, meanRadius},
		{"sight through the Earth", 2 * meanRadius, 180 * s1.Degree, 0, 0, meanRadius},
		{"sight to the far side", 1.5 * meanRadius, 120 * s1.Degree, 0, 0, meanRadius},
	}
	for _, c := range zeniths {
		g, err := EllipsoidDistanceFromZenith(c.slope, c.z, c.hA, c.k, c.R)
		var ie *InputError
		require.Truef(t, errors.As(err, &ie), "%s: want *InputError, got %v (%+v)", c.name, err, g)
		assert.Equalf(t, GeometryResult{}, g, "%s: no partial result", c.name)
	}
	_, err = EllipsoidDistanceFromZenith(100, 200*s1.Degree, 0, 0.13, meanRadius)
	assert.EqualError(t, err, "geometry: zenith angle 200 deg, want a value strictly between 0 and 180 deg (face left: 0 is straight up, 180 straight down)")
}

// A zenith angle of exactly 0 or 180° (straight up or down) is no sight to
// a target beside the instrument: both are refused (issue: a zenith angle
// of 0 was reduced as if nothing were wrong). A sight 1″ off the plumb
// line is still reduced: S sin z = 50 m · 4.8481e-6 = 0.2424 mm of arc,
// and the target 50 cos(1″) ≈ 50 m above the axis.
func TestZenithRouteNearVertical(t *testing.T) {
	for _, z := range []s1.Angle{0, 180 * s1.Degree} {
		_, err := EllipsoidDistanceFromZenith(50, z, 10, 0.13, meanRadius)
		var ie *InputError
		require.Truef(t, errors.As(err, &ie), "zenith %v°: want *InputError, got %v", z.Degrees(), err)
		assert.Equal(t, "zenith angle", ie.Quantity)
	}
	g, err := EllipsoidDistanceFromZenith(50, s1.Degree/3600, 10, 0.13, meanRadius)
	require.NoError(t, err)
	assert.InDeltaf(t, 0.2424*mm, g.Arc, 0.0001*mm, "arc of a sight 1″ off the plumb line (m)")
	assert.InDeltaf(t, 60, g.HeightB, 1e-6, "top of a near-plumb line (m)")
}
