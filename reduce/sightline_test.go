package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

const (
	statuteMile = 1609.344 // m (international mile, 5280 international feet)
	inch        = 0.0254   // m
	km          = 1000.0
)

// Horizon distance sqrt(2Rh) [common practice; REFERENCES.md §7]: an eye
// 1.83 m (6 ft) up sees the horizon at about 4.83 km, with R = 6371 km and
// no refraction; with refraction sqrt(2Rh/(1 − k)).
func TestHorizonDistanceRuleOfThumb(t *testing.T) {
	d, err := HorizonDistance(1.83, meanRadius, 0)
	require.NoError(t, err)
	assert.InDelta(t, 4.83*km, d, 0.005*km, "horizon of a 1.83 m eye, k = 0 (m)")
	assert.InDelta(t, HorizonDistanceApprox(1.83, meanRadius, 0), d, 1*mm, "exact against sqrt(2Rh) at 4.8 km (m)")
	for _, k := range []float64{-0.5, 0.13, 0.14, 0.5, 0.9} {
		d, err := HorizonDistance(1.83, meanRadius, k)
		require.NoError(t, err)
		want := math.Sqrt(2 * meanRadius * 1.83 / (1 - k))
		// the rule is short by about d·h/3R (1e-7 of d here)
		assert.InDeltaf(t, want, d, 2e-7*d, "horizon with k = %g: sqrt(2Rh/(1 − k)) (m)", k)
	}
	// k = 0.13 lengthens the horizon by 1/sqrt(0.87) − 1 = 7.2 %
	d13, _ := HorizonDistance(1.83, meanRadius, 0.13)
	assert.InDelta(t, 1/math.Sqrt(0.87), d13/d, 1e-6, "ratio of the horizons with and without refraction")
}

// Curvature drop L²/2R [common practice; REFERENCES.md §7]: 0.0785 m per
// km², 8.0 inches per statute mile²; with refraction (1 − k)L²/2R,
// 0.0675 m per km² at k = 0.14 and 0.0683 at k = 0.13.
func TestCurvatureDropRuleOfThumb(t *testing.T) {
	for _, tc := range []struct {
		arc, k, want, tol float64
		unit              string
	}{
		{1 * km, 0, 0.0785, 0.00005, "m per km²"},
		{1 * km, 0.14, 0.0675, 0.00005, "m per km²"},
		{1 * km, 0.13, 0.0683, 0.00005, "m per km²"},
		{statuteMile, 0, 8.0 * inch, 0.05 * inch, "per statute mile²"},
	} {
		got, err := GrazingRayHeight(tc.arc, meanRadius, tc.k)
		require.NoError(t, err)
		assert.InDeltaf(t, tc.want, got, tc.tol, "drop at %g m, k = %g (%s)", tc.arc, tc.k, tc.unit)
		assert.InDeltaf(t, CurvatureDropApprox(tc.arc, meanRadius, tc.k), got, 1e-7, "exact against (1 − k)L²/2R at %g m (m)", tc.arc)
	}
	// quadratic in L: 10 km drops 100 times as far as 1 km, to 1e-5
	d1, _ := GrazingRayHeight(1*km, meanRadius, 0.13)
	d10, _ := GrazingRayHeight(10*km, meanRadius, 0.13)
	assert.InDelta(t, 100, d10/d1, 1e-3, "drop at 10 km over drop at 1 km")
}

// Textbook forms of the rule [memory]: Wolf & Ghilani, Elementary
// Surveying (Pearson, several editions), the combined curvature and
// refraction correction h_cr = 0.0675 K² m with K in km, 0.0206 M² ft with
// M in thousands of feet, and 0.574 F² ft with F in miles (k ≈ 0.14).
func TestCurvatureAndRefractionTextbookForms(t *testing.T) {
	const ft = 0.3048
	for _, tc := range []struct {
		name      string
		arc, want float64
	}{
		{"0.0675 K², K = 2.5 km", 2.5 * km, 0.0675 * 2.5 * 2.5},
		{"0.0206 M², M = 5 (5000 ft)", 5000 * ft, 0.0206 * 25 * ft},
		{"0.574 F², F = 3 mi", 3 * statuteMile, 0.574 * 9 * ft},
	} {
		got, err := GrazingRayHeight(tc.arc, meanRadius, 0.14)
		require.NoError(t, err)
		// the books round their coefficients to three figures
		assert.InDeltaf(t, tc.want, got, 0.002*tc.want, "%s (m)", tc.name)
	}
}

