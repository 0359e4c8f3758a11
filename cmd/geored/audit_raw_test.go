package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/audit"
	"github.com/geored/geored/reduce/job"
)

// rawScenarioJob is the invented scenario's job with an instrument
// profile: the subcontractor's total station (0.658 µm, reference
// atmosphere 12 °C, 1013.25 hPa, 60 %), targets of −30 mm constant that
// the instrument did not apply, and their raw observations.
const rawScenarioJob = `crs = "EPSG:25832"
points = "points.csv"
geoid = "none"
length_unit = "m"
angle_unit = "deg"
out = "out"
default_instrument = "sub"
observations = ["raw.csv"]
[tolerance]
constant_mm = 5
ppm = 2
[instrument.sub]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5
`

// rawScenario is the invented delivery of TestAuditRawStages: the marks of
// the audit scenario and a high one, FIR, the subcontractor's raw
// observations of seven lines (each both ways) simulated from the control
// with the chain run backwards (reduce.Predict) and 0.8 mm of noise, and
// their delivered distances: each the control's value of its kind plus
// the mean noise of its two observations (what a correct reduction of the
// same observations gives), with an error put in by the formula a slip
// would follow.
type rawScenario struct {
	dir, config, file string
	want              map[string][2]string // id → stage and cause the raw comparison must name; absent: must pass
	fromControl       map[string]string    // id → the cause the control alone names
	rows, obs         int
}

