package input

// RowPrismReading says what a row's prism_constant_mm is where the row
// gives no field_prism_constant_mm: only the target's true constant, or
// also the constant the field instrument applied on the shot. The two
// readings reduce a row to the same distance only when the row's constant
// equals the profile's field_prism_constant_mm.
type RowPrismReading uint8

const (
	// RowPrismUnsaid is a profile that does not say: a row whose
	// prism_constant_mm differs from the profile's
	// field_prism_constant_mm, with no field_prism_constant_mm of its
	// own, cannot be reduced (Profile.Prisms says PrismsAmbiguous).
	RowPrismUnsaid RowPrismReading = iota
	// RowPrismTarget: a row's prism_constant_mm is the target's true
	// constant; the instrument applied the profile's
	// field_prism_constant_mm (row_prism_constant = "target").
	RowPrismTarget
	// RowPrismApplied: the instrument applied each row's own
	// prism_constant_mm, which is also the target's true constant, so
	// that the two cancel (row_prism_constant = "applied").
	RowPrismApplied
)

// String is the setting's value in the job file; "" for RowPrismUnsaid.
func (r RowPrismReading) String() string {
	switch r {
	case RowPrismTarget:
		return "target"
	case RowPrismApplied:
		return "applied"
	}
	return ""
}

// PrismOrigin says where one of a row's two prism constants came from.
type PrismOrigin uint8

const (
	// PrismFromProfile: the profile's prism_constant_mm (the target's) or
	// field_prism_constant_mm (the instrument's).
	PrismFromProfile PrismOrigin = iota
	// PrismFromRow: the row's own column, prism_constant_mm for the
	// target's and field_prism_constant_mm for the instrument's.
	PrismFromRow
	// PrismFromRowPrism: the instrument's, from the row's
	// prism_constant_mm, as row_prism_constant = "applied" says.
	PrismFromRowPrism
)

// String is the word reduced.csv records: profile, row or row-prism.
func (o PrismOrigin) String() string {
	switch o {
	case PrismFromRow:
		return "row"
	case PrismFromRowPrism:
		return "row-prism"
	}
	return "profile"
}

// Prisms are a row's two prism constants, metres: the target's true
// constant, which the reduction applies, and the one the field instrument
// applied, which it removes from the raw distance first.
type Prisms struct {
	Target, Applied         float64
	TargetFrom, AppliedFrom PrismOrigin
}

// PrismConflict says whether a row's prism constants can be told.
type PrismConflict uint8

const (
	// PrismsKnown: the row's constants are known.
	PrismsKnown PrismConflict = iota
	// PrismsAmbiguous: the row's prism_constant_mm differs from the
	// profile's field_prism_constant_mm, the row gives no
	// field_prism_constant_mm, and the profile has no row_prism_constant:
	// read as the target's constant or as the applied one, the row gives
	// two distances (Prisms holds the first reading).
	PrismsAmbiguous
	// PrismsContradict: row_prism_constant = "applied" says the instrument
	// applied the row's prism_constant_mm, but the row's
	// field_prism_constant_mm is another value (Prisms holds the row's
	// field_prism_constant_mm as applied).
	PrismsContradict
)

// Prisms resolves a row's prism constants: row and field are its
// prism_constant_mm and field_prism_constant_mm in metres, where hasRow
// and hasField.
//
//   - The target's constant is the row's prism_constant_mm, else the
//     profile's prism_constant_mm.
//   - The applied constant is the row's field_prism_constant_mm; else,
//     where the row gives prism_constant_mm and the profile says
//     row_prism_constant = "applied", that; else the profile's
//     field_prism_constant_mm.
//
// It allocates nothing: it runs on every row.
func (p *Profile) Prisms(row float64, hasRow bool, field float64, hasField bool) (Prisms, PrismConflict) {
	r := Prisms{Target: p.PrismConstant, Applied: p.Chain.Field.PrismConstant}
	if hasRow {
		r.Target, r.TargetFrom = row, PrismFromRow
	}
	switch {
	case hasField:
		r.Applied, r.AppliedFrom = field, PrismFromRow
		if hasRow && p.RowPrism == RowPrismApplied && field != row {
			return r, PrismsContradict
		}
	case !hasRow:
	case p.RowPrism == RowPrismApplied:
		r.Applied, r.AppliedFrom = row, PrismFromRowPrism
	case p.RowPrism == RowPrismUnsaid && row != r.Applied:
		return r, PrismsAmbiguous
	}
	return r, PrismsKnown
}
