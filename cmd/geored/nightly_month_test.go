package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/history"
	"github.com/geored/geored/io/history/pgtest"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
)

// The month's invented network: twelve marks on a hillside in ETRS89 / UTM
// zone 32N, about 600 m apart, and two total stations, ts-north (whose
// additive constant drifts) and ts-south (stable). Every name and value
// is invented for the simulation.
const monthJob = `crs = "EPSG:25832"
points = "points.csv"
length_unit = "m"
angle_unit = "dms"
reduction_datum = "ellipsoid"
refraction_k = 0.13
default_instrument = "ts-north"

[tolerance]
constant_mm = 3
ppm = 3

[default_atmosphere]
temperature_c = 10
pressure_hpa = 960
humidity_pct = 70

[centring]
instrument_mm = 0.5
target_mm = 0.5
height_mm = 1

[instrument.ts-north]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
additive_constant_mm = 0.3
scale_ppm = 0
prism_constant_mm = -30
field_ppm = 0
field_prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5

[instrument.ts-south]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
additive_constant_mm = -0.2
scale_ppm = 0
prism_constant_mm = -30
field_ppm = 0
field_prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5
`

var monthMarks = []struct {
	id       string
	e, n, el float64
}{
	{"HS-01", 498210.412, 5402118.305, 402.31}, {"HS-02", 498805.120, 5402160.771, 415.82}, {"HS-03", 499417.903, 5402091.246, 431.07},
	{"HS-04", 498168.655, 5402731.580, 446.54}, {"HS-05", 498792.318, 5402702.914, 458.20}, {"HS-06", 499401.776, 5402748.120, 470.66},
	{"HS-07", 498231.092, 5403312.447, 489.13}, {"HS-08", 498826.541, 5403345.868, 497.75}, {"HS-09", 499388.204, 5403301.509, 512.40},
	// Three reference marks near the corners, for short lines: the fit of
	// constant and scale needs lengths over a factor 3 apart.
	{"RM-02", 498957.380, 5402251.005, 418.94}, {"RM-07", 498110.716, 5403473.290, 494.02}, {"RM-09", 499561.833, 5403240.117, 515.87},
}

const (
	monthNights   = 30
	monthDriftMM  = 0.2 // ts-north's additive constant, per night
	monthMoved    = "HS-05"
	monthMovedOn  = 20
	monthMovedMM  = 15
	monthFirstDay = 1 // 2026-11-01
)

func monthNight(n int) string { return fmt.Sprintf("2026-11-%02d", n) }

func monthPoints(moved bool) []byte {
	var b bytes.Buffer
	b.WriteString("# invented hillside network (simulation)\nid,easting,northing,elevation\n")
	for _, m := range monthMarks {
		e, n := m.e, m.n
		if moved && m.id == monthMoved {
			// 15 mm towards grid bearing 120°.
			e += monthMovedMM * 1e-3 * math.Sin(120*math.Pi/180)
			n += monthMovedMM * 1e-3 * math.Cos(120*math.Pi/180)
		}
		fmt.Fprintf(&b, "%s,%.4f,%.4f,%.2f\n", m.id, e, n, m.el)
	}
	return b.Bytes()
}

// monthLines are the pairs of marks under 1400 m apart.
func monthLines() [][2]string {
	var out [][2]string
	for i, a := range monthMarks {
		for _, b := range monthMarks[i+1:] {
			if math.Hypot(a.e-b.e, a.n-b.n) < 1400 {
				out = append(out, [2]string{a.id, b.id})
			}
		}
	}
	return out
}

