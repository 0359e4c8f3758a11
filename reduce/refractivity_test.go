package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// refractivity tolerance: the check values are printed to 1e-4 ppm
const nTol = 0.5e-4

// IAG 1999 resolution, check values computed from its closed formula
// (REFERENCES.md §1 [computed]; no published worked example was found).
func TestStandardGroupRefractivity(t *testing.T) {
	for _, c := range []struct {
		name   string
		lambda float64 // µm
		want   float64 // ppm
	}{
		{"red laser 0.658 µm", 0.658, 299.2646},
		{"infrared 0.850 µm", 0.850, 294.5092},
	} {
		got, err := StandardGroupRefractivity(c.lambda)
		require.NoErrorf(t, err, "%s", c.name)
		assert.InDeltaf(t, c.want, got, nTol, "%s: Ng (ppm)", c.name)
	}
}

// The group coefficients are 3× and 5× the phase coefficients 1.62887 and
// 0.01360 of the same resolution, as n_g = n − λ dn/dλ requires: a check
// that the formula was not typed with the phase coefficients.
func TestGroupFromPhaseDispersion(t *testing.T) {
	phase := func(l float64) float64 { return 287.6155 + 1.62887/(l*l) + 0.01360/(l*l*l*l) }
	for _, l := range []float64{0.5, 0.658, 0.85, 1.064} {
		const h = 1e-5
		dndl := (phase(l+h) - phase(l-h)) / (2 * h)
		want := phase(l) - l*dndl
		got, err := StandardGroupRefractivity(l)
		require.NoError(t, err)
		assert.InDeltaf(t, want, got, 2e-4, "Ng from the phase dispersion at %g µm (ppm)", l)
	}
}

func TestAmbientGroupRefractivity(t *testing.T) {
	// IAG 1999 [computed, REFERENCES.md §1]: 0.658 µm, 20 °C, 1013.25 hPa,
	// 60 % RH with Magnus e = 14.0286 hPa → N_L = 278.3081.
	r, err := AmbientGroupRefractivity(0.658, Atmosphere{TemperatureC: 20, PressureHPa: 1013.25, HumidityPct: 60})
	require.NoError(t, err)
	assert.InDeltaf(t, 14.0286, r.VapourPressure, 0.5e-4, "Magnus e at 20 °C, 60 %% (hPa)")
	assert.InDeltaf(t, 278.3081, r.Ambient, nTol, "N_L at 20 °C, 1013.25 hPa, 60 %% (ppm)")

	// Sanity (REFERENCES.md §1): standard air, 0 °C, 1013.25 hPa, dry, is Ng.
	r, err = AmbientGroupRefractivity(0.85, Atmosphere{TemperatureC: 0, PressureHPa: 1013.25, HumidityPct: 0})
	require.NoError(t, err)
	assert.InDeltaf(t, 294.5092, r.Ambient, nTol, "N_L of standard air is Ng (ppm)")
}

// Sensitivities near 20 °C: about −0.95 ppm/K and +0.28 ppm/hPa
// [computed, REFERENCES.md §1]; the trade's "1 ppm per °C, per ~3.5 hPa"
// (common practice).
func TestRefractivitySensitivities(t *testing.T) {
	// REFERENCES.md's −0.95 ppm/K is the dry-air value; at a constant 60 %
	// the rising vapour pressure adds −11.27 (dE/dT)·0.6/T = −0.033 ppm/K.
	base := Atmosphere{TemperatureC: 20, PressureHPa: 1013.25, HumidityPct: 0}
	n := func(a Atmosphere) float64 {
		r, err := AmbientGroupRefractivity(0.658, a)
		require.NoError(t, err)
		return r.Ambient
	}
	warm, highP := base, base
	warm.TemperatureC++
	highP.PressureHPa++
	assert.InDeltaf(t, -0.95, n(warm)-n(base), 0.02, "dN/dT at 20 °C (ppm/K)")
	assert.InDeltaf(t, 0.28, n(highP)-n(base), 0.01, "dN/dp at 20 °C (ppm/hPa)")
	assert.InDeltaf(t, -1, n(warm)-n(base), 0.1, "common practice: 1 ppm per °C (ppm/K)")
	assert.InDeltaf(t, 1.0/3.5, n(highP)-n(base), 0.02, "common practice: 1 ppm per ~3.5 hPa (ppm/hPa)")
	humid, humidWarm := base, warm
	humid.HumidityPct, humidWarm.HumidityPct = 60, 60
	assert.InDeltaf(t, -0.983, n(humidWarm)-n(humid), 0.005, "dN/dT at 20 °C, 60 %% (ppm/K)")
}

