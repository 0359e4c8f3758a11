package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// noiseJob is an invented network's job: a 1 mm + 1.5 ppm EDM, centring
// and height σ, and a wide tolerance, so that only the |w| test and the
// global test speak.
const noiseJob = `crs = "EPSG:25832"
points = "points.csv"
observations = ["observations.csv"]
out = "out"
angle_unit = "deg"
default_instrument = "ts"
%s
[tolerance]
constant_mm = 20
ppm = 20

[default_atmosphere]
temperature_c = 15
pressure_hpa = 1000
humidity_pct = 60

[centring]
instrument_mm = %[2]g
target_mm = %[2]g
height_mm = %[3]g

[instrument.ts]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
prism_constant_mm = -30
field_prism_constant_mm = -30
spec_mm = %[4]g
spec_ppm = %[5]g
`

// writeNoiseJob writes an invented network of 12 × 12 points on a
// jittered 600 m grid and nObs observations of its neighbour lines, each
// simulated through the chain run backwards (reduce.Predict) with noise
// of exactly the σ the job gives it (the reduction's total σ), so that
// its standardized residuals are standard normal. It returns the folder.
func writeNoiseJob(t *testing.T, nObs int, seed uint64) string {
	t.Helper()
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(seed, 1202))
	var pb strings.Builder
	pb.WriteString("id,easting,northing,elevation\n")
	const side = 12
	for i := range side {
		for j := range side {
			fmt.Fprintf(&pb, "N%03d,%.3f,%.3f,%.3f\n", i*side+j, 480000+float64(j)*600+rng.NormFloat64()*80,
				5700000+float64(i)*600+rng.NormFloat64()*80, 120+40*math.Sin(float64(i)/3)*math.Cos(float64(j)/4)+rng.Float64()*10)
		}
	}
	require.NoError(t, os.WriteFile(filepath.Join(dir, "points.csv"), []byte(pb.String()), 0o644))
	text := fmt.Sprintf(noiseJob, "", 0.5, 1.0, 1.0, 1.5)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "job.toml"), []byte(text), 0o644))

	f, err := jobconfig.Parse([]byte(text), "job.toml")
	require.NoError(t, err)
	j, err := jobconfig.Resolve(f, "job.toml")
	require.NoError(t, err)
	s, err := openSession(j.CRS, "", units.Metre)
	require.NoError(t, err)
	defer s.close()
	_, err = s.loadPoints(strings.NewReader(pb.String()), "points.csv", warnTo(os.Stderr))
	require.NoError(t, err)
	plan, err := job.NewPlan(j.Settings(), s.crs, s.geod, s.control)
	require.NoError(t, err)
	prof := j.Profiles["ts"]

	// Lines to the neighbours up to two cells away: 100 m to 1.8 km.
	type pair struct{ a, b string }
	var lines []pair
	id := func(i, j int) string { return fmt.Sprintf("N%03d", i*side+j) }
	for i := range side {
		for j := range side {
			for di := 0; di <= 2; di++ {
				for dj := -2; dj <= 2; dj++ {
					if (di == 0 && dj <= 0) || i+di >= side || j+dj < 0 || j+dj >= side {
						continue
					}
					lines = append(lines, pair{id(i, j), id(i+di, j+dj)})
				}
			}
		}
	}
	var ob bytes.Buffer
	ob.WriteString("from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct\n")
	for k := range nObs {
		p := lines[k%len(lines)]
		from, to := p.a, p.b
		if rng.IntN(2) == 1 {
			from, to = to, from
		}
		line, _, err := job.NewReduceLine(s.control[from], s.control[to], s.geod, s.proj)
		require.NoError(t, err)
		ma, okA := plan.Mark(from)
		mb, okB := plan.Mark(to)
		require.True(t, okA && okB)
		met := reduce.Atmosphere{TemperatureC: 5 + rng.Float64()*20, PressureHPa: 990 + rng.Float64()*20, HumidityPct: 40 + rng.Float64()*50}
		obs := reduce.Observation{InstrumentHeight: 1.5 + rng.Float64()*0.2, TargetHeight: 1.5 + 0.1*float64(rng.IntN(3)),
			PrismConstant: prof.PrismConstant, Meteorology: reduce.Meteorology{Instrument: met, HaveInstrument: true}}
		pr, err := reduce.Predict(obs, prof.Chain, line, ma, mb)
		require.NoError(t, err)
		// The σ the job gives this observation: its reduction's total.
		obs.SlopeDistance, obs.Zenith = pr.Displayed.Slope, pr.Observation.Zenith
		r, err := reduce.Reduce(obs, prof.Chain, line, ma, mb)
		require.NoError(t, err)
		d := pr.Displayed.Slope + rng.NormFloat64()*r.Uncertainty.Total
		z := pr.Observation.Zenith + s1.Angle(rng.NormFloat64()*1.0/3600*math.Pi/180)
		fmt.Fprintf(&ob, "%s,%s,%.5f,%.7f,%.4f,%.1f,%.2f,%.2f,%.1f\n", from, to, d, z.Degrees(), obs.InstrumentHeight, obs.TargetHeight,
			met.TemperatureC, met.PressureHPa, met.HumidityPct)
	}
	require.NoError(t, os.WriteFile(filepath.Join(dir, "observations.csv"), ob.Bytes(), 0o644))
	return dir
}