// monthFiles simulates the month's observation files: per night one file
// per instrument, every line both ways once, through the chain run
// backwards (reduce.Predict) from the true marks with the EDM's 1 mm +
// 1.5 ppm, centring and zenith noise; ts-north's true additive constant
// grows by 0.2 mm a night from night 1, and from night 20 on HS-05
// truly stands 15 mm from its coordinates.
func monthFiles(t *testing.T) map[int]map[string][]byte {
	t.Helper()
	sims := []*simulator{newSimulator(t, []byte(monthJob), monthPoints(false)), newSimulator(t, []byte(monthJob), monthPoints(true))}
	defer sims[0].close()
	defer sims[1].close()
	lines := monthLines()
	rng := rand.New(rand.NewPCG(2026, 11))
	out := map[int]map[string][]byte{}
	for night := 1; night <= monthNights; night++ {
		sim := sims[0]
		if night >= monthMovedOn {
			sim = sims[1]
		}
		out[night] = map[string][]byte{}
		for _, inst := range []string{"ts-north", "ts-south"} {
			prof := sim.job.Profiles[inst]
			var b bytes.Buffer
			fmt.Fprintf(&b, "# %s, night %s (simulated)\n", inst, monthNight(night))
			b.WriteString("obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,instrument\n")
			id := 0
			for _, pr := range lines {
				for dir := range 2 {
					from, to := pr[0], pr[1]
					if dir == 1 {
						from, to = to, from
					}
					a := sim.s.control[from]
					hi := 1.55 + math.Round(rng.Float64()*150)/1000
					ht := 1.500 + 0.100*float64(rng.IntN(3))
					met := reduce.Atmosphere{
						TemperatureC: math.Round((6+rng.NormFloat64()*2)*10) / 10,
						PressureHPa:  math.Round((1013.25*math.Exp(-a.Orthometric/8000)+rng.NormFloat64()*0.3)*10) / 10,
						HumidityPct:  math.Round(70 + rng.NormFloat64()*5),
					}
					chain := prof.Chain
					chain.K = 0.13 + rng.NormFloat64()*0.02
					if inst == "ts-north" {
						chain.Instrument.AdditiveConstant += monthDriftMM * 1e-3 * float64(night-1)
					}
					obs := reduce.Observation{InstrumentHeight: hi, TargetHeight: ht, PrismConstant: prof.PrismConstant,
						Meteorology: reduce.Meteorology{Instrument: met, HaveInstrument: true}}
					p := sim.predict(t, obs, chain, from, to)
					d := p.Displayed.Slope
					d += rng.NormFloat64()*math.Hypot(1e-3, 1.5e-6*d) + rng.NormFloat64()*0.5e-3*math.Sqrt2
					z := p.Observation.Zenith + s1.Angle(rng.NormFloat64()*1.5/3600*math.Pi/180)
					zs, err := units.FormatAngle(z, units.PackedDMS, 1)
					require.NoError(t, err)
					id++
					fmt.Fprintf(&b, "%d,%s,%s,%.4f,%s,%.3f,%.3f,%.1f,%.1f,%.0f,%s\n", id, from, to, d, zs, hi, ht,
						met.TemperatureC, met.PressureHPa, met.HumidityPct, inst)
				}
			}
			out[night][inst] = b.Bytes()
		}
	}
	return out
}

// monthResult is what a month leaves: the alerts, and the outcome of
// every file by name.
type monthResult struct {
	alerts   []history.Alert
	outcomes map[string]string
	reasons  map[string]string
	counts   history.Counts
	html     []string // summary.html of the night the mark moved, and of the last night
	// summaryAlerts counts the alerts in the nights' summaries.
	summaryAlerts int
}

// runMonth delivers the month night by night into a job folder and runs
// geored nightly on each night, on the history at where ("" for SQLite in
// the folder): on night 8 a corrupt file arrives beside the night's
// files, on night 14 ts-south's file comes a second time under another
// name, night 20's run is killed (SIGKILL) before its alerts and not run
// again, and night 25's first run is killed once its first file is
// recorded, before it is moved, and run again.
func runMonth(t *testing.T, files map[int]map[string][]byte, where string) monthResult {
	t.Helper()
	bin := setBinary(t)
	dir := filepath.Join(t.TempDir(), "hillside")
	require.NoError(t, os.MkdirAll(filepath.Join(dir, "inbox"), 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(dir, "job.toml"), []byte(monthJob), 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(dir, "points.csv"), monthPoints(false), 0o644))
	cfg := filepath.Join(dir, "job.toml")
	if where == "" {
		where = filepath.Join(dir, "history.db")
	}
	res := monthResult{outcomes: map[string]string{}, reasons: map[string]string{}}
	for night := 1; night <= monthNights; night++ {
		for inst, b := range files[night] {
			name := fmt.Sprintf("%s-%02d.csv", strings.TrimPrefix(inst, "ts-"), night)
			require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", name), b, 0o644))
			if night == 14 && inst == "ts-south" {
				require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", "resent-south.csv"), b, 0o644))
			}
		}
		if night == 8 {
			require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", "garbled.csv"), []byte("from;to;slope\nHS-01;HS-02;600.1\n"), 0o644))
		}
		args := []string{"-config", cfg, "-history", where, "-night", monthNight(night)}
		if night == monthMovedOn {
			// Killed after the night's files are recorded and moved,
			// before its alerts: the next night's run computes them.
			cmd := exec.Command(bin, append([]string{"nightly", "-quiet"}, args...)...)
			cmd.Env = append(os.Environ(), envStopAt+"=alerts:"+monthNight(night))
			out, err := cmd.CombinedOutput()
			require.Error(t, err, "killed: %s", out)
			left, _ := os.ReadDir(filepath.Join(dir, "inbox"))
			require.Empty(t, left, "the killed run moved its files")
			continue
		}
		if night == 25 {
			cmd := exec.Command(bin, append([]string{"nightly", "-quiet"}, args...)...)
			cmd.Env = append(os.Environ(), envStopAt+"=recorded:north-25.csv")
			out, err := cmd.CombinedOutput()
			require.Error(t, err, "killed: %s", out)
			left, _ := os.ReadDir(filepath.Join(dir, "inbox"))
			require.Len(t, left, 2, "the killed run left both files in the inbox")
		}
		code, s, stderr := nightlyJSON(t, args...)
		require.Contains(t, []int{exitOK, exitFlagged}, code, "night %d: %s", night, stderr)
		if len(s.Alerts) > 0 {
			require.Equal(t, exitFlagged, code, "night %d: an alert needs a look", night)
			require.Contains(t, stderr, `"msg":"alert"`, "night %d: each alert logged", night)
		}
		for _, a := range s.Alerts {
			if night == monthMovedOn+1 && a.Night == monthNight(monthMovedOn) {
				continue // the killed night's, computed by this run
			}
			require.Equal(t, monthNight(night), a.Night, "the summary's alerts are the night's")
		}
		res.summaryAlerts += len(s.Alerts)
		for _, f := range s.Files {
			res.outcomes[f.Name] = f.Outcome
			res.reasons[f.Name] = f.Reason
		}
		left, _ := os.ReadDir(filepath.Join(dir, "inbox"))
		require.Empty(t, left, "night %d", night)
		if night == monthMovedOn+1 || night == monthNights {
			runs, _ := filepath.Glob(filepath.Join(dir, "results", monthNight(night), "run-*", "summary.html"))
			require.NotEmpty(t, runs)
			b, err := os.ReadFile(runs[len(runs)-1])
			require.NoError(t, err)
			res.html = append(res.html, string(b))
		}
	}
	st, err := history.Open(context.Background(), where)
	require.NoError(t, err)
	defer st.Close()
	res.alerts, err = st.Alerts(context.Background(), "hillside")
	require.NoError(t, err)
	res.counts, err = st.Count(context.Background(), "hillside")
	require.NoError(t, err)
	return res
}

