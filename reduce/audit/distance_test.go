package audit

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/reduce"
)

const (
	mm  = 1e-3
	ppm = 1e-6
)

// testLine is an invented line: a 2 km geodesic at 300 and 320 m
// ellipsoidal height, N = 47 m, on a grid with line scale 0.99962 (a UTM
// line near the central meridian), R_α 6 380 000 m.
func testLine() LineControl {
	return LineControl{Ellipsoid: 2000, Grid: 2000 * 0.99962, LineScale: 0.99962, Radius: 6380000,
		HeightA: 300, HeightB: 320, HasHeights: true, SeparationA: 47, SeparationB: 47, HasSeparation: true}
}

func testSettings() Settings {
	return Settings{Tolerance: reduce.DistanceSpec{Constant: 5 * mm, PPM: 2, Rule: reduce.Linear, Level: reduce.Percent95},
		ToleranceText: "5 mm + 2 ppm, linear, 95 %", Critical: reduce.DefaultCriticalValue}
}

// TestReference: the control distance of each kind, computed by hand.
func TestReference(t *testing.T) {
	c := testLine()
	for _, tc := range []struct {
		k    Kind
		want float64
	}{
		{Ellipsoid, 2000},
		{Grid, 1999.24},
		// 2000 · (6 380 000 + 310)/6 380 000 = 2000 + 620 000/6 380 000 = 2000.0971786834
		{Ground, 2000.0971786834},
		// 2000 + 2000 · 47/6 380 000 = 2000.0147335423
		{SeaLevel, 2000.0147335423},
	} {
		got, err := c.Reference(tc.k)
		require.NoError(t, err)
		assert.InDeltaf(t, tc.want, got, 1e-9, "%v, m", tc.k)
	}
	// The same ground distance as the reduction chain's (one definition).
	gr, err := reduce.GridDistance(2000, reduce.ScaleFactors{A: 0.99962, Mid: 0.99962, B: 0.99962}, 310, 6380000)
	require.NoError(t, err)
	ground, _ := c.Reference(Ground)
	assert.InDelta(t, gr.GroundDistance, ground, 1e-9, "m")
	c.HasHeights, c.HasSeparation = false, false
	_, err = c.Reference(Ground)
	assert.ErrorIs(t, err, ErrNeedsHeights)
	_, err = c.Reference(SeaLevel)
	assert.ErrorIs(t, err, ErrNeedsSeparation)
}

// TestDiagnoseDistance injects each usual error into a delivered value
// and wants it caught and named alone; a clean value passes undiagnosed.
func TestDiagnoseDistance(t *testing.T) {
	c := testLine()
	s := testSettings()
	g, sd, G, L := c.Grid, c.Ellipsoid, 2000.0971786834, 2000.0147335423
	for _, tc := range []struct {
		name  string
		d     Distance
		cause string
	}{
		{"clean grid", Distance{Kind: Grid, Value: g + 1*mm, Sigma: 3 * mm}, ""},
		{"scale twice", Distance{Kind: Grid, Value: g * 0.99962, Sigma: 3 * mm}, "scale factor applied twice"},
		{"scale not applied", Distance{Kind: Grid, Value: sd, Sigma: 3 * mm}, "scale factor not applied (an ellipsoid distance delivered as grid)"},
		{"elevation left out", Distance{Kind: Grid, Value: G * 0.99962, Sigma: 3 * mm}, "elevation factor left out"},
		// N ignored: the slope reduced with H = h − N, i.e. to the geoid, then scaled.
		{"geoid ignored on grid", Distance{Kind: Grid, Value: L * 0.99962, Sigma: 3 * mm}, "geoid separation ignored (orthometric heights taken as ellipsoidal)"},
		{"ground as grid", Distance{Kind: Grid, Value: G, Sigma: 3 * mm}, "grid and ground swapped (a ground distance delivered as grid)"},
		{"ppm twice", Distance{Kind: Grid, Value: g * (1 + 25*ppm), Sigma: 3 * mm, AppliedPPM: 25, HasAppliedPPM: true}, "ppm applied twice (+25 ppm)"},
		{"prism twice", Distance{Kind: Ellipsoid, Value: sd - 30*mm, Sigma: 3 * mm, PrismConstant: -30 * mm, HasPrismConstant: true}, "prism constant applied twice (-30 mm)"},
		{"sea level as ellipsoid", Distance{Kind: Ellipsoid, Value: L, Sigma: 3 * mm}, "a sea-level distance delivered as ellipsoidal (geoid separation ignored)"},
		{"grid as ground", Distance{Kind: Ground, Value: g, Sigma: 3 * mm}, "grid and ground swapped (a grid distance delivered as ground)"},
		{"ellipsoid as sea level", Distance{Kind: SeaLevel, Value: sd, Sigma: 3 * mm}, "an ellipsoidal distance delivered as sea level (geoid separation ignored)"},
		{"blunder", Distance{Kind: Grid, Value: g + 40*mm, Sigma: 3 * mm}, NoKnownCause},
	} {
		got, err := CheckDistance(tc.d, c, s)
		require.NoError(t, err, tc.name)
		assert.Equal(t, tc.cause, got.Diagnosis.Cause, tc.name)
		assert.Equal(t, tc.cause == "", got.Pass, "%s: pass", tc.name)
	}
}

// TestCheckDistanceNumbers: residual, ppm, σ, w, tolerance and margin.
func TestCheckDistanceNumbers(t *testing.T) {
	s := testSettings()
	s.ControlSigma = 4 * mm
	got, err := CheckDistance(Distance{Kind: Ellipsoid, Value: 2000.006, Sigma: 3 * mm}, testLine(), s)
	require.NoError(t, err)
	assert.InDelta(t, 6*mm, got.Residual, 1e-9)
	assert.InDelta(t, 3, got.PPM, 1e-6)           // 6 mm / 2 km
	assert.InDelta(t, 5*mm, got.Sigma, 1e-15)     // sqrt(3² + 4²)
	assert.InDelta(t, 1.2, got.W, 1e-6)           // 6/5
	assert.InDelta(t, 9*mm, got.Tolerance, 1e-12) // 5 mm + 2 ppm · 2 km, linear
	assert.InDelta(t, 3*mm, got.Margin, 1e-9)     // 9 − 6
	assert.True(t, got.Pass)
	assert.True(t, math.IsNaN(got.ImpliedHeight))
	// A grid distance with the elevation factor taken at 0 m: the
	// implied height is 0 (delivered = g (R + h_m)/R).
	c := testLine()
	got, err = CheckDistance(Distance{Kind: Grid, Value: c.Grid * (c.Radius + 310) / c.Radius, Sigma: 3 * mm}, c, s)
	require.NoError(t, err)
	assert.InDelta(t, 0, got.ImpliedHeight, 1e-6, "m")
}

// TestDiagnoseTie: two signatures that predict the same difference are
// both named.
func TestDiagnoseTie(t *testing.T) {
	d := Diagnose(10*mm, 2*mm, 3.29, []Signature{{"a", StageScale, 10 * mm}, {"b", StageKind, 11 * mm}, {"c", StageScale, -10 * mm}})
	assert.Equal(t, "a or b", d.Cause)
	assert.Equal(t, []string{"a", "b"}, d.Fitting)
	assert.Equal(t, StageScale+" or "+StageKind, d.Stage, "the stages of the ties")
	// A signature too small to tell from no error explains nothing.
	d = Diagnose(1*mm, 2*mm, 3.29, []Signature{{"tiny", StageScale, 1 * mm}})
	assert.Equal(t, NoKnownCause, d.Cause)
}