func newRawScenario(t *testing.T) *rawScenario {
	t.Helper()
	dir := t.TempDir()
	marks := append(append([]scenarioMark{}, scenarioMarks...), scenarioMark{"FIR", 50.1210, 8.6400, 412.700, 47.99})
	pts := writeScenarioPoints(t, dir, marks)
	cfg := filepath.Join(dir, "job.toml")
	require.NoError(t, os.WriteFile(cfg, []byte(rawScenarioJob), 0o644))

	f, err := jobconfig.Parse([]byte(rawScenarioJob), cfg)
	require.NoError(t, err)
	j, err := jobconfig.Resolve(f, cfg)
	require.NoError(t, err)
	s, err := openJobSession(j)
	require.NoError(t, err)
	t.Cleanup(s.close)
	_, err = s.loadPoints(strings.NewReader(pts), "points.csv", warnTo(os.Stderr))
	require.NoError(t, err)
	plan, err := job.NewPlan(j.Settings(), s.crs, s.geod, s.control)
	require.NoError(t, err)
	sim := &simulator{job: j, s: s, plan: plan}
	chain := sim.profile().Chain

	sc := &rawScenario{dir: dir, config: cfg, file: filepath.Join(dir, "delivered.csv"),
		want: map[string][2]string{}, fromControl: map[string]string{}}
	rng := rand.New(rand.NewPCG(14, 2026))
	var raw, del strings.Builder
	raw.WriteString("# invented raw observations of the subcontractor\n")
	raw.WriteString("from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct\n")
	del.WriteString("id,from,to,kind,distance,sigma\n")
	// observe shoots a line both ways in warm, low air (about +21 ppm
	// against the reference) and returns the mean noise of the two and
	// the first velocity correction in ppm the reduction applies.
	observe := func(a, b string) (noise, ppm float64) {
		for _, ends := range [][2]string{{a, b}, {b, a}} {
			met := reduce.Atmosphere{TemperatureC: 26.5, PressureHPa: 987.5, HumidityPct: 55}
			obs := reduce.Observation{InstrumentHeight: 1.602, TargetHeight: 1.550, PrismConstant: -0.030,
				Meteorology: reduce.Meteorology{Instrument: met, HaveInstrument: true}}
			p := sim.predict(t, obs, chain, ends[0], ends[1])
			e := math.Round(rng.NormFloat64()*0.8) * 1e-4 * 10 // 0.8 mm, to 0.1 mm as the file is written
			zs, err := units.FormatAngle(p.Observation.Zenith, units.Degrees, 6)
			require.NoError(t, err)
			fmt.Fprintf(&raw, "%s,%s,%.4f,%s,1.602,1.550,26.5,987.5,55\n", ends[0], ends[1], p.Displayed.Slope+e, zs)
			noise += e / 2
			ppm += p.FirstVelocity.PPM / 2
			sc.obs++
		}
		return noise, ppm
	}
	line := func(a, b string) audit.LineControl {
		lc, _, err := job.AuditLine(s.control[a], s.control[b], s.geod, s.proj)
		require.NoError(t, err)
		return lc
	}
	deliver := func(id, a, b string, k audit.Kind, v float64) {
		fmt.Fprintf(&del, "%s,%s,%s,%s,%.4f,0.002\n", id, a, b, k, v)
		sc.rows++
	}
	value := func(l audit.LineControl, k audit.Kind) float64 {
		v, err := l.Reference(k)
		require.NoError(t, err)
		return v
	}

	// Clean: a grid and a sea-level distance as the raw observations give them.
	ab := line("ALDER", "BIRCH")
	e, _ := observe("ALDER", "BIRCH")
	deliver("r-clean-grid", "ALDER", "BIRCH", audit.Grid, value(ab, audit.Grid)+e)
	ce := line("CEDAR", "ELM")
	e, _ = observe("CEDAR", "ELM")
	deliver("r-clean-sea", "ELM", "CEDAR", audit.SeaLevel, value(ce, audit.SeaLevel)+e)

	// The atmospheric ppm applied twice, with no applied_ppm stated: the
	// control alone cannot name it; our first velocity correction can.
	bc := line("BIRCH", "CEDAR")
	e, ppm := observe("BIRCH", "CEDAR")
	deliver("r-ppm-twice", "BIRCH", "CEDAR", audit.Ellipsoid, bc.Ellipsoid*(1+ppm*1e-6)+e)
	sc.want["r-ppm-twice"] = [2]string{audit.StageAtmosphere, fmt.Sprintf("ppm applied twice (%+.4g ppm)", math.Round(ppm*10)/10)}
	sc.fromControl["r-ppm-twice"] = audit.NoKnownCause

	// The −30 mm prism constant added again to a ground distance.
	cd := line("CEDAR", "DOGWOOD")
	e, _ = observe("DOGWOOD", "CEDAR")
	g := value(cd, audit.Ground)
	deliver("r-prism-twice", "CEDAR", "DOGWOOD", audit.Ground, g-0.030*g/cd.Ellipsoid+e)
	sc.want["r-prism-twice"] = [2]string{audit.StageInstrument, "prism constant applied twice (-30 mm)"}
	sc.fromControl["r-prism-twice"] = audit.NoKnownCause

	// The elevation factor taken at FIR's height, not the marks' mean.
	fa := line("FIR", "ALDER")
	e, _ = observe("ALDER", "FIR")
	deliver("r-elevation-at-start", "FIR", "ALDER", audit.Grid, fa.Grid*(fa.Radius+fa.MeanHeight())/(fa.Radius+fa.HeightA)+e)
	sc.want["r-elevation-at-start"] = [2]string{audit.StageElevation, "elevation factor taken at the start mark's height, not the mean"}

	// A sea-level distance delivered as ellipsoidal: N/R · s.
	ae := line("ALDER", "ELM")
	e, _ = observe("ELM", "ALDER")
	deliver("r-sea-as-ellipsoid", "ALDER", "ELM", audit.Ellipsoid, value(ae, audit.SeaLevel)+e)
	sc.want["r-sea-as-ellipsoid"] = [2]string{audit.StageHeights, "a sea-level distance delivered as ellipsoidal (geoid separation ignored)"}

	// The scale factor applied twice, and a ground distance delivered as
	// grid, on the lines from FIR.
	fc := line("FIR", "CEDAR")
	e, _ = observe("FIR", "CEDAR")
	deliver("r-scale-twice", "FIR", "CEDAR", audit.Grid, fc.Grid*fc.LineScale+e)
	sc.want["r-scale-twice"] = [2]string{audit.StageScale, "scale factor applied twice"}
	fd := line("FIR", "DOGWOOD")
	e, _ = observe("DOGWOOD", "FIR")
	deliver("r-ground-as-grid", "DOGWOOD", "FIR", audit.Grid, value(fd, audit.Ground)+e)
	sc.want["r-ground-as-grid"] = [2]string{audit.StageKind, "grid and ground swapped (a ground distance delivered as grid)"}

	// A blunder of +18 mm that no usual error explains.
	de := line("DOGWOOD", "ELM")
	e, _ = observe("DOGWOOD", "ELM")
	deliver("r-blunder", "DOGWOOD", "ELM", audit.Ground, value(de, audit.Ground)+0.018+e)
	sc.want["r-blunder"] = [2]string{"", audit.NoKnownCause}

	// A raw row to a mark that is not in the points file.
	raw.WriteString("ALDER,NOWHERE,812.3456,89.5,1.602,1.550,26.5,987.5,55\n")
	sc.obs++
	require.NoError(t, os.WriteFile(filepath.Join(dir, "raw.csv"), []byte(raw.String()), 0o644))
	require.NoError(t, os.WriteFile(sc.file, []byte(del.String()), 0o644))
	return sc
}

