package reduce

import "math"

// SpeedOfLight is the speed of light in vacuum, m/s (exact by the SI
// definition of the metre).
const SpeedOfLight = 299792458.0

// Atmosphere is the air on a line of sight. The zero value (0 hPa) is
// refused by every function that takes one.
type Atmosphere struct {
	TemperatureC float64 // dry-bulb temperature, °C
	PressureHPa  float64 // total air pressure, hPa
	HumidityPct  float64 // relative humidity, %
}

// validate checks the ranges the IAG formula and the Magnus formula are
// used in: −60..+60 °C, 300..1200 hPa, 0..100 %.
func (a Atmosphere) validate(stage string) error {
	if err := needRange(stage, "temperature", a.TemperatureC, "°C", -60, 60); err != nil {
		return err
	}
	if err := needRange(stage, "pressure", a.PressureHPa, "hPa", 300, 1200); err != nil {
		return err
	}
	return needRange(stage, "relative humidity", a.HumidityPct, "%", 0, 100)
}

// StandardGroupRefractivity returns Ng, the group refractivity (n_g − 1)·1e6
// of standard air (0 °C, 1013.25 hPa, dry, 375 ppm CO₂) for a carrier of
// wavelength λ micrometres, by the IAG 1999 resolution (Rüeger, convener of
// the IAG working party; Ciddor & Hill 1999, Applied Optics 38(9)):
//
//	Ng = 287.6155 + 4.88660/λ² + 0.06800/λ⁴
//
// The coefficients are 3× and 5× those of the phase refractivity, as
// n_g = n − λ dn/dλ requires. λ must lie in the visible and near infrared,
// 0.3..2.0 µm.
func StandardGroupRefractivity(wavelengthUM float64) (float64, error) {
	if err := needRange("atmosphere", "carrier wavelength", wavelengthUM, "µm", 0.3, 2.0); err != nil {
		return 0, err
	}
	l2 := wavelengthUM * wavelengthUM
	return 287.6155 + 4.88660/l2 + 0.06800/(l2*l2), nil
}

// MagnusSaturationVapourPressure returns the saturation water-vapour
// pressure over water at t °C, hPa, by the Magnus formula in the base-10
// form with the coefficients used with the IAG 1999 resolution:
//
//	E = 6.1078 · 10^(7.5 t / (237.3 + t))
//
// The natural-log form 6.1078 · exp(17.269 t/(237.3 + t)) rounds
// 7.5 ln 10 = 17.2694 and gives 0.0007 hPa less at 20 °C (0.00003 ppm of
// N_L at 60 %).
// Magnus differs from Buck (1981) with its enhancement factor by about
// 0.4 %, which moves the refractivity by under 0.005 ppm at 20 °C, 60 %
// (under 0.01 mm per km).
func MagnusSaturationVapourPressure(tC float64) float64 {
	return 6.1078 * math.Exp(7.5*math.Ln10*tC/(237.3+tC)) // 10^x as e^(x ln 10): twice as fast as Pow
}

// Refractivity keeps the values of one evaluation of the IAG 1999 ambient
// formula.
type Refractivity struct {
	Standard       float64 // Ng of standard air at the carrier
	VapourPressure float64 // e = RH/100 · E(t) (Magnus), hPa
	Ambient        float64 // N_L of the given atmosphere
}

// AmbientGroupRefractivity returns N_L, the group refractivity of the
// ambient air, by the IAG 1999 resolution:
//
//	N_L = (273.15/1013.25) · Ng · p/T − 11.27 · e/T
//
// with T = t + 273.15 K, p and e in hPa, e from the relative humidity and
// MagnusSaturationVapourPressure. Near 20 °C, 1013 hPa it moves about
// −0.95 ppm per K in dry air (−0.98 at 60 % relative humidity, as the
// vapour pressure rises with the temperature) and +0.28 ppm per hPa.
func AmbientGroupRefractivity(wavelengthUM float64, a Atmosphere) (Refractivity, error) {
	ng, err := StandardGroupRefractivity(wavelengthUM)
	if err != nil {
		return Refractivity{}, err
	}
	if err := a.validate("atmosphere"); err != nil {
		return Refractivity{}, err
	}
	t := a.TemperatureC + 273.15
	e := a.HumidityPct / 100 * MagnusSaturationVapourPressure(a.TemperatureC)
	return Refractivity{
		Standard:       ng,
		VapourPressure: e,
		Ambient:        273.15/1013.25*ng*a.PressureHPa/t - 11.27*e/t,
	}, nil
}

// Carrier describes an EDM instrument's measuring light and the
// atmosphere its distance scale assumes. Build it with one of the
// constructors; the zero value is refused.
type Carrier struct {
	WavelengthUM          float64 // carrier wavelength, µm (e.g. 0.658 red, 0.850 infrared)
	ReferenceRefractivity float64 // N_ref = (n_ref − 1)·1e6, the group refractivity the scale assumes
}

// NewCarrier returns a carrier whose reference refractivity is given
// directly, as some manufacturers state it.
func NewCarrier(wavelengthUM, referenceRefractivity float64) (Carrier, error) {
	if _, err := StandardGroupRefractivity(wavelengthUM); err != nil {
		return Carrier{}, err
	}
	if err := needRange("atmosphere", "reference refractivity", referenceRefractivity, "ppm", 0, 1000); err != nil {
		return Carrier{}, err
	}
	return Carrier{WavelengthUM: wavelengthUM, ReferenceRefractivity: referenceRefractivity}, nil
}

// CarrierFromReferenceAtmosphere returns a carrier whose reference
// refractivity is that of the instrument's reference atmosphere (the one at
// which its atmospheric ppm is zero), by AmbientGroupRefractivity.
func CarrierFromReferenceAtmosphere(wavelengthUM float64, ref Atmosphere) (Carrier, error) {
	r, err := AmbientGroupRefractivity(wavelengthUM, ref)
	if err != nil {
		return Carrier{}, err
	}
	return Carrier{WavelengthUM: wavelengthUM, ReferenceRefractivity: r.Ambient}, nil
}

// CarrierFromModulation returns a carrier whose reference refractivity
// follows from the modulation frequency f (Hz) and unit length U (metres,
// half the modulation wavelength in the reference atmosphere):
//
//	n_ref = c / (2 f U)
//
// (Rüeger, Electronic Distance Measurement, 4th ed., 1996).
func CarrierFromModulation(wavelengthUM, frequencyHz, unitLength float64) (Carrier, error) {
	if err := needPositive("atmosphere", "modulation frequency", frequencyHz, "Hz"); err != nil {
		return Carrier{}, err
	}
	if err := needPositive("atmosphere", "unit length", unitLength, "m"); err != nil {
		return Carrier{}, err
	}
	n := SpeedOfLight / (2 * frequencyHz * unitLength)
	return NewCarrier(wavelengthUM, (n-1)*1e6)
}
