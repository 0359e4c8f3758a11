package jobconfig

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// prismJob is a job whose profile ts had −30 mm set in the instrument and
// targets of −30 mm where a row gives none; reading is its
// row_prism_constant line.
func prismJob(t *testing.T, reading string) (Profile, error) {
	t.Helper()
	in := `
crs = "EPSG:25832"
[instrument.ts]
wavelength_um = 0.658
reference_refractivity = 286.3
prism_constant_mm = -30
field_prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5
` + reading + "\n"
	f, err := Parse([]byte(in), "job.toml")
	require.NoError(t, err)
	j, err := Resolve(f, "job.toml")
	if err != nil {
		return Profile{}, err
	}
	return j.Profiles["ts"], nil
}

func TestRowPrismConstantSetting(t *testing.T) {
	for reading, want := range map[string]RowPrismReading{
		"":                                RowPrismUnsaid,
		`row_prism_constant = "target"`:   RowPrismTarget,
		`row_prism_constant = "applied"`:  RowPrismApplied,
		`row_prism_constant = "Applied "`: RowPrismApplied,
	} {
		p, err := prismJob(t, reading)
		require.NoErrorf(t, err, "%q", reading)
		assert.Equalf(t, want, p.RowPrism, "%q", reading)
	}
	for _, bad := range []string{`row_prism_constant = "true"`, `row_prism_constant = "yes"`} {
		_, err := prismJob(t, bad)
		assert.ErrorContainsf(t, err, `job.toml: instrument.ts.row_prism_constant: "`, "%s", bad)
		assert.ErrorContainsf(t, err, `want "target" (a row's prism_constant_mm is the target's constant; the instrument applied field_prism_constant_mm) or "applied"`, "%s", bad)
	}
	f, err := Parse([]byte("[instrument.ts]\nrow_prism_constant = true\n"), "job.toml")
	assert.Errorf(t, err, "a boolean is not a reading: got %+v", f)
}

// A mixed-prism job (targets of −30 and −34.4 mm; the profile's field
// constant −30 mm) under each reading: which constants a row gets, and
// where each came from.
func TestPrisms(t *testing.T) {
	const mm = 1e-3
	prisms := func(target, applied float64, targetFrom, appliedFrom PrismOrigin) Prisms {
		return Prisms{Target: target, Applied: applied, TargetFrom: targetFrom, AppliedFrom: appliedFrom}
	}
	type row struct {
		prism, field       float64
		hasPrism, hasField bool
	}
	p34 := row{prism: -34.4 * mm, hasPrism: true}
	p30 := row{prism: -30 * mm, hasPrism: true}
	none := row{}
	fieldOnly := row{field: -34.4 * mm, hasField: true}
	both := row{prism: -34.4 * mm, field: -30 * mm, hasPrism: true, hasField: true}
	bothSame := row{prism: -34.4 * mm, field: -34.4 * mm, hasPrism: true, hasField: true}
	for _, c := range []struct {
		reading  string
		row      row
		want     Prisms
		conflict PrismConflict
	}{
		// No reading given: rows that agree with the profile's field
		// constant, or give none, are known; a −34.4 row is ambiguous.
		{"", p30, prisms(-30*mm, -30*mm, PrismFromRow, PrismFromProfile), PrismsKnown},
		{"", none, prisms(-30*mm, -30*mm, PrismFromProfile, PrismFromProfile), PrismsKnown},
		{"", p34, prisms(-34.4*mm, -30*mm, PrismFromRow, PrismFromProfile), PrismsAmbiguous},
		{"", both, prisms(-34.4*mm, -30*mm, PrismFromRow, PrismFromRow), PrismsKnown},
		{"", fieldOnly, prisms(-30*mm, -34.4*mm, PrismFromProfile, PrismFromRow), PrismsKnown},
		// The row's constant is the target's; the instrument applied −30.
		{`row_prism_constant = "target"`, p34, prisms(-34.4*mm, -30*mm, PrismFromRow, PrismFromProfile), PrismsKnown},
		{`row_prism_constant = "target"`, none, prisms(-30*mm, -30*mm, PrismFromProfile, PrismFromProfile), PrismsKnown},
		{`row_prism_constant = "target"`, both, prisms(-34.4*mm, -30*mm, PrismFromRow, PrismFromRow), PrismsKnown},
		// The instrument applied each row's own constant.
		{`row_prism_constant = "applied"`, p34, prisms(-34.4*mm, -34.4*mm, PrismFromRow, PrismFromRowPrism), PrismsKnown},
		{`row_prism_constant = "applied"`, p30, prisms(-30*mm, -30*mm, PrismFromRow, PrismFromRowPrism), PrismsKnown},
		{`row_prism_constant = "applied"`, none, prisms(-30*mm, -30*mm, PrismFromProfile, PrismFromProfile), PrismsKnown},
		{`row_prism_constant = "applied"`, bothSame, prisms(-34.4*mm, -34.4*mm, PrismFromRow, PrismFromRow), PrismsKnown},
		{`row_prism_constant = "applied"`, both, prisms(-34.4*mm, -30*mm, PrismFromRow, PrismFromRow), PrismsContradict},
	} {
		p, err := prismJob(t, c.reading)
		require.NoError(t, err)
		got, conflict := p.Prisms(c.row.prism, c.row.hasPrism, c.row.field, c.row.hasField)
		assert.Equalf(t, c.want, got, "%q, row %+v", c.reading, c.row)
		assert.Equalf(t, c.conflict, conflict, "%q, row %+v", c.reading, c.row)
	}
}

// Prisms runs on every row: it must not allocate.
func TestPrismsAllocatesNothing(t *testing.T) {
	p, err := prismJob(t, `row_prism_constant = "applied"`)
	require.NoError(t, err)
	var sink Prisms
	allocs := testing.AllocsPerRun(100, func() { sink, _ = p.Prisms(-0.0344, true, 0, false) })
	assert.Zero(t, allocs)
	assert.Equal(t, PrismFromRowPrism, sink.AppliedFrom)
}

func BenchmarkPrisms(b *testing.B) {
	p := Profile{PrismConstant: -0.030, RowPrism: RowPrismTarget}
	p.Chain.Field.PrismConstant = -0.030
	x := -0.0344
	for b.Loop() {
		r, _ := p.Prisms(x, true, 0, false)
		x = r.Target + r.Applied*1e-12 // the result feeds the next call
	}
	sinkFloat = x
}

var sinkFloat float64
