package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

var standardRed = Carrier{WavelengthUM: 0.658, ReferenceRefractivity: 278.3081}

func TestChooseAtmosphere(t *testing.T) {
	a := Atmosphere{TemperatureC: 10, PressureHPa: 1000, HumidityPct: 40}
	b := Atmosphere{TemperatureC: 20, PressureHPa: 980, HumidityPct: 60}
	def := Atmosphere{TemperatureC: 15, PressureHPa: 1013.25, HumidityPct: 50}
	got, src := ChooseAtmosphere(Meteorology{Instrument: a, Target: b, HaveInstrument: true, HaveTarget: true}, def)
	assert.Equal(t, Atmosphere{TemperatureC: 15, PressureHPa: 990, HumidityPct: 50}, got)
	assert.Equal(t, AtmosphereBothEnds, src)
	got, src = ChooseAtmosphere(Meteorology{Target: b, HaveTarget: true}, def)
	assert.Equal(t, b, got)
	assert.Equal(t, AtmosphereTargetEnd, src)
	got, src = ChooseAtmosphere(Meteorology{Instrument: a, HaveInstrument: true}, def)
	assert.Equal(t, a, got)
	assert.Equal(t, AtmosphereInstrumentEnd, src)
	got, src = ChooseAtmosphere(Meteorology{}, def)
	assert.Equal(t, def, got)
	assert.Equal(t, "job default", src.String())

}

// With both ends recorded, N_L is the mean along the line. Checked against
// the definition: temperature, pressure and humidity varying linearly from
// one end to the other, N averaged over 10 000 points along the line.
func TestFirstVelocityMeanAlongLine(t *testing.T) {
	a := Atmosphere{TemperatureC: 10, PressureHPa: 1000, HumidityPct: 40}
	b := Atmosphere{TemperatureC: 20, PressureHPa: 980, HumidityPct: 60}
	const n = 10000
	sum := 0.0
	for i := 0; i < n; i++ {
		f := (float64(i) + 0.5) / n
		r, err := AmbientGroupRefractivity(0.658, Atmosphere{
			TemperatureC: a.TemperatureC + f*(b.TemperatureC-a.TemperatureC),
			PressureHPa:  a.PressureHPa + f*(b.PressureHPa-a.PressureHPa),
			HumidityPct:  a.HumidityPct + f*(b.HumidityPct-a.HumidityPct),
		})
		require.NoError(t, err)
		sum += r.Ambient
	}
	mean := sum / n
	r, err := FirstVelocityCorrection(5000, standardRed, Meteorology{Instrument: a, Target: b, HaveInstrument: true, HaveTarget: true}, Atmosphere{})
	require.NoError(t, err)
	assert.InDeltaf(t, mean, r.Line, 1e-4, "N_L along the line (ppm)")
	ra, _ := AmbientGroupRefractivity(0.658, a)
	rb, _ := AmbientGroupRefractivity(0.658, b)
	ends := math.Abs((ra.Ambient+rb.Ambient)/2 - mean)
	mid := math.Abs(r.Refractivity.Ambient - mean)
	assert.InDeltaf(t, 0.065, ends, 0.01, "the mean of the end values alone, as the doc comment says (ppm)")
	assert.InDeltaf(t, ends/2, mid, 0.01, "N at the mean atmosphere alone is off by half that (ppm)")
}

