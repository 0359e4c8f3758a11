package job

import (
	"fmt"
	"math"
	"strconv"

	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/input"
)

// prismConflict is the reason a row whose prism constants cannot be told
// (input.Profile.Prisms) is rejected: the two readings, the slope
// distance S1 after the instrument's constants that each gives, how far
// apart they are, and what the job must say. pr is what Prisms returned;
// both readings take pr.Target, the row's prism_constant_mm, as the
// target's constant, and differ in the constant the instrument applied.
func prismConflict(where fileLine, u input.LengthUnit, prof planProfile, o *input.Observation, pr input.Prisms, c input.PrismConflict) string {
	s1 := func(applied float64) (float64, string) {
		f := prof.Chain.Field
		f.PrismConstant = applied
		in, err := reduce.InstrumentCorrection(o.SlopeDistance, prof.Chain.Instrument, pr.Target, f)
		if err != nil {
			return math.NaN(), fmt.Sprintf("no S1 (%v)", err)
		}
		s, err := u.FormatLength(in.Distance, 5)
		if err != nil {
			return in.Distance, fmt.Sprintf("S1 = %.5f m", in.Distance)
		}
		return in.Distance, "S1 = " + s + " " + u.String()
	}
	// The applied constant of the first reading: the profile's, or the
	// row's field_prism_constant_mm that contradicts the setting.
	first := prof.Chain.Field.PrismConstant
	if c == input.PrismsContradict {
		first = pr.Applied
	}
	a, aText := s1(first)
	b, bText := s1(pr.Target)
	apart := ""
	if d := math.Abs(a - b); !math.IsNaN(d) {
		apart = " (" + strconv.FormatFloat(d*1e3, 'f', 2, 64) + " mm apart)"
	}
	if c == input.PrismsContradict {
		return fmt.Sprintf(`%s: field_prism_constant_mm %s mm contradicts row_prism_constant = "applied" of [instrument.%s], which says the instrument applied the row's prism_constant_mm %s mm: with %s mm applied %s, with %s mm applied %s%s; correct the row or the setting`,
			where, mmText(first), prof.name, mmText(pr.Target), mmText(first), aText, mmText(pr.Target), bText, apart)
	}
	return fmt.Sprintf(`%s: prism_constant_mm %s mm differs from field_prism_constant_mm %s mm of [instrument.%s], and the job does not say which the instrument applied: as the target's constant with %s mm applied, %s; as the constant the instrument applied, %s%s. Say which with row_prism_constant = "target" or "applied" in [instrument.%s], or give the row field_prism_constant_mm`,
		where, mmText(pr.Target), mmText(first), prof.name, mmText(first), aText, bText, apart, prof.name)
}

// mmText writes a constant given in metres as millimetres, to the µm.
func mmText(m float64) string {
	return strconv.FormatFloat(math.Round(m*1e6)/1e3, 'f', -1, 64)
}