// exactHiddenHeight is the hidden height by plane geometry with no
// refraction, independent of the code under test: the eye E at R + h on
// the y axis, the tangent point T at the angle acos(R/(R + h)), the
// tangent line through E and T, and its crossing with the normal at the
// angle L/R, less R.
func exactHiddenHeight(h, arc, r float64) float64 {
	ex, ey := 0.0, r+h
	phi := math.Acos(r / (r + h))
	tx, ty := r*math.Sin(phi), r*math.Cos(phi)
	dx, dy := tx-ex, ty-ey
	ux, uy := math.Sin(arc/r), math.Cos(arc/r)
	// E + a·d = b·u, solved by Cramer's rule for b
	det := dx*(-uy) - dy*(-ux)
	b := (dx*(-ey) - dy*(-ex)) / det
	return b - r
}

// Hidden height of a target at L, beyond the eye's horizon, (L − sqrt(2Rh₁))²/2R [common
// practice; REFERENCES.md §7], checked against exact circle geometry
// (exactHiddenHeight) and the exact function; with refraction the rule
// takes the effective radius R/(1 − k).
func TestHiddenHeight(t *testing.T) {
	for _, tc := range []struct{ h, arc float64 }{
		{1.83, 10 * km}, {1.83, 30 * km}, {10, 50 * km}, {100, 80 * km}, {2, 4 * km},
	} {
		got, err := HiddenHeight(tc.h, tc.arc, meanRadius, 0)
		require.NoError(t, err)
		approx := HiddenHeightApprox(tc.h, tc.arc, meanRadius, 0)
		if tc.arc < HorizonDistanceApprox(tc.h, meanRadius, 0) {
			assert.Zerof(t, got, "target within the horizon of %g m at %g m", tc.h, tc.arc)
			continue
		}
		assert.InDeltaf(t, exactHiddenHeight(tc.h, tc.arc, meanRadius), got, 1e-6, "exact hidden height, eye %g m, %g m away (m)", tc.h, tc.arc)
		// the rule is good to about h_hidden·(L/R)·…: a millimetre at 30 km
		assert.InDeltaf(t, approx, got, 1e-4*got+1*mm, "rule against exact, eye %g m, %g m away (m)", tc.h, tc.arc)
	}
	// a worked number: eye 1.83 m, target 10 km away: the horizon at
	// 4.829 km, 5.171 km beyond it hides (5171)²/2R = 2.10 m
	got, _ := HiddenHeight(1.83, 10*km, meanRadius, 0)
	assert.InDelta(t, 2.10, got, 0.005, "hidden height 10 km from a 1.83 m eye (m)")

	for _, k := range []float64{0.13, -0.2, 0.5} {
		got, err := HiddenHeight(5, 40*km, meanRadius, k)
		require.NoError(t, err)
		assert.InDeltaf(t, HiddenHeightApprox(5, 40*km, meanRadius, k), got, 2*mm, "hidden height with k = %g against the effective radius rule (m)", k)
	}
}

// The grazing ray is one circle: a sightline from an eye to a target of
// exactly the hidden height just touches the surface at the eye's horizon.
func TestSightlineTouchesAtHorizon(t *testing.T) {
	for _, k := range []float64{0, 0.13, -0.3, 0.7} {
		const h, arc = 20.0, 40 * km
		hidden, err := HiddenHeight(h, arc, meanRadius, k)
		require.NoError(t, err)
		s, err := NewSightline(arc, h, hidden, meanRadius, k)
		require.NoError(t, err)
		x, c, err := s.Lowest()
		require.NoError(t, err)
		d, _ := HorizonDistance(h, meanRadius, k)
		assert.InDeltaf(t, 0, c, 0.1*mm, "k = %g: lowest clearance of the grazing ray (m)", k)
		assert.InDeltaf(t, d, x, 10, "k = %g: where the grazing ray is lowest (m)", k)
		// and the ends are the eye and the target
		ca, _ := s.Clearance(0)
		cb, _ := s.Clearance(arc)
		assert.InDelta(t, h, ca, 1e-6, "clearance at A (m)")
		assert.InDelta(t, hidden, cb, 1e-6, "clearance at B (m)")
	}
}

