package job

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"

	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/reduce"
)

const runJob = `
crs = "EPSG:25832"
default_instrument = "ts"
[tolerance]
constant_mm = 3
ppm = 3
[instrument.ts]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5
`

// testPlan is a plan over a few invented points near 52°N 9°E.
func testPlan(t *testing.T, workers int) (*Plan, *geodesic.Projector) {
	t.Helper()
	return planFor(t, runJob, workers)
}

// planFor is testPlan for the job file text jobText.
func planFor(t *testing.T, jobText string, workers int) (*Plan, *geodesic.Projector) {
	t.Helper()
	j, crs, g, p := jobParts(t, jobText)
	j.Workers = workers
	var pts []obsfile.Point
	for i := range 6 {
		pts = append(pts, obsfile.Point{ID: fmt.Sprintf("M%d", i), Line: i + 2,
			LatLng: s2.LatLngFromDegrees(52+float64(i%3)*0.02, 9+float64(i/3)*0.03), HasLatLng: true,
			EllipsoidHeight: 100 + float64(i)*25, HasEllipsoidHeight: true})
	}
	control, err := ResolveControl(pts, "points.csv", p, Separations{})
	require.NoError(t, err)
	plan, err := NewPlan(j.Settings(), crs, g, control)
	require.NoError(t, err)
	planJobs[plan] = j
	return plan, p
}

// observations writes observations of every pair of marks, predicted
// exactly from the control through the chain run backwards, and the rows
// that must be rejected.
func observations(t *testing.T, plan *Plan, p *geodesic.Projector) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,instrument\n")
	prof := plan.Settings.Profiles["ts"]
	predicted(t, plan, p, func(a, c string) reduce.Observation {
		return reduce.Observation{PrismConstant: prof.PrismConstant}
	}, func(a, c string, pr reduce.Prediction) {
		fmt.Fprintf(&b, "%s,%s,%.9f,%.12f,1.6,1.5,18,1001,70,\n", a, c, pr.Displayed.Slope, pr.Observation.Zenith.Degrees())
	})
	b.WriteString("M0,M9,100,90,1.6,1.5,18,1001,70,\n")    // unknown target
	b.WriteString("M0,M1,100,90,1.6,1.5,18,1001,70,ts2\n") // unknown instrument
	b.WriteString("M0,M1,100,90,1.6,1.5,,,,\n")            // no air, no job default
	b.WriteString("M0,M1,1,90,1.6,1.5,18,1001,70,\n")      // shorter than the height difference
	return b.String()
}

// predicted calls row with the sight from a to c over every pair of the
// plan's marks, predicted from the control through the chain run
// backwards with the "ts" profile: HI 1.6 m, HT 1.5 m, 18 °C, 1001 hPa
// and 70 % at the instrument, and the prism constants that obs gives.
func predicted(t *testing.T, plan *Plan, p *geodesic.Projector, obs func(a, c string) reduce.Observation, row func(a, c string, pr reduce.Prediction)) {
	t.Helper()
	prof := plan.Settings.Profiles["ts"]
	for i := range 6 {
		for k := range 6 {
			if i == k {
				continue
			}
			a, c := fmt.Sprintf("M%d", i), fmt.Sprintf("M%d", k)
			ia, _ := plan.pts.find(a)
			ic, _ := plan.pts.find(c)
			line, _, err := NewReduceLine(plan.pts.at(ia).control(), plan.pts.at(ic).control(), plan.Geodesic, p)
			require.NoError(t, err)
			o := obs(a, c)
			o.InstrumentHeight, o.TargetHeight = 1.6, 1.5
			o.Meteorology = reduce.Meteorology{Instrument: reduce.Atmosphere{TemperatureC: 18, PressureHPa: 1001, HumidityPct: 70}, HaveInstrument: true}
			ma, okA := plan.Mark(a)
			mc, okC := plan.Mark(c)
			require.True(t, okA && okC)
			pr, err := reduce.Predict(o, prof.Chain, line, ma, mc)
			require.NoError(t, err)
			row(a, c, pr)
		}
	}
}

