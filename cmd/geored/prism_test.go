package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/report"
)

// mixedPrismRows are four of the demo's clean sights between NB-PILLAR1
// and NB-PILLAR2, booked to targets of −30 and −34.4 mm and one that the
// row does not name. The demo's instrument (ts-red: additive 0.3 mm,
// scale 0.8 ppm, −30 mm set in it, no field ppm) measured them with −30
// applied; had it applied −34.4 mm to a −34.4 mm target, its raw distance
// would differ by 4.4 mm · 0.8e-6 = 3.5 nm, so the same raw values serve.
const mixedPrismRows = "obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm\n" +
	"9,NB-PILLAR1,NB-PILLAR2,593.9714,90.02255,1.576,1.500,9.3,1008.3,74,-30\n" + // line 2
	"10,NB-PILLAR2,NB-PILLAR1,593.9701,89.57547,1.638,1.700,9.3,1008.4,81,-34.4\n" + // line 3
	"27,NB-PILLAR1,NB-PILLAR2,593.9692,90.01201,1.586,1.700,10.6,1008.3,78,\n" + // line 4
	"28,NB-PILLAR2,NB-PILLAR1,593.9676,89.58148,1.602,1.600,10.9,1008.5,82,-34.4\n" // line 5

// A mixed-prism job through geored reduce, under each reading of the
// rows' prism_constant_mm, against S1 by hand (reduce.InstrumentCorrection:
// S1 = (raw − applied)(1 + 0.8e-6) + 0.3 mm + target):
//
//	line 2, −30 applied, −30:         593.9714 + 0.00047517712 + 0.0003 + 0.000000024             = 593.97217520 m
//	line 3, −34.4 applied, −34.4:     593.9701 + 0.00047517608 + 0.0003 + 0.00000002752           = 593.97087520 m
//	line 3, −30 applied, −34.4:       593.9701 + 0.00047517608 + 0.000000024 + 0.030 + 0.0003 − 0.0344 = 593.96647520 m
//	line 4, the profile's −30, −30:   593.9692 + 0.00047517536 + 0.0003 + 0.000000024             = 593.96997520 m
//	line 5, −34.4 applied, −34.4:     593.9676 + 0.00047517408 + 0.0003 + 0.00000002752           = 593.96837520 m
//	line 5, −30 applied, −34.4:       593.9676 + 0.00047517408 + 0.000000024 + 0.030 + 0.0003 − 0.0344 = 593.96397520 m
//
// (raw · 0.8e-6 beside each raw distance; 0.000000024 = 0.030 · 0.8e-6,
// 0.00000002752 = 0.0344 · 0.8e-6).
func TestReduceMixedPrismJob(t *testing.T) {
	type row struct {
		s1                                      float64
		prism, prismFrom, fieldPrism, fieldFrom string
	}
	cases := []struct {
		name    string
		extra   string   // lines of [instrument.ts-red]
		flags   []string // after -config
		rows    []row    // reduced.csv, in order
		flagged int
	}{
		// Read as applied, the four sights agree with the control, as in
		// the demo.
		{"applied", `row_prism_constant = "applied"`, nil, []row{
			{593.97217520, "-30.00", "row", "-30.00", "row-prism"},
			{593.97087520, "-34.40", "row", "-34.40", "row-prism"},
			{593.96997520, "-30.00", "profile", "-30.00", "profile"},
			{593.96837520, "-34.40", "row", "-34.40", "row-prism"}}, 0},
		// Read as the targets' constants with −30 applied, the −34.4 rows
		// are 4.4 mm short, and line 5's |w| goes over 3.29.
		{"target", "", []string{"-row-prism-constant", "target"}, []row{ // by flag
			{593.97217520, "-30.00", "row", "-30.00", "profile"},
			{593.96647520, "-34.40", "row", "-30.00", "profile"},
			{593.96997520, "-30.00", "profile", "-30.00", "profile"},
			{593.96397520, "-34.40", "row", "-30.00", "profile"}}, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			job := writeJob(t, mixedPrismRows, "")
			appendTo(t, job, c.extra)
			code, _, stderr := runCmd(t, append([]string{"reduce", "-config", job, "-quiet"}, c.flags...)...)
			if c.flagged == 0 {
				require.Equal(t, exitOK, code, stderr)
			} else {
				require.Equal(t, exitFlagged, code, stderr)
			}
			out := filepath.Join(filepath.Dir(job), "out")
			reduced := readCSV(t, filepath.Join(out, "reduced.csv"))
			require.Len(t, reduced, 1+len(c.rows), "every row reduced")
			col := columns(reduced[0])
			for i, w := range c.rows {
				r := reduced[i+1]
				assert.InDeltaf(t, w.s1, num(t, r[col["slope_instrument_m"]]), 0.00001, "line %s: S1, m", r[col["line"]])
				got := [4]string{r[col["prism_constant_mm"]], r[col["prism_source"]], r[col["field_prism_constant_mm"]], r[col["field_prism_source"]]}
				assert.Equalf(t, [4]string{w.prism, w.prismFrom, w.fieldPrism, w.fieldFrom}, got, "line %s: the constants used and where each came from", r[col["line"]])
			}
			sum := readSummary(t, filepath.Join(out, "summary.json"))
			assert.Equal(t, c.name, sum.Settings.Instruments[0].RowPrismConstant, "the setting is recorded")
			assert.Equal(t, c.flagged, sum.Counts.Flagged, "flagged observations")
		})
	}
}