// Between the ends the clearance follows the parabola of the rule,
// hA + (hB − hA) x/L − (1 − k) x(L − x)/2R, to first order; refraction
// lifts the ray by k x(L − x)/2R.
func TestSightlineClearanceParabola(t *testing.T) {
	const arc, ha, hb = 20 * km, 30.0, 45.0
	for _, k := range []float64{0, 0.13, -0.2} {
		s, err := NewSightline(arc, ha, hb, meanRadius, k)
		require.NoError(t, err)
		for _, x := range []float64{0, 1 * km, 5 * km, 10 * km, 17.5 * km, arc} {
			got, err := s.Clearance(x)
			require.NoError(t, err)
			want := ha + (hb-ha)*x/arc - (1-k)*x*(arc-x)/(2*meanRadius)
			assert.InDeltaf(t, want, got, 2*mm, "k = %g, x = %g: clearance against the parabola (m)", k, x)
		}
		x, c, err := s.Lowest()
		require.NoError(t, err)
		// the parabola's vertex
		a := (1 - k) / (2 * meanRadius)
		xv := (arc*a - (hb-ha)/arc) / (2 * a)
		assert.InDeltaf(t, xv, x, 5, "k = %g: lowest point (m)", k)
		want := ha + (hb-ha)*xv/arc - a*xv*(arc-xv)
		assert.InDeltaf(t, want, c, 2*mm, "k = %g: lowest clearance (m)", k)
	}
}

func TestSightlineProfile(t *testing.T) {
	s, err := NewSightline(20*km, 30, 30, meanRadius, 0.13)
	require.NoError(t, err)
	mid, _ := s.Clearance(10 * km)
	pts, err := s.ProfileClearance([]ProfilePoint{{15 * km, 0}, {10 * km, mid - 1}, {2 * km, 3}}, 2)
	require.NoError(t, err)
	require.Len(t, pts, 3)
	assert.Equal(t, 2*km, pts[0].Distance, "sorted by distance")
	assert.InDelta(t, 1, pts[1].Clearance, 1e-9, "clearance over the obstacle (m)")
	assert.True(t, pts[1].Below, "1 m clearance is under the 2 m asked for")
	assert.False(t, pts[0].Below)

	_, err = s.ProfileClearance([]ProfilePoint{{25 * km, 0}}, 2)
	var ie *InputError
	assert.True(t, errors.As(err, &ie), "a profile point beyond B")
}

func TestSightlineSummary(t *testing.T) {
	// a 1.83 m eye and a 2 m target 10 km apart on flat ground: the eye's
	// horizon is 4.83 km away and the earth hides 2.10 m, so all the target
	// is hidden and the ray passes under the surface
	s, err := NewSightline(10*km, 1.83, 2, meanRadius, 0)
	require.NoError(t, err)
	r, err := s.Summarize()
	require.NoError(t, err)
	assert.False(t, r.AboveSurface)
	assert.InDelta(t, 4.83*km, r.HorizonA, 5, "horizon of A (m)")
	assert.InDelta(t, 2.10, r.HiddenAtB, 0.005, "hidden (m)")
	assert.Less(t, r.Visible, 0.0)
	assert.Less(t, r.LowestClearance, 0.0)
}

// Bad input is an *InputError, never NaN or a panic.
func TestSightlineRejects(t *testing.T) {
	var ie *InputError
	for name, err := range map[string]error{
		"NaN arc":      func() error { _, err := NewSightline(math.NaN(), 1, 1, meanRadius, 0.13); return err }(),
		"k of 1":       func() error { _, err := HorizonDistance(2, meanRadius, 1); return err }(),
		"negative eye": func() error { _, err := HorizonDistance(-2, meanRadius, 0); return err }(),
		"zero radius":  func() error { _, err := NewSightline(1000, 1, 1, 0, 0.13); return err }(),
		"x beyond B": func() error {
			s, _ := NewSightline(1000, 1, 1, meanRadius, 0.13)
			_, err := s.Clearance(1001)
			return err
		}(),
		"zero sightline": func() error { _, err := Sightline{Arc: 10}.Clearance(5); return err }(),
		"Inf height":     func() error { _, err := NewSightline(1000, math.Inf(1), 1, meanRadius, 0.13); return err }(),
		"far grazing":    func() error { _, err := GrazingRayHeight(3e7, meanRadius, 0); return err }(),
	} {
		assert.Truef(t, errors.As(err, &ie), "%s: want *InputError, got %v", name, err)
	}
}

