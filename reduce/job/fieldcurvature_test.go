package job

import (
	"context"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/reduce"
)

// A profile whose instrument corrected its horizontal and vertical
// distances for curvature and refraction: the rows it stored (the
// predicted sight, its S and z through the instrument's forward formulas)
// reduce back to the control geodesic (PROJ's, Karney) to 0.01 mm, and
// the same rows read as uncorrected (profile "raw") do not; a row the
// inverse cannot take is rejected with its file, line and reason; slope
// rows of the same profile are untouched.
func TestRunUndoesFieldCurvature(t *testing.T) {
	for _, mode := range []string{"vertical", "both"} {
		jobText := runJob + "field_curvature_refraction = \"" + mode + "\"\nfield_refraction_k = 0.2\nfield_earth_radius_m = 6370000\n" +
			strings.Replace(runJob[strings.Index(runJob, "[instrument.ts]"):], "[instrument.ts]", "[instrument.raw]", 1)
		plan, p := planFor(t, jobText, 2)
		c := plan.Settings.Profiles["ts"].Chain.Field.Curvature
		require.Equal(t, reduce.FieldCurvature{Mode: map[string]reduce.FieldCurvatureMode{"vertical": reduce.FieldCurvatureVertical, "both": reduce.FieldCurvatureBoth}[mode], K: 0.2, Radius: 6370000}, c)
		var b strings.Builder
		b.WriteString("from,to,slope_distance,zenith_angle,horizontal_distance,vertical_distance,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,instrument\n")
		prof := plan.Settings.Profiles["ts"]
		n := 0
		predicted(t, plan, p, func(a, c string) reduce.Observation {
			return reduce.Observation{PrismConstant: prof.PrismConstant}
		}, func(a, to string, pr reduce.Prediction) {
			hd, vd := c.Forward(pr.Displayed.Slope, pr.Observation.Zenith)
			for _, inst := range []string{"ts", "raw"} {
				fmt.Fprintf(&b, "%s,%s,,,%.9f,%.9f,1.6,1.5,18,1001,70,%s\n", a, to, hd, vd, inst)
			}
			fmt.Fprintf(&b, "%s,%s,%.9f,%.12f,,,1.6,1.5,18,1001,70,ts\n", a, to, pr.Displayed.Slope, pr.Observation.Zenith.Degrees())
			n++
		})
		b.WriteString("M0,M1,,,70000,10,1.6,1.5,18,1001,70,ts\n") // beyond R/100
		var got []Result
		err := Run(context.Background(), plan, []Source{{Name: "obs.csv", Reader: strings.NewReader(b.String())}}, openerOf(t, plan),
			func(w obsfile.Warning) { t.Errorf("warning %s", w) },
			func(r *Result) error { got = append(got, *r); return nil })
		require.NoError(t, err)
		require.Len(t, got, 3*n+1)
		worst, worstRaw := 0.0, 0.0
		for i := 0; i < 3*n; i += 3 {
			for k, r := range got[i : i+3] {
				require.False(t, r.Rejected, "%s row %d: %s", mode, i+k, r.Reason)
			}
			corrected, raw, slope := got[i], got[i+1], got[i+2]
			e := corrected.Reduction.EllipsoidResidual.Residual
			worst = math.Max(worst, math.Abs(e))
			assert.InDelta(t, 0, e, 0.01e-3, "%s %s→%s: reduced − control geodesic, metres", mode, corrected.Obs.From, corrected.Obs.To)
			assert.InDelta(t, slope.Obs.SlopeDistance, corrected.Obs.SlopeDistance, 1e-8, "%s: the slope distance back, metres", mode)
			assert.InDelta(t, slope.Obs.Zenith.Radians(), corrected.Obs.Zenith.Radians(), 1e-11, "%s: the zenith angle back, radians", mode)
			assert.InDelta(t, 0, slope.Reduction.EllipsoidResidual.Residual, 0.01e-3, "%s: a slope row of the profile is untouched, metres", mode)
			worstRaw = math.Max(worstRaw, math.Abs(raw.Reduction.EllipsoidResidual.Residual))
		}
		assert.Greater(t, worstRaw, 1e-3, "%s: read as uncorrected, some line is off by more than 1 mm", mode)
		t.Logf("%s: worst residual %.4f mm; read as uncorrected %.1f mm", mode, worst*1e3, worstRaw*1e3)
		r := got[3*n]
		assert.True(t, r.Rejected)
		assert.Equal(t, fmt.Sprintf("obs.csv:%d: field curvature and refraction: horizontal distance 70000 m, want a value in [0, 63700] m", 3*n+2), r.Reason)
		assert.Equal(t, 3*n+2, r.LineNo)
	}
}