// The same job without row_prism_constant: the rows whose −34.4 mm differs
// from the −30 mm set in the instrument are rejected, each naming its
// line, both readings and the S1 of each (TestReduceMixedPrismJob's
// values), and the setting to add; the others are reduced. With -strict
// the run fails.
func TestReduceMixedPrismJobThatDoesNotSay(t *testing.T) {
	job := writeJob(t, mixedPrismRows, "")
	code, _, stderr := runCmd(t, "reduce", "-config", job, "-quiet")
	require.NotEqual(t, exitFailed, code, stderr)
	out := filepath.Join(filepath.Dir(job), "out")
	reduced := readCSV(t, filepath.Join(out, "reduced.csv"))
	require.Len(t, reduced, 3, "lines 2 and 4 reduced")
	rejects := readCSV(t, filepath.Join(out, "rejects.csv"))
	require.Len(t, rejects, 3, "lines 3 and 5 rejected")
	obs := filepath.Join(filepath.Dir(job), "observations.csv")
	for i, w := range []struct{ line, target, applied string }{{"3", "593.96648", "593.97088"}, {"5", "593.96398", "593.96838"}} {
		r := rejects[i+1]
		assert.Equal(t, w.line, r[1])
		assert.Equal(t, obs+":"+w.line+`: prism_constant_mm -34.4 mm differs from field_prism_constant_mm -30 mm of [instrument.ts-red], and the job does not say which the instrument applied: `+
			`as the target's constant with -30 mm applied, S1 = `+w.target+` m; as the constant the instrument applied, S1 = `+w.applied+` m (4.40 mm apart). `+
			`Say which with row_prism_constant = "target" or "applied" in [instrument.ts-red], or give the row field_prism_constant_mm`, r[3])
	}
	sum := readSummary(t, filepath.Join(out, "summary.json"))
	assert.Equal(t, "not given", sum.Settings.Instruments[0].RowPrismConstant)
	assert.Equal(t, 2, sum.Counts.Rejected)

	code, _, stderr = runCmd(t, "reduce", "-config", job, "-quiet", "-strict")
	assert.Equal(t, exitFailed, code)
	assert.Contains(t, stderr, "2 of 4 rows rejected")
}

func readSummary(t *testing.T, path string) report.Summary {
	t.Helper()
	var sum report.Summary
	require.NoError(t, json.Unmarshal([]byte(readFile(t, path)), &sum))
	return sum
}

// appendTo adds lines to the end of the job file: into the demo job's
// last table, [instrument.ts-red].
func appendTo(t *testing.T, path, lines string) {
	t.Helper()
	f, err := os.OpenFile(path, os.O_APPEND|os.O_WRONLY, 0)
	require.NoError(t, err)
	_, err = f.WriteString("\n" + lines + "\n")
	require.NoError(t, err)
	require.NoError(t, f.Close())
}
