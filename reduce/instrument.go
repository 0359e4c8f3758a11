package reduce

// Instrument is what a calibration certificate says of an EDM instrument.
// The zero value is an instrument with no corrections.
type Instrument struct {
	// AdditiveConstant is added to every distance, metres: the
	// instrument's zero error as calibrated (without the prism's own
	// constant, which is per target).
	AdditiveConstant float64
	// ScalePPM is the scale correction from the calibration, ppm; a
	// positive value lengthens the distance.
	ScalePPM float64
}

// FieldSettings records what the field instrument already applied to the
// distances it stored, so that nothing is applied twice. The zero value
// says it applied nothing.
type FieldSettings struct {
	// PrismConstant is the prism constant set in the instrument, metres.
	PrismConstant float64
	// PPM is the ppm set in the instrument (atmospheric, scale or both).
	PPM float64
	// Curvature is the curvature and refraction correction the
	// instrument applied to the horizontal and vertical distances it
	// stored; the chain's caller undoes it (FieldCurvature.Inverse)
	// before the slope distance and zenith angle reach the chain.
	Curvature FieldCurvature
}

// InstrumentResult keeps the instrument stage's values, all in metres.
type InstrumentResult struct {
	Raw                float64 // the slope distance as the instrument stored it
	FieldPrismConstant float64 // the prism constant the field instrument applied, removed from Raw
	FieldPPM           float64 // the ppm the field instrument applied, removed from Raw
	Measured           float64 // Raw with the field settings removed
	ScaleCorrection    float64 // Measured · ScalePPM · 1e-6
	AdditiveConstant   float64 // from the calibration
	PrismConstant      float64 // the target's true constant
	Distance           float64 // S1 = Measured + ScaleCorrection + AdditiveConstant + PrismConstant
}

// InstrumentCorrection applies the instrument's constants to a raw slope
// distance (metres) observed to a target whose prism constant is
// prismConstant (metres).
//
// The field instrument is taken to have stored
//
//	raw = measured · (1 + field.PPM·1e-6) + field.PrismConstant
//
// so first that is undone exactly, then
//
//	S1 = measured · (1 + ScalePPM·1e-6) + AdditiveConstant + prismConstant.
//
// An instrument that adds its prism constant before scaling differs from
// this by field.PrismConstant · field.PPM · 1e-6: 1.2 µm for 30 mm at
// 40 ppm. The atmospheric ppm is not reapplied here: FirstVelocityCorrection
// applies the exact correction to Measured's scale, so a field ppm is
// replaced, not added to.
//
// field.PrismConstant is what the instrument applied on the shot and
// prismConstant the target's true constant; they differ where the
// instrument was set to another constant than the target's. Where it
// applied the target's own constant c, the two cancel but for the scales:
//
//	S1 = (raw − c)(1 + ScalePPM·1e-6)/(1 + field.PPM·1e-6) + AdditiveConstant + c
//
// and with no field ppm S1 = raw·(1 + ScalePPM·1e-6) + AdditiveConstant −
// c·ScalePPM·1e-6 (the last term 0.03 µm for c = −34.4 mm at 0.8 ppm).
func InstrumentCorrection(raw float64, inst Instrument, prismConstant float64, field FieldSettings) (InstrumentResult, error) {
	const stage = "instrument"
	if err := needPositive(stage, "slope distance", raw, "m"); err != nil {
		return InstrumentResult{}, err
	}
	if err := needRange(stage, "field ppm", field.PPM, "ppm", -1e4, 1e4); err != nil {
		return InstrumentResult{}, err
	}
	if err := needRange(stage, "calibration scale", inst.ScalePPM, "ppm", -1e4, 1e4); err != nil {
		return InstrumentResult{}, err
	}
	for _, c := range [...]struct {
		name string
		v    float64
	}{{"field prism constant", field.PrismConstant}, {"additive constant", inst.AdditiveConstant}, {"prism constant", prismConstant}} {
		if err := needRange(stage, c.name, c.v, "m", -1, 1); err != nil {
			return InstrumentResult{}, err
		}
	}
	measured := (raw - field.PrismConstant) / (1 + field.PPM*1e-6)
	r := InstrumentResult{
		Raw:                raw,
		FieldPrismConstant: field.PrismConstant,
		FieldPPM:           field.PPM,
		Measured:           measured,
		ScaleCorrection:    measured * inst.ScalePPM * 1e-6,
		AdditiveConstant:   inst.AdditiveConstant,
		PrismConstant:      prismConstant,
	}
	r.Distance = measured + r.ScaleCorrection + r.AdditiveConstant + r.PrismConstant
	if r.Distance <= 0 {
		return InstrumentResult{}, &InputError{Stage: stage, Quantity: "corrected slope distance", Got: r.Distance, Unit: "m", Want: "a distance above zero after the constants"}
	}
	return r, nil
}