// The verdict weighs the surface and every profile point by one rule:
// the line clears only if the ray keeps the minimum clearance over all of
// them. The ray's height over a point is checked against the rule of
// thumb hA + (hB − hA)x/L − (1 − k)x(L − x)/2R (common practice;
// REFERENCES.md §7, (1 − k)L²/2R), good to a millimetre or two here.
func TestSightlineCheck(t *testing.T) {
	const arc, ha, hb, k = 16 * km, 15.0, 15.0, 0.13
	s, err := NewSightline(arc, ha, hb, meanRadius, k)
	require.NoError(t, err)
	rule := func(x float64) float64 { return ha + (hb-ha)*x/arc - (1-k)*x*(arc-x)/(2*meanRadius) }
	// the middle: 15 − 0.87·8000²/2R = 15 − 4.3698 = 10.6302 m up
	require.InDelta(t, 10.6302, rule(8*km), 1e-4, "rule at the middle (m)")

	pts := []ProfilePoint{{14 * km, 3}, {2 * km, 4}, {5 * km, 9}, {8 * km, 14}, {11 * km, 9}}
	for _, tc := range []struct {
		name                        string
		pts                         []ProfilePoint
		min                         float64
		clear, surfaceFails         bool
		failing, blocking, worstIdx int
	}{
		{"surface alone, no minimum", nil, 0, true, false, 0, 0, -1},
		// lowest clearance 10.63 m over the surface, under 12 m
		{"surface alone, 12 m minimum", nil, 12, false, true, 0, 0, -1},
		// clearances 9.09, 2.24, −3.37, 2.24, 10.09 m: the middle point
		// stands 3.37 m above the ray
		{"profile, no minimum", pts, 0, false, false, 1, 1, 2},
		{"profile, 2 m minimum", pts, 2, false, false, 1, 1, 2},
		{"profile, 2.5 m minimum", pts, 2.5, false, false, 3, 1, 2},
		{"profile without the obstacle, 2 m", []ProfilePoint{pts[0], pts[1], pts[2], pts[4]}, 2, true, false, 0, 0, 1},
	} {
		c, err := s.Check(tc.pts, tc.min)
		require.NoError(t, err, tc.name)
		assert.Equal(t, tc.clear, c.Clear(), tc.name)
		assert.Equal(t, tc.surfaceFails, c.SurfaceFails, tc.name)
		assert.Equal(t, tc.failing, c.Failing, tc.name)
		assert.Equal(t, tc.blocking, c.Blocking, tc.name)
		assert.Equal(t, tc.worstIdx, c.Worst, tc.name)
		assert.InDelta(t, rule(c.LowestAt), c.LowestClearance, 2*mm, "%s: lowest clearance against the rule (m)", tc.name)
		for _, p := range c.Profile {
			assert.InDeltaf(t, rule(p.Distance)-p.Height, p.Clearance, 2*mm, "%s: clearance at %g m against the rule (m)", tc.name, p.Distance)
			assert.Equal(t, p.Clearance < tc.min || p.Clearance <= 0, p.Below, "%s at %g m", tc.name, p.Distance)
		}
	}
}

// A ray that only touches an obstacle is stopped by it, and so is one
// that touches the surface: with no minimum, clearance 0 fails.
func TestFailsClearance(t *testing.T) {
	for _, tc := range []struct {
		c, min float64
		fails  bool
	}{
		{0, 0, true}, {-1, 0, true}, {1e-9, 0, false}, {1.99, 2, true}, {2, 2, false}, {-1, 2, true},
	} {
		assert.Equalf(t, tc.fails, FailsClearance(tc.c, tc.min), "clearance %g m, minimum %g m", tc.c, tc.min)
	}
	s, err := NewSightline(20*km, 30, 30, meanRadius, 0.13)
	require.NoError(t, err)
	mid, _ := s.Clearance(10 * km)
	c, err := s.Check([]ProfilePoint{{10 * km, mid}}, 0)
	require.NoError(t, err)
	assert.True(t, c.Profile[0].Blocks, "a point at the ray's height blocks it")
	assert.False(t, c.Clear())
}

func TestSightlineCheckRejects(t *testing.T) {
	s, err := NewSightline(20*km, 30, 30, meanRadius, 0.13)
	require.NoError(t, err)
	var ie *InputError
	for _, m := range []float64{-0.5, math.NaN(), math.Inf(1)} {
		_, err := s.Check(nil, m)
		assert.Truef(t, errors.As(err, &ie), "minimum clearance %g: want *InputError, got %v", m, err)
	}
	_, err = s.Check([]ProfilePoint{{25 * km, 0}}, 0)
	assert.True(t, errors.As(err, &ie), "a profile point beyond B")
}