// TestAuditRawStages: with the subcontractor's raw observations, each
// delivered distance is set beside our own reduction of them at every
// stage, each injected error is caught and named with its stage from
// that comparison (the ppm and the prism constant applied twice, which
// the control alone cannot name, among them), and nothing else is
// flagged.
func TestAuditRawStages(t *testing.T) {
	sc := newRawScenario(t)
	var stdout, stderr bytes.Buffer
	code := run([]string{"audit", "-config", sc.config, sc.file}, &stdout, &stderr)
	require.Equal(t, exitFlagged, code, "stdout:\n%s\nstderr:\n%s", &stdout, &stderr)
	out := filepath.Join(sc.dir, "out")
	rows, col := readColumns(t, filepath.Join(out, "audit.csv"))
	require.Len(t, rows, sc.rows+1)
	for _, r := range rows[1:] {
		id := r[col["id"]]
		assert.Equal(t, "2", r[col["raw_observations"]], "%s: both ways", id)
		for _, c := range []string{"raw_slope_m", "our_slope_m", "our_horizontal_m", "our_ellipsoid_m", "our_sea_level_m", "our_grid_m", "our_value_m"} {
			assert.NotEmpty(t, r[col[c]], "%s: %s", id, c)
		}
		want, bad := sc.want[id]
		if !bad {
			assert.Equal(t, "pass", r[col["verdict"]], "%s passes: %v", id, r)
			assert.Equal(t, "pass", r[col["delivered_vs_ours"]], id)
			assert.Empty(t, r[col["cause"]], "%s has nothing to explain: %s", id, r[col["raw_signatures_tested"]])
			assert.Empty(t, r[col["raw_cause"]], id)
			continue
		}
		assert.Equal(t, "fail", r[col["verdict"]], "%s is caught", id)
		assert.Equal(t, "fail", r[col["delivered_vs_ours"]], "%s differs from our reduction", id)
		assert.Equal(t, want[1], r[col["raw_cause"]], "%s is named from the raw comparison: %s", id, r[col["raw_signatures_tested"]])
		assert.Equal(t, want[0], r[col["raw_stage"]], "%s: the stage", id)
		assert.Equal(t, want[1], r[col["cause"]], "%s: the row's cause is the raw comparison's", id)
		assert.Equal(t, want[0], r[col["stage"]], id)
		if c, ok := sc.fromControl[id]; ok {
			assert.Equal(t, c, r[col["cause_from_control"]], "%s: the control alone does not name it", id)
		}
	}
	rej := readCSV(t, filepath.Join(out, "rejects.csv"))
	require.Len(t, rej, 2)
	assert.Equal(t, []string{"file", "line", "raw", "reason"}, rej[0])
	assert.Equal(t, filepath.Join(sc.dir, "raw.csv"), rej[1][0])
	assert.Equal(t, strconv.Itoa(sc.obs+2), rej[1][1], "the raw row's line: a comment, the header and the observations before it")
	assert.Equal(t, "ALDER,NOWHERE,812.3456,89.5,1.602,1.550,26.5,987.5,55", rej[1][2])
	assert.Contains(t, rej[1][3], fmt.Sprintf(`raw.csv:%d:2: target "NOWHERE" is not in the points file`, sc.obs+2))

	var sum struct {
		Counts struct {
			Read, Checked, Failed int
			ObsRead               int `json:"observations_read"`
			ObsReduced            int `json:"observations_reduced"`
			ObsRejected           int `json:"observations_rejected"`
			RawCompared           int `json:"raw_compared"`
			RawFailed             int `json:"raw_disagreements"`
		} `json:"counts"`
		Failing []struct {
			ID    string `json:"id"`
			Stage string `json:"stage"`
			Cause string `json:"cause"`
		} `json:"failing"`
	}
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &sum))
	assert.Equal(t, sc.obs, sum.Counts.ObsRead)
	assert.Equal(t, sum.Counts.ObsRead, sum.Counts.ObsReduced+sum.Counts.ObsRejected, "read = reduced + rejected")
	assert.Equal(t, 1, sum.Counts.ObsRejected)
	assert.Equal(t, sc.rows, sum.Counts.RawCompared)
	assert.Equal(t, len(sc.want), sum.Counts.RawFailed)
	assert.Equal(t, len(sc.want), sum.Counts.Failed)
	for _, f := range sum.Failing {
		assert.Equal(t, sc.want[f.ID][1], f.Cause, f.ID)
		assert.Equal(t, sc.want[f.ID][0], f.Stage, f.ID)
	}
	html, err := os.ReadFile(filepath.Join(out, "report.html"))
	require.NoError(t, err)
	assert.Contains(t, string(html), `<table id="raw">`)
	assert.Contains(t, stdout.String(), "(stage "+audit.StageAtmosphere+")")
}