func TestFirstVelocityCorrection(t *testing.T) {
	// At the reference atmosphere nothing changes.
	atm := Atmosphere{TemperatureC: 20, PressureHPa: 1013.25, HumidityPct: 60}
	r, err := FirstVelocityCorrection(1000, standardRed, Meteorology{}, atm)
	require.NoError(t, err)
	assert.InDeltaf(t, 0, r.PPM, 2e-4, "ppm at the reference atmosphere (N_ref printed to 1e-4)")
	assert.InDeltaf(t, 1000, r.Distance, 1e-4*mm, "distance at the reference atmosphere (m)")
	assert.Equal(t, AtmosphereJobDefault, r.Source)

	// 1 K warmer lengthens 1 km by about 0.95 mm in dry air
	// (REFERENCES.md §1 [computed]; the trade's "1 ppm per °C", common
	// practice).
	dry := Atmosphere{TemperatureC: 20, PressureHPa: 1013.25}
	dryRef, err := CarrierFromReferenceAtmosphere(0.658, dry)
	require.NoError(t, err)
	warm := dry
	warm.TemperatureC = 21
	r, err = FirstVelocityCorrection(1000, dryRef, Meteorology{Instrument: warm, HaveInstrument: true}, Atmosphere{})
	require.NoError(t, err)
	assert.InDeltaf(t, 0.95*mm, r.Correction, 0.02*mm, "1 K warmer on 1 km (m)")
	assert.InDeltaf(t, r.PPM*1e-6*1000, r.Correction, 0.001*mm, "the ppm reported is the correction on 1 km (m)")

	// Exact form vs the common linear form: they differ by about
	// S (N_ref − N_L) N_L 1e-12, 0.1 mm on 9 km at 40 ppm (REFERENCES.md §1
	// [computed]). Find the atmosphere 40 ppm from the reference.
	high := atm
	high.PressureHPa = 1013.25 - 40/0.28 // a site about 1300 m up
	r, err = FirstVelocityCorrection(9000, standardRed, Meteorology{Target: high, HaveTarget: true}, Atmosphere{})
	require.NoError(t, err)
	require.InDeltaf(t, 40, r.PPM, 2, "test setup: about 40 ppm")
	linear := 9000 * (1 + r.PPM*1e-6)
	assert.InDeltaf(t, 0.1*mm, math.Abs(r.Distance-linear), 0.02*mm, "exact vs linear on 9 km at 40 ppm (m)")
	assert.InDeltaf(t, 9000*r.PPM*r.Refractivity.Ambient*1e-12, linear-r.Distance, 0.001*mm, "exact vs linear matches its bound (m)")
}

// REFERENCES.md §1 [computed]: at k = 0.13 the second velocity correction is
// 0.03 mm and the ray arc-to-chord 0.002 mm at 5 km.
func TestSecondVelocityCorrection(t *testing.T) {
	r, err := SecondVelocityCorrection(5000, 0.13, meanRadius)
	require.NoError(t, err)
	assert.InDeltaf(t, -0.03*mm, r.Correction, 0.005*mm, "second velocity at 5 km (m)")
	assert.InDeltaf(t, -0.002*mm, r.ArcToChord, 0.0005*mm, "ray arc-to-chord at 5 km (m)")
	assert.InDeltaf(t, 5000+r.Correction+r.ArcToChord, r.Distance, 1e-12, "S3 is the sum (m)")

	// the exact chord of the ray circle against its series −k²L³/24R²
	r, err = SecondVelocityCorrection(30000, 0.13, meanRadius)
	require.NoError(t, err)
	wave := 30000 + r.Correction
	assert.InDeltaf(t, -0.13*0.13*wave*wave*wave/(24*meanRadius*meanRadius), r.ArcToChord, 1e-6*mm, "ray arc-to-chord at 30 km vs series (m)")

	r, err = SecondVelocityCorrection(1000, 0, meanRadius)
	require.NoError(t, err)
	assert.Equal(t, 1000.0, r.Distance, "k = 0 leaves the distance as it is")

	var ie *InputError
	for _, bad := range []struct {
		name      string
		s, k, rad float64
	}{{"NaN k", 1000, math.NaN(), meanRadius}, {"negative distance", -1, 0.13, meanRadius}, {"zero radius", 1000, 0.13, 0}} {
		_, err := SecondVelocityCorrection(bad.s, bad.k, bad.rad)
		assert.Truef(t, errors.As(err, &ie), "%s: want *InputError, got %v", bad.name, err)
	}
}