// TestNightlyMonth: the simulated month, on SQLite and on PostgreSQL.
// ts-north's constant is reported as drifting from the night its trend
// is significant and past its 1 mm specification (0.2 mm a night passes
// 1 mm after night 6) to the month's end, HS-05 as moved on night 20,
// and nothing else; the resent file is processed once, the garbled one
// rejected with its reason, and the killed night finished with nothing
// lost or doubled; night 20, killed before its alerts, has them from
// the next night's run. Both stores give the same alerts.
func TestNightlyMonth(t *testing.T) {
	files := monthFiles(t)
	perNight := 2 * 2 * len(monthLines())
	check := func(t *testing.T, r monthResult) {
		t.Helper()
		for _, a := range r.alerts {
			t.Logf("%s %s %s: %s", a.Night, a.Kind, a.Subject, a.Message)
		}
		var driftNights []string
		var moved []string
		for _, a := range r.alerts {
			switch {
			case a.Kind == alertConstant && a.Subject == "ts-north":
				driftNights = append(driftNights, a.Night)
			case a.Kind == alertMark && a.Subject == monthMoved:
				moved = append(moved, a.Night)
			default:
				t.Errorf("unexpected alert %+v", a)
			}
		}
		require.Equal(t, []string{monthNight(monthMovedOn)}, moved)
		require.Equal(t, len(r.alerts), r.summaryAlerts, "each alert in its night's summary")
		require.NotEmpty(t, driftNights)
		first := slices.Index(allNights(), driftNights[0]) + 1
		require.GreaterOrEqual(t, first, 7, "not before the trend line passes 1 mm")
		require.LessOrEqual(t, first, 15, "within a week or so of passing it, as the test's power allows")
		require.Equal(t, allNights()[first-1:], driftNights, "every night from the first on")

		require.ElementsMatch(t, []string{"duplicate", "reduced"}, []string{r.outcomes["resent-south.csv"], r.outcomes["south-14.csv"]}, "processed once")
		require.Equal(t, "rejected", r.outcomes["garbled.csv"])
		require.Contains(t, r.reasons["garbled.csv"], "missing required column")
		// The plots beside the alerts: the moved mark's lines, and the
		// drifting constant with its Theil–Sen line.
		require.Contains(t, r.html[0], "<figcaption>the residuals of the lines at HS-05, night by night</figcaption>")
		require.Contains(t, r.html[0], "<svg viewBox=")
		require.Contains(t, r.html[1], "<figcaption>additive constant of ts-north, night by night, and its trend</figcaption>")
		require.Contains(t, r.html[1], "Theil–Sen: -0.1")
		require.NotContains(t, r.html[1], "lines at HS-05", "the mark moved on night 20 only")
		require.Equal(t, history.Counts{Files: 2*monthNights + 1, Observations: monthNights * perNight,
			Lines: monthNights * perNight / 2, Fits: 2 * monthNights}, r.counts)
	}
	var lite monthResult
	t.Run("sqlite", func(t *testing.T) {
		lite = runMonth(t, files, "")
		check(t, lite)
	})
	t.Run("postgres", func(t *testing.T) {
		pg := runMonth(t, files, pgtest.Start(t))
		check(t, pg)
		require.Equal(t, lite.alerts, pg.alerts, "the same alerts on both stores")
	})
}