// Magnus against a published saturation vapour pressure: 23.39 hPa over
// water at 20 °C (WMO-No. 8, Guide to Meteorological Instruments, annex
// 4.B, from the Goff–Gratch/Sonntag formula [memory]). Magnus and Buck 1981
// differ by ~0.4 % (REFERENCES.md §1); we allow 0.5 %.
func TestMagnusSaturationVapourPressure(t *testing.T) {
	assert.InDeltaf(t, 23.39, MagnusSaturationVapourPressure(20), 23.39*0.005, "E(20 °C) (hPa)")
	assert.InDeltaf(t, 6.1078, MagnusSaturationVapourPressure(0), 1e-12, "E(0 °C) is Magnus's constant (hPa)")
	natural := 6.1078 * math.Exp(17.269*20/(237.3+20))
	assert.InDeltaf(t, natural, MagnusSaturationVapourPressure(20), 0.001, "base-10 vs natural-log Magnus at 20 °C (hPa)")
	// Buck (1981) with enhancement factor (REFERENCES.md §1) at 20 °C,
	// 1013.25 hPa; the effect on N_L is under 0.005 ppm.
	buck := (1.0007 + 3.46e-6*1013.25) * 6.1121 * math.Exp(17.502*20/(240.97+20))
	assert.InDeltaf(t, buck, MagnusSaturationVapourPressure(20), 0.004*buck, "Magnus within 0.4 %% of Buck (hPa)")
	assert.Lessf(t, 11.27*0.6*math.Abs(buck-MagnusSaturationVapourPressure(20))/293.15, 0.005, "Magnus vs Buck in N_L (ppm)")
}

func TestCarriers(t *testing.T) {
	ref := Atmosphere{TemperatureC: 12, PressureHPa: 1013.25, HumidityPct: 60}
	c, err := CarrierFromReferenceAtmosphere(0.658, ref)
	require.NoError(t, err)
	r, err := AmbientGroupRefractivity(0.658, ref)
	require.NoError(t, err)
	assert.Equal(t, r.Ambient, c.ReferenceRefractivity, "reference refractivity is N_L of the reference atmosphere")

	// n_ref = c/(2fU) (Rüeger 1996): a unit length of 10 m at
	// 14.985 454 MHz gives n = 299 792 458 / 299 709 080 = 1.000 278 196
	// (hand division of the defining formula).
	m, err := CarrierFromModulation(0.85, 14.985454e6, 10)
	require.NoError(t, err)
	assert.InDeltaf(t, 278.196, m.ReferenceRefractivity, 0.001, "N_ref from f and U (ppm)")

	var ie *InputError
	_, err = CarrierFromModulation(0.85, 0, 10)
	assert.True(t, errors.As(err, &ie), "zero frequency")
	_, err = NewCarrier(0, 280)
	assert.True(t, errors.As(err, &ie), "zero wavelength")
	_, err = NewCarrier(0.658, math.NaN())
	assert.True(t, errors.As(err, &ie), "NaN reference refractivity")
	_, err = AmbientGroupRefractivity(0.658, Atmosphere{})
	assert.True(t, errors.As(err, &ie), "the zero Atmosphere (0 hPa) is refused")
	assert.Contains(t, err.Error(), "pressure")
}
