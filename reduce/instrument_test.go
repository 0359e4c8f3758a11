package reduce

import (
	"errors"
	"math"
	"testing"

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