// repeated is data with its 30 predicted rows repeated n times before its
// rejects, some with the instrument's name quoted, so that a run reads
// many chunks of both kinds.
func repeated(data string, n int) string {
	lines := strings.Split(strings.TrimSpace(data), "\n")
	var b strings.Builder
	b.WriteString(lines[0] + "\n")
	for k := range n {
		for _, l := range lines[1:31] {
			if k%7 == 3 {
				l += `""` // an empty quoted instrument: the default
			}
			b.WriteString(l + "\n")
		}
	}
	for _, l := range lines[31:] {
		b.WriteString(l + "\n")
	}
	return b.String()
}

// Run as a library: predicted observations reduce back to the control
// geodesic (PROJ's, Karney) to 0.01 mm, results come in input order
// whatever the number of workers, over many chunks, and every other row
// is a reject with its reason and its line in the file.
func TestRunReducesInInputOrder(t *testing.T) {
	const reps = 40
	var first []Result
	for _, workers := range []int{1, 3} {
		plan, p := testPlan(t, workers)
		data := repeated(observations(t, plan, p), reps)
		var got []Result
		err := Run(context.Background(), plan, []Source{{Name: "obs.csv", Reader: strings.NewReader(data)}}, openerOf(t, plan),
			func(w obsfile.Warning) { t.Errorf("warning %s", w) },
			func(r *Result) error { got = append(got, *r); return nil })
		require.NoError(t, err)
		require.Greater(t, len(data), 4*chunkBytes, "several chunks")
		require.Len(t, got, 30*reps+4)
		good := 30 * reps
		for i, r := range got {
			require.Equal(t, int64(i), r.Seq, "input order")
			if i < good {
				require.False(t, r.Rejected, "row %d: %s", i, r.Reason)
				require.Equal(t, i+2, r.Obs.Line, "row %d's line in the file", i)
				e := r.Reduction.EllipsoidResidual
				assert.InDelta(t, 0, e.Residual, 0.01e-3, "row %d %s→%s: reduced − control geodesic, metres", i, r.Obs.From, r.Obs.To)
				assert.InDelta(t, 0, r.Reduction.GridResidual.Residual, 0.01e-3, "row %d: reduced − control grid distance, metres", i)
			}
		}
		reasons := []string{`target "M9" is not in the points file`, `instrument "ts2" has no [instrument.ts2] profile`,
			"records no temperature, pressure and humidity, and the job has no default_atmosphere", "slope distance"}
		for k, want := range reasons {
			r := got[good+k]
			assert.True(t, r.Rejected)
			assert.Contains(t, r.Reason, want)
			assert.Equal(t, "obs.csv", r.File)
			assert.Equal(t, good+2+k, r.LineNo)
			assert.NotEmpty(t, r.Raw)
		}
		// Once the runs end, the lines' ends, distances and radius are
		// still known (the rest only the chain reads), and a run is refused.
		plan.EndRuns()
		for i, r := range got[:good] {
			l, ok := plan.KnownLine(r.LineID, r.Points[0], r.Points[1])
			require.True(t, ok, "row %d", i)
			want := reduce.Line{A: r.Line.A, B: r.Line.B, Inverse: reduce.Inverse{Distance: r.Line.Inverse.Distance},
				GridDistance: r.Line.GridDistance, Radius: r.Line.Radius, Scale: reduce.ScaleFactors{A: r.Line.Scale.A, B: r.Line.Scale.B}}
			require.Equal(t, want, l, "row %d's line after the runs ended", i)
		}
		err = Run(context.Background(), plan, []Source{{Name: "obs.csv", Reader: strings.NewReader(data)}}, openerOf(t, plan),
			func(obsfile.Warning) {}, func(*Result) error { return nil })
		require.ErrorContains(t, err, "runs have ended")
		if first == nil {
			first = got
			continue
		}
		for i := range got {
			assert.Equal(t, first[i].Reduction, got[i].Reduction, "row %d the same with %d workers", i, workers)
		}
	}
}

