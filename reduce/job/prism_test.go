package job

import (
	"context"
	"fmt"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/reduce"
)

// prismRunJob is an instrument whose calibration gives 0.3 mm and
// 0.8 ppm, with −30 mm set in it, no field ppm, and targets of −30 mm
// where a row gives none; reading is its row_prism_constant line.
func prismRunJob(reading string) string {
	return runJob + `additive_constant_mm = 0.3
scale_ppm = 0.8
field_prism_constant_mm = -30
` + reading + "\n"
}

// runRows runs the rows of one observation file through plan.
func runRows(t *testing.T, plan *Plan, data string) []Result {
	t.Helper()
	var got []Result
	err := Run(context.Background(), plan, []Source{{Name: "obs.csv", Reader: strings.NewReader(data)}}, openerOf(t, plan),
		func(w obsfile.Warning) { t.Errorf("warning %s", w) },
		func(r *Result) error { got = append(got, *r); return nil })
	require.NoError(t, err)
	return got
}

// The same raw distance, 1234.5678 m, to targets of −30 and −34.4 mm,
// and to one the row does not name, under each reading of the rows'
// prism_constant_mm. S1 = (raw − applied)(1 + 0.8e-6) + 0.3 mm + target
// (reduce.InstrumentCorrection), by hand, with raw·(1 + 0.8e-6) =
// 1234.5678 + 0.00098765424 = 1234.56878765424 m:
//
//	applied −30,   target −30:   1234.56878765424 + 0.030·0.8e-6 + 0.0003      = 1234.56908767824 m
//	applied −30,   target −34.4: 1234.56878765424 + 0.030000024 + 0.0003 − 0.0344 = 1234.56468767824 m
//	applied −34.4, target −34.4: 1234.56878765424 + 0.0344·0.8e-6 + 0.0003     = 1234.56908768176 m
//	applied −34.4, target −30:   1234.56878765424 + 0.03440002752 + 0.0003 − 0.030 = 1234.57348768176 m
//
// The −34.4 mm target read as the target's constant with −30 applied is
// 4.4 mm (·(1 + 0.8e-6)) shorter than read as the constant applied.
func TestMixedPrismJobUnderEachReading(t *testing.T) {
	const (
		same     = 1234.56908767824 // applied = target = −30, or −34.4 to 0.004 µm
		set30    = 1234.56468767824 // applied −30, target −34.4
		applied  = 1234.56908768176 // applied −34.4, target −34.4
		field344 = 1234.57348768176 // applied −34.4 (row), target −30 (profile)
	)
	rows := "from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm,field_prism_constant_mm\n" +
		"M0,M1,1234.5678,90,1.6,1.5,18,1001,70,-30,\n" + // line 2
		"M0,M1,1234.5678,90,1.6,1.5,18,1001,70,-34.4,\n" + // line 3
		"M0,M1,1234.5678,90,1.6,1.5,18,1001,70,,\n" + // line 4
		"M0,M1,1234.5678,90,1.6,1.5,18,1001,70,-34.4,-30\n" + // line 5
		"M0,M1,1234.5678,90,1.6,1.5,18,1001,70,,-34.4\n" // line 6
	type want struct {
		s1                float64
		target, fieldFrom string
	}
	rejected := want{}
	for _, c := range []struct {
		reading string
		rows    []want
	}{
		{`row_prism_constant = "target"`, []want{
			{same, "row", "profile"}, {set30, "row", "profile"}, {same, "profile", "profile"},
			{set30, "row", "row"}, {field344, "profile", "row"}}},
		{`row_prism_constant = "applied"`, []want{
			{same, "row", "row-prism"}, {applied, "row", "row-prism"}, {same, "profile", "profile"},
			rejected, {field344, "profile", "row"}}},
		{"", []want{
			{same, "row", "profile"}, rejected, {same, "profile", "profile"},
			{set30, "row", "row"}, {field344, "profile", "row"}}},
	} {
		plan, _ := planFor(t, prismRunJob(c.reading), 1)
		got := runRows(t, plan, rows)
		require.Len(t, got, len(c.rows))
		for i, w := range c.rows {
			r := got[i]
			if w == rejected {
				assert.Truef(t, r.Rejected, "%q line %d is rejected", c.reading, i+2)
				continue
			}
			require.Falsef(t, r.Rejected, "%q line %d: %s", c.reading, i+2, r.Reason)
			in := r.Reduction.Instrument
			assert.InDeltaf(t, w.s1, in.Distance, 1e-9, "%q line %d: S1 (m)", c.reading, i+2)
			assert.Equalf(t, w.target, r.PrismFrom.String(), "%q line %d: where the target's constant came from", c.reading, i+2)
			assert.Equalf(t, w.fieldFrom, r.FieldPrismFrom.String(), "%q line %d: where the applied constant came from", c.reading, i+2)
		}
	}
}

