package jobconfig

import (
	"fmt"
	"strings"

	"github.com/geored/geored/reduce/input"
)

// The settings of a row's prism constants, as reduce/input defines them.
type (
	RowPrismReading = input.RowPrismReading
	PrismOrigin     = input.PrismOrigin
	Prisms          = input.Prisms
	PrismConflict   = input.PrismConflict
)

// The values of those settings.
const (
	RowPrismUnsaid    = input.RowPrismUnsaid
	RowPrismTarget    = input.RowPrismTarget
	RowPrismApplied   = input.RowPrismApplied
	PrismFromProfile  = input.PrismFromProfile
	PrismFromRow      = input.PrismFromRow
	PrismFromRowPrism = input.PrismFromRowPrism
	PrismsKnown       = input.PrismsKnown
	PrismsAmbiguous   = input.PrismsAmbiguous
	PrismsContradict  = input.PrismsContradict
)

// rowPrismReading reads row_prism_constant.
func rowPrismReading(s string) (RowPrismReading, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "":
		return RowPrismUnsaid, nil
	case "target":
		return RowPrismTarget, nil
	case "applied":
		return RowPrismApplied, nil
	}
	return 0, fmt.Errorf(`%q: want "target" (a row's prism_constant_mm is the target's constant; the instrument applied field_prism_constant_mm) or "applied" (the instrument applied each row's own prism_constant_mm)`, s)
}