// Broken quoting in a later chunk ends the run with the reader's error,
// after every row before it.
func TestRunStopsAtBrokenQuoting(t *testing.T) {
	plan, p := testPlan(t, 2)
	data := repeated(observations(t, plan, p), 40)
	cut := strings.Index(data[3*chunkBytes:], "\n") + 3*chunkBytes + 1
	bad := data[:cut] + "M0,\"M1,100,90,1.6,1.5,18,1001,70,\n" + data[cut:]
	rows := 0
	err := Run(context.Background(), plan, []Source{{Name: "obs.csv", Reader: strings.NewReader(bad)}}, openerOf(t, plan),
		func(obsfile.Warning) {}, func(r *Result) error { rows++; return nil })
	var fe *obsfile.FieldError
	require.True(t, errors.As(err, &fe), "%v", err)
	assert.Contains(t, fe.Want, "well-formed CSV")
	assert.Equal(t, "obs.csv", fe.File)
	assert.Equal(t, strings.Count(data[:cut], "\n")-1, rows, "the rows before it, and none after")
}

// A sink's error stops the run and is returned; a file without a required
// column stops it before any row.
func TestRunStops(t *testing.T) {
	plan, p := testPlan(t, 2)
	data := observations(t, plan, p)
	var many strings.Builder
	many.WriteString(data)
	for range 40 { // enough batches for the workers to be busy
		for _, line := range strings.Split(strings.TrimSpace(data), "\n")[1:31] {
			many.WriteString(line + "\n")
		}
	}
	boom := errors.New("disk full")
	n := 0
	err := Run(context.Background(), plan, []Source{{Name: "obs.csv", Reader: strings.NewReader(many.String())}}, openerOf(t, plan),
		func(obsfile.Warning) {}, func(*Result) error {
			if n++; n == 300 {
				return boom
			}
			return nil
		})
	assert.ErrorIs(t, err, boom)
	assert.Equal(t, 300, n, "no result after the sink's error")

	err = Run(context.Background(), plan, []Source{{Name: "bad.csv", Reader: strings.NewReader("from,to,slope_distance\nM0,M1,100\n")}}, openerOf(t, plan),
		func(obsfile.Warning) {}, func(*Result) error { t.Error("no row may reach the sink"); return nil })
	var he *obsfile.HeaderError
	assert.True(t, errors.As(err, &he), "%v", err)
}

// A row's strings share its chunk's memory until the sink returns
// (obsfile.ObsChunker.Reader). The package's tests poison each chunk once
// it is done (TestMain): a string kept past the sink shows as tildes,
// where a copy, and the plan's point ids that replace the row's, do not.
func TestRunRowStringsLastUntilTheSinkReturns(t *testing.T) {
	require.True(t, PoisonRecycledChunks)
	plan, p := testPlan(t, 2)
	// repeated without its quoted rows: chunks that plainRows reads
	lines := strings.SplitAfter(observations(t, plan, p), "\n")
	data := lines[0] + strings.Repeat(strings.Join(lines[1:31], ""), 40)
	var kept, copies, from []string
	err := Run(context.Background(), plan, []Source{{Name: "obs.csv", Reader: strings.NewReader(data)}}, openerOf(t, plan),
		func(w obsfile.Warning) { t.Errorf("warning %s", w) },
		func(r *Result) error {
			if !r.Rejected {
				kept = append(kept, r.Obs.Fields[2]) // the slope distance as written
				copies = append(copies, strings.Clone(r.Obs.Fields[2]))
				from = append(from, r.Obs.From)
			}
			return nil
		})
	require.NoError(t, err)
	poisoned := 0
	for i := range kept {
		require.NotContains(t, copies[i], "~")
		require.Regexp(t, `^M[0-5]$`, from[i], "row %d: the plan's id", i)
		if strings.Trim(kept[i], "~") == "" {
			poisoned++
		}
	}
	assert.Equal(t, len(kept), poisoned, "every row's string, kept past the sink")
}