// A job that does not say how to read prism_constant_mm rejects the rows
// where the two readings differ, each naming its line, both readings and
// the S1 each gives (the values of TestMixedPrismJobUnderEachReading), and
// the setting to add; a row whose field_prism_constant_mm contradicts
// row_prism_constant = "applied" is rejected naming both.
func TestPrismRowsTheJobCannotTell(t *testing.T) {
	rows := "from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm,field_prism_constant_mm\n" +
		"M0,M1,1234.5678,90,1.6,1.5,18,1001,70,-34.4,\n" +
		"M0,M1,1234.5678,90,1.6,1.5,18,1001,70,-34.4,-30\n"
	plan, _ := planFor(t, prismRunJob(""), 1)
	got := runRows(t, plan, rows)
	require.True(t, got[0].Rejected)
	assert.Equal(t, `obs.csv:2: prism_constant_mm -34.4 mm differs from field_prism_constant_mm -30 mm of [instrument.ts], and the job does not say which the instrument applied: `+
		`as the target's constant with -30 mm applied, S1 = 1234.56469 m; as the constant the instrument applied, S1 = 1234.56909 m (4.40 mm apart). `+
		`Say which with row_prism_constant = "target" or "applied" in [instrument.ts], or give the row field_prism_constant_mm`, got[0].Reason)
	assert.Equal(t, "obs.csv", got[0].File)
	assert.Equal(t, 2, got[0].LineNo)
	assert.False(t, got[1].Rejected, "the row says what was applied: %s", got[1].Reason)

	plan, _ = planFor(t, prismRunJob(`row_prism_constant = "applied"`), 1)
	got = runRows(t, plan, rows)
	assert.False(t, got[0].Rejected, got[0].Reason)
	require.True(t, got[1].Rejected)
	assert.Equal(t, `obs.csv:3: field_prism_constant_mm -30 mm contradicts row_prism_constant = "applied" of [instrument.ts], which says the instrument applied the row's prism_constant_mm -34.4 mm: `+
		`with -30 mm applied S1 = 1234.56469 m, with -34.4 mm applied S1 = 1234.56909 m (4.40 mm apart); correct the row or the setting`, got[1].Reason)
}

// A job whose instrument applied each row's own constant, to targets of
// −30 and −34.4 mm (observations predicted from the control through the
// chain run backwards): read so, every row reduces to the control
// geodesic (PROJ's, Karney) to 0.01 mm; read as targets' constants with
// −30 applied, the −34.4 rows come out 4.4 mm short.
func TestMixedPrismJobAgainstControl(t *testing.T) {
	plan, proj := planFor(t, prismRunJob(`row_prism_constant = "applied"`), 1)
	var b strings.Builder
	b.WriteString("from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm\n")
	var targets []float64
	predicted(t, plan, proj, func(a, c string) reduce.Observation {
		prism := -30.0
		if (a[1]+c[1])%2 == 1 {
			prism = -34.4
		}
		targets = append(targets, prism)
		return reduce.Observation{PrismConstant: prism / 1000, FieldPrismConstant: prism / 1000, HasFieldPrismConstant: true}
	}, func(a, c string, pr reduce.Prediction) {
		fmt.Fprintf(&b, "%s,%s,%.9f,%.12f,1.6,1.5,18,1001,70,%g\n", a, c, pr.Displayed.Slope, pr.Observation.Zenith.Degrees(), targets[len(targets)-1])
	})
	data := b.String()
	for _, reading := range []string{"applied", "target"} {
		plan, _ := planFor(t, prismRunJob(`row_prism_constant = "`+reading+`"`), 1)
		got := runRows(t, plan, data)
		require.Len(t, got, 30)
		for i, r := range got {
			require.Falsef(t, r.Rejected, "%s row %d: %s", reading, i, r.Reason)
			want := 0.0
			if reading == "target" && targets[i] == -34.4 {
				want = -4.4e-3 // the raw distance carries −34.4 mm, of which only −30 is removed
			}
			assert.InDeltaf(t, want, r.Reduction.EllipsoidResidual.Residual, 0.01e-3, "%s row %d (target %g mm): reduced − control geodesic (m)", reading, i, targets[i])
		}
	}
}
