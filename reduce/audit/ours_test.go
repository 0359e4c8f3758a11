package audit

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// testOurs is our reduction of testLine's raw observations, 1.2 mm longer
// than the control on the ellipsoid (their noise), at +18.4 ppm and with
// a −30 mm prism constant.
func testOurs() Ours {
	l := testLine()
	l.Ellipsoid += 1.2 * mm
	l.Grid = l.Ellipsoid * l.LineScale
	return Ours{Count: 4, Raw: 2000.3, Slope: 2000.33, Line: l, PPM: 18.4, PrismConstant: -30 * mm}
}

// TestCompareRawStages injects each usual error into a value reduced
// from the same observations as ours and wants it named with its stage,
// from our stage values; the clean value agrees undiagnosed.
func TestCompareRawStages(t *testing.T) {
	o := testOurs()
	s := testSettings()
	l := o.Line
	sd, g := l.Ellipsoid, l.Grid
	// G and L by hand from our values: s (R + 310)/R, s (R + 47)/R.
	G := sd * (6380000 + 310) / 6380000
	L := sd * (6380000 + 47) / 6380000
	for _, tc := range []struct {
		name         string
		d            Distance
		stage, cause string
	}{
		{"clean", Distance{Kind: Grid, Value: g + 0.4*mm, Sigma: 2 * mm}, "", ""},
		{"ppm twice, none stated", Distance{Kind: Ellipsoid, Value: sd * (1 + 18.4*ppm), Sigma: 2 * mm}, StageAtmosphere, "ppm applied twice (+18.4 ppm)"},
		{"ppm twice, stated", Distance{Kind: Ellipsoid, Value: sd * (1 + 12*ppm), Sigma: 2 * mm, AppliedPPM: 12, HasAppliedPPM: true}, StageAtmosphere, "ppm applied twice (+12 ppm)"},
		{"prism twice", Distance{Kind: Ground, Value: G - 30*mm*G/sd, Sigma: 2 * mm}, StageInstrument, "prism constant applied twice (-30 mm)"},
		{"scale twice", Distance{Kind: Grid, Value: g * l.LineScale, Sigma: 2 * mm}, StageScale, "scale factor applied twice"},
		{"elevation left out", Distance{Kind: Grid, Value: G * l.LineScale, Sigma: 2 * mm}, StageElevation, "elevation factor left out"},
		{"sea level as ellipsoid", Distance{Kind: Ellipsoid, Value: L, Sigma: 2 * mm}, StageHeights, "a sea-level distance delivered as ellipsoidal (geoid separation ignored)"},
		{"grid as ground", Distance{Kind: Ground, Value: g, Sigma: 2 * mm}, StageKind, "grid and ground swapped (a grid distance delivered as ground)"},
		{"blunder", Distance{Kind: Grid, Value: g - 14*mm, Sigma: 2 * mm}, "", NoKnownCause},
	} {
		got, err := CompareRaw(tc.d, o, s)
		require.NoError(t, err, tc.name)
		assert.Equal(t, tc.cause, got.Diagnosis.Cause, "%s: %v", tc.name, got.Diagnosis.Tested)
		assert.Equal(t, tc.stage, got.Diagnosis.Stage, tc.name)
		assert.Equal(t, tc.cause == "", got.Pass, "%s: pass", tc.name)
	}
}

// TestCompareRawNumbers: our value of each stage and the difference.
func TestCompareRawNumbers(t *testing.T) {
	o := testOurs()
	got, err := CompareRaw(Distance{Kind: Ground, Value: 2000.1000, Sigma: 2 * mm}, o, testSettings())
	require.NoError(t, err)
	// 2000.0012 · (6 380 000 + 310)/6 380 000 = 2000.0983787...
	want := 2000.0012 * 6380310 / 6380000
	assert.InDelta(t, want, got.Ours, 1e-9, "our ground distance, m")
	assert.InDelta(t, want, got.Horizontal, 1e-9)
	assert.InDelta(t, 2000.0012*6380047/6380000, got.SeaLevel, 1e-9, "m")
	assert.InDelta(t, 2000.0012, got.Ellipsoid, 1e-9)
	assert.InDelta(t, 2000.0012*0.99962, got.Grid, 1e-9)
	assert.Equal(t, 2000.33, got.Slope)
	assert.InDelta(t, 2000.1-want, got.Difference, 1e-9)
	assert.InDelta(t, (2000.1-want)/(2*mm), got.W, 1e-6, "σ is the stated one")
	assert.InDelta(t, 5*mm+2*ppm*want, got.Tolerance, 1e-12)

	// Without N the sea-level stage is unknown, and a sea-level value
	// cannot be compared.
	o.Line.HasSeparation = false
	got, err = CompareRaw(Distance{Kind: Grid, Value: 1999.3, Sigma: 2 * mm}, o, testSettings())
	require.NoError(t, err)
	assert.True(t, math.IsNaN(got.SeaLevel))
	_, err = CompareRaw(Distance{Kind: SeaLevel, Value: 2000, Sigma: 2 * mm}, o, testSettings())
	assert.ErrorIs(t, err, ErrNeedsSeparation)
	_, err = CompareRaw(Distance{Kind: Grid, Value: 1999.3, Sigma: 2 * mm}, Ours{}, testSettings())
	assert.Error(t, err, "no observation")
}

// BenchmarkCompareRaw: a delivered distance beside our reduction, with
// the signatures tested (a ppm applied twice).
func BenchmarkCompareRaw(b *testing.B) {
	o := testOurs()
	s := testSettings()
	d := Distance{Kind: Ellipsoid, Value: o.Line.Ellipsoid * (1 + 18.4*ppm), Sigma: 2 * mm}
	for b.Loop() {
		if _, err := CompareRaw(d, o, s); err != nil {
			b.Fatal(err)
		}
	}
}
