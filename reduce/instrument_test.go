package reduce

import (
	"errors"
	"math"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestInstrumentCorrection(t *testing.T) {
	inst := Instrument{AdditiveConstant: 0.8 * mm, ScalePPM: 3}
	// Nothing applied in the field: S1 = S (1 + 3e-6) + 0.8 mm − 30 mm.
	r, err := InstrumentCorrection(1234.5678, inst, -30*mm, FieldSettings{})
	require.NoError(t, err)
	assert.InDeltaf(t, 1234.5678*(1+3e-6)+0.8*mm-30*mm, r.Distance, 1e-9, "nothing applied in the field (m)")

	// The field instrument applied the same prism constant and 12 ppm: the
	// raw distance carries them, and S1 must come out the same as above —
	// nothing is applied twice.
	raw := 1234.5678*(1+12e-6) - 30*mm
	r2, err := InstrumentCorrection(raw, inst, -30*mm, FieldSettings{PrismConstant: -30 * mm, PPM: 12})
	require.NoError(t, err)
	assert.InDeltaf(t, r.Distance, r2.Distance, 1e-9, "field settings undone, not applied twice (m)")
	assert.InDeltaf(t, 1234.5678, r2.Measured, 1e-9, "measured distance recovered (m)")

	// The common blunder this guards against: applying the prism constant
	// again to a distance that already has it shifts it by the constant.
	blunder, err := InstrumentCorrection(raw, inst, -30*mm, FieldSettings{PPM: 12})
	require.NoError(t, err)
	assert.InDeltaf(t, -30*mm, blunder.Distance-r2.Distance, 0.001*mm, "a forgotten field prism constant (m)")
}

func TestInstrumentRejects(t *testing.T) {
	for _, c := range []struct {
		name  string
		raw   float64
		inst  Instrument
		prism float64
		field FieldSettings
	}{
		{"negative distance", -1, Instrument{}, 0, FieldSettings{}},
		{"NaN distance", math.NaN(), Instrument{}, 0, FieldSettings{}},
		{"Inf ppm", 100, Instrument{ScalePPM: math.Inf(1)}, 0, FieldSettings{}},
		{"prism constant in millimetres by mistake", 100, Instrument{}, -30, FieldSettings{}},
		{"constants longer than the line", 0.01, Instrument{}, -0.03, FieldSettings{}},
	} {
		r, err := InstrumentCorrection(c.raw, c.inst, c.prism, c.field)
		var ie *InputError
		require.Truef(t, errors.As(err, &ie), "%s: want *InputError, got %v", c.name, err)
		assert.Equalf(t, "instrument", ie.Stage, "%s", c.name)
		assert.Equalf(t, InstrumentResult{}, r, "%s: no partial result", c.name)
	}
}

// A shot on which the instrument applied its own prism constant: the
// observation's FieldPrismConstant replaces the job's field setting, and
// the result keeps the constant it removed.
func TestFieldPrismConstantPerShot(t *testing.T) {
	job := demoJob(t) // additive 0.6 mm, scale 1.8 ppm, field −30 mm and 0 ppm
	line := Line{Radius: 6378000, Inverse: Inverse{Distance: 1234.5}, GridDistance: 1234.5 * 0.9996, Scale: ScaleFactors{A: 0.9996, Mid: 0.9996, B: 0.9996}}
	markA, _ := HeightFromEllipsoidal(DatumEllipsoid, 100, Separation{})
	markB, _ := HeightFromEllipsoidal(DatumEllipsoid, 110, Separation{})
	const raw = 1234.5678
	obs := Observation{SlopeDistance: raw, Zenith: 89.5 * s1.Degree, InstrumentHeight: 1.5, TargetHeight: 1.5, PrismConstant: -34.4 * mm}

	// Applied −34.4 mm on the shot, target −34.4 mm (by hand):
	//   S1 = (raw + 0.0344)(1 + 1.8e-6) + 0.0006 − 0.0344
	//      = raw·(1 + 1.8e-6) + 0.0006 + 0.0344·1.8e-6
	//      = 1234.5678 + 0.00222222204 + 0.0006 + 0.0000000619 = 1234.5706222840 m
	applied := obs
	applied.FieldPrismConstant, applied.HasFieldPrismConstant = -34.4*mm, true
	r, err := Reduce(applied, job, line, markA, markB)
	require.NoError(t, err)
	assert.InDeltaf(t, 1234.5706222840, r.Instrument.Distance, 1e-9, "S1, applied −34.4, true −34.4 (m)")
	assert.Equalf(t, -34.4*mm, r.Instrument.FieldPrismConstant, "the shot's applied constant is kept (m)")

	// The job's −30 mm applied, target −34.4 mm (by hand):
	//   S1 = (raw + 0.030)(1 + 1.8e-6) + 0.0006 − 0.0344
	//      = 1234.5678 + 0.0300 + 0.00222227604 + 0.0006 − 0.0344 = 1234.5662222760 m,
	// 4.4 mm · (1 + 1.8e-6) shorter than the shot that applied −34.4.
	set, err := Reduce(obs, job, line, markA, markB)
	require.NoError(t, err)
	assert.InDeltaf(t, 1234.5662222760, set.Instrument.Distance, 1e-9, "S1, applied −30 (job), true −34.4 (m)")
	assert.Equalf(t, -30*mm, set.Instrument.FieldPrismConstant, "the job's applied constant (m)")

	// Predict agrees: the displayed distance carries the shot's own
	// constant, and reduces back to the same S1.
	p, err := Predict(applied, job, line, markA, markB)
	require.NoError(t, err)
	assert.InDeltaf(t, p.Bare.Slope*(1+job.Field.PPM*1e-6)-34.4*mm, p.Displayed.Slope, 1e-9, "displayed = bare + the shot's constant (m)")
	assert.Equalf(t, -34.4*mm, p.Instrument.FieldPrismConstant, "predicted shot's applied constant (m)")
}