func allNights() []string {
	var out []string
	for n := 1; n <= monthNights; n++ {
		out = append(out, monthNight(n))
	}
	return out
}

// monthFolder is a job folder of the month's job and points.
func monthFolder(t *testing.T, job string) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "hillside")
	require.NoError(t, os.MkdirAll(filepath.Join(dir, "inbox"), 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(dir, "job.toml"), []byte(job), 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(dir, "points.csv"), monthPoints(false), 0o644))
	return dir
}

// TestNightlyNoProfileNote: an instrument of the history that the job no
// longer has a profile for is said once per run, in the log and the
// summary's notes, though the run computes two nights where it has fits.
func TestNightlyNoProfileNote(t *testing.T) {
	files := monthFiles(t)
	bin := setBinary(t)
	dir := monthFolder(t, monthJob)
	cfg := filepath.Join(dir, "job.toml")
	for night := 1; night <= 2; night++ {
		for inst, b := range files[night] {
			require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", fmt.Sprintf("%s-%02d.csv", inst, night)), b, 0o644))
		}
		// Killed before the first night's alerts: both nights are due.
		cmd := exec.Command(bin, "nightly", "-quiet", "-config", cfg, "-night", monthNight(night))
		cmd.Env = append(os.Environ(), envStopAt+"=alerts:"+monthNight(1))
		out, err := cmd.CombinedOutput()
		require.Error(t, err, "killed: %s", out)
	}
	south := strings.Index(monthJob, "[instrument.ts-south]")
	require.NoError(t, os.WriteFile(cfg, []byte(monthJob[:south]), 0o644))
	code, s, stderr := nightlyJSON(t, "-config", cfg, "-night", monthNight(3))
	require.Equal(t, exitOK, code, stderr)
	require.Equal(t, []string{"instrument ts-south is in the history but the job has no [instrument.ts-south] profile: its trend is not searched for drift"}, s.Notes)
	require.Equal(t, 1, strings.Count(stderr, `"msg":"note"`), stderr)
	require.Contains(t, stderr, `"level":"WARN","msg":"note","message":"instrument ts-south`)
	runs, _ := filepath.Glob(filepath.Join(dir, "results", monthNight(3), "run-*", "summary.html"))
	require.Len(t, runs, 1)
	b, err := os.ReadFile(runs[0])
	require.NoError(t, err)
	require.Contains(t, string(b), "<li>instrument ts-south is in the history")
}

// TestNightlyTrendSinceCalibration: ts-north calibrated on night 10 (its
// constant drifting on) has its trend from night 10 alone: no alert
// before the sixth night since, and each alert names the nights since
// the calibration. Without the setting the month alerts from night 12.
func TestNightlyTrendSinceCalibration(t *testing.T) {
	files := monthFiles(t)
	calibrated := monthNight(10)
	job := strings.Replace(monthJob, "[instrument.ts-north]\n", "[instrument.ts-north]\ncalibrated = \""+calibrated+"\"\n", 1)
	dir := monthFolder(t, job)
	cfg := filepath.Join(dir, "job.toml")
	var first int
	for night := 1; night <= 24; night++ {
		for inst, b := range files[night] {
			require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", fmt.Sprintf("%s-%02d.csv", inst, night)), b, 0o644))
		}
		code, s, stderr := nightlyJSON(t, "-config", cfg, "-night", monthNight(night))
		require.Contains(t, []int{exitOK, exitFlagged}, code, stderr)
		for _, a := range s.Alerts {
			if a.Kind != alertConstant {
				continue
			}
			require.Equal(t, "ts-north", a.Subject)
			require.Contains(t, a.Message, fmt.Sprintf("Theil–Sen over %d nights since its calibration on %s)", night-9, calibrated))
			if first == 0 {
				first = night
			}
		}
	}
	require.NotZero(t, first, "the drift is found again after the calibration")
	require.GreaterOrEqual(t, first, 15, "not before six nights since the calibration")
}
