package report

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
)

// Decide's table: each count or test that needs a look gives status 1
// with its reason; nothing reduced, or -strict with a reject, gives 2.
func TestDecide(t *testing.T) {
	pass := &GlobalTest{N: 10, VarianceFactor: 1, Alpha: 0.05, Lower: 0.3, Upper: 2, Outcome: "pass"}
	for _, c := range []struct {
		name    string
		s       Summary
		strict  bool
		status  int
		reason  string // in the reasons ("" none)
		note    string // in the notes
		verdict string
	}{
		{name: "clean", s: Summary{Counts: Counts{Read: 10, Reduced: 10, Lines: 3}, Testing: Testing{Global: pass}},
			status: 0, verdict: "clean: every row was reduced and no result is flagged"},
		{name: "empty", s: Summary{}, status: 2, reason: "the observation files hold no rows", verdict: "failed: no row could be reduced"},
		{name: "all rejected", s: Summary{Counts: Counts{Read: 24, Rejected: 24}}, status: 2, reason: "none of the 24 rows could be reduced"},
		{name: "some rejected", s: Summary{Counts: Counts{Read: 24, Reduced: 20, Rejected: 4}, Testing: Testing{Global: pass}},
			status: 1, reason: "4 of 24 rows rejected (rejects.csv)", verdict: "needs a look: some rows or results need attention"},
		{name: "strict", s: Summary{Counts: Counts{Read: 24, Reduced: 20, Rejected: 4}, Testing: Testing{Global: pass}}, strict: true,
			status: 2, reason: "-strict: a rejected row fails the run", verdict: "failed: rows were rejected and -strict is set"},
		{name: "flagged", s: Summary{Counts: Counts{Read: 10, Reduced: 10, Flagged: 1, Lines: 3, FlaggedLines: 1}, Testing: Testing{Global: pass}},
			status: 1, reason: "1 of 3 lines flagged"},
		{name: "global too large", s: Summary{Counts: Counts{Read: 10, Reduced: 10}, Testing: Testing{Global: &GlobalTest{N: 10, VarianceFactor: 2.5, Alpha: 0.05, Lower: 0.3, Upper: 2, Outcome: "too large"}}},
			status: 1, reason: "global test failed: variance factor 2.500 above its upper bound 2.000"},
		{name: "global too small", s: Summary{Counts: Counts{Read: 10, Reduced: 10}, Testing: Testing{Global: &GlobalTest{N: 10, VarianceFactor: 0.1, Alpha: 0.05, Lower: 0.3, Upper: 2, Outcome: "too small"}}},
			status: 0, note: "variance factor 0.100 below its lower bound 0.300"},
		{name: "fit constant", s: Summary{Counts: Counts{Read: 10, Reduced: 10}, Testing: Testing{Global: pass},
			Fit: &Fit{Evidence: EvidenceEnough, ConstantMM: 3.1, ConstantSigma: 0.4, ConstantSignificant: true}},
			status: 1, reason: "finds a constant of 3.1 ± 0.4 mm"},
		{name: "fit without evidence", s: Summary{Counts: Counts{Read: 10, Reduced: 10}, Testing: Testing{Global: pass},
			Fit: &Fit{Evidence: "high_leverage", ConstantMM: 3.1, ConstantSigma: 0.4}},
			status: 0},
		{name: "chance", s: Summary{Counts: Counts{Read: 20000, Reduced: 20000, Flagged: 19, Lines: 2000, FlaggedLines: 19},
			Testing: Testing{Scope: ScopeObservation, Critical: 3.29, AlphaPerObservation: 0.001, Outliers: 19, ExpectedByChance: 20, Global: pass}},
			status: 1, note: "19 observations have |w| over 3.29; chance alone would give about 20.0 of 20000"},
	} {
		s := c.s
		Decide(&s, c.strict)
		assert.Equal(t, c.status, s.ExitStatus, c.name)
		if c.reason != "" {
			assert.Contains(t, strings.Join(s.Reasons, "\n"), c.reason, c.name)
		}
		if c.status == 0 {
			assert.Empty(t, s.Reasons, c.name)
		}
		if c.note != "" {
			assert.Contains(t, strings.Join(s.Notes, "\n"), c.note, c.name)
		}
		if c.verdict != "" {
			assert.Equal(t, c.verdict, s.Verdict, c.name)
		}
	}
}