// runNoiseJob reduces the folder's observations under the job text given
// and returns the process status and the summary.
func runNoiseJob(t *testing.T, dir, text string) (int, report.Summary) {
	t.Helper()
	name := filepath.Join(dir, fmt.Sprintf("job-%d.toml", len(text)))
	require.NoError(t, os.WriteFile(name, []byte(text), 0o644))
	out := filepath.Join(dir, "out")
	require.NoError(t, os.RemoveAll(out))
	code, _, stderr := runCmd(t, "reduce", "-config", name, "-quiet")
	require.NotEqual(t, exitFailed, code, stderr)
	var sum report.Summary
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &sum))
	return code, sum
}

// A noise-only job at the spec: per observation at α₀ = 0.1 %, about
// n·α₀ observations are flagged by chance (Poisson; within four of its
// σ here, seeded), and the global test passes; with job_alpha = 0.05
// the Šidák critical value leaves none flagged and the run is clean; the
// same observations with every σ understated by 30 % fail the global
// test (Σw²/n near 1/0.7² = 2.04).
func TestGlobalTestOnNoiseOnlyJob(t *testing.T) {
	const n = 12000
	dir := writeNoiseJob(t, n, 7)

	_, sum := runNoiseJob(t, dir, fmt.Sprintf(noiseJob, "", 0.5, 1.0, 1.0, 1.5))
	require.Equal(t, n, sum.Counts.Reduced)
	tst := sum.Testing
	assert.Equal(t, report.ScopeObservation, tst.Scope)
	assert.InDelta(t, n*0.001, tst.ExpectedByChance, 1e-9, "n·α₀")
	assert.InDeltaf(t, tst.ExpectedByChance, float64(tst.Outliers), 4*math.Sqrt(tst.ExpectedByChance), "outliers against chance")
	require.NotNil(t, tst.Global)
	g := tst.Global
	t.Logf("α₀: %d outliers, %.1f expected; variance factor %.4f in %.4f..%.4f; %d flagged lines", tst.Outliers, tst.ExpectedByChance, g.VarianceFactor, g.Lower, g.Upper, sum.Counts.FlaggedLines)
	assert.Equal(t, "pass", g.Outcome, "variance factor %.4f within %.4f..%.4f", g.VarianceFactor, g.Lower, g.Upper)
	assert.InDelta(t, 1, g.VarianceFactor, 0.03)

	code, sum := runNoiseJob(t, dir, fmt.Sprintf(noiseJob, "job_alpha = 0.05", 0.5, 1.0, 1.0, 1.5))
	assert.Equal(t, report.ScopeJob, sum.Testing.Scope)
	assert.Equal(t, n, sum.Testing.Tests, "Šidák over the rows counted before the run")
	c, err := reduce.SidakCritical(0.05, n)
	require.NoError(t, err)
	assert.InDelta(t, c, sum.Testing.Critical, 1e-12)
	assert.InDelta(t, c, sum.Settings.CriticalValue, 1e-12)
	assert.LessOrEqual(t, sum.Testing.Outliers, 2, "about 0.05 expected in the whole job")
	assert.Equal(t, "pass", sum.Testing.Global.Outcome)
	assert.Equal(t, exitOK, code, "noise alone at the spec is clean with a job-wide α: %v", sum.Reasons)

	// σ understated by 30 %: every term of the budget × 0.7.
	code, sum = runNoiseJob(t, dir, fmt.Sprintf(noiseJob, "", 0.35, 0.7, 0.7, 1.05))
	g = sum.Testing.Global
	t.Logf("σ × 0.7: variance factor %.4f", g.VarianceFactor)
	assert.Equal(t, "too large", g.Outcome)
	assert.InDelta(t, 1/(0.7*0.7), g.VarianceFactor, 0.08)
	assert.Equal(t, exitFlagged, code)
	assert.Contains(t, strings.Join(sum.Reasons, "\n"), "global test failed")
}
