package main

import (
	"bytes"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

var update = flag.Bool("update", false, "rewrite golden files and the demo's simulated observations")

// simulateDemo makes the demo's observations from its control: each line
// of demo/lines.csv in both directions, two sets each, through the chain
// run backwards (reduce.Predict) with realistic noise — the EDM's 1 mm +
// 1.5 ppm, centring, 1.5″ of zenith angle read from the plumb line, a
// coefficient of refraction varying around the job's — and three
// deliberate blunders and two rows
// that cannot be read. The values are invented; the seed fixes them.
func simulateDemo(t *testing.T) []byte {
	t.Helper()
	sim := newSimulator(t, mustDemo(t, "demo/job.toml"), mustDemo(t, "demo/points.csv"))
	defer sim.close()
	pairs, err := readLinePairs(bytes.NewReader(mustDemo(t, "demo/lines.csv")), "demo/lines.csv")
	require.NoError(t, err)
	prof := sim.profile()
	s := sim.s

	rng := rand.New(rand.NewPCG(2026, 1202))
	var b bytes.Buffer
	b.WriteString("# geored demo: observations simulated from the demo control (invented data).\n")
	b.WriteString("obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm\n")
	id := 0
	clock := 0.0
	for set := 1; set <= 2; set++ {
		for _, pr := range pairs {
			for dir := 0; dir < 2; dir++ {
				from, to := pr[0], pr[1]
				if dir == 1 {
					from, to = to, from
				}
				a := s.control[from]
				hi := 1.55 + math.Round(rng.Float64()*150)/1000
				ht := 1.500 + 0.100*float64(rng.IntN(3))
				clock += 1
				met := reduce.Atmosphere{
					TemperatureC: math.Round((8.5+0.08*clock+rng.NormFloat64()*0.3)*10) / 10,
					PressureHPa:  math.Round((1008.6-0.12*(a.Orthometric-45)+rng.NormFloat64()*0.2)*10) / 10,
					HumidityPct:  math.Round(78 + rng.NormFloat64()*3),
				}
				trueProf := prof.Chain
				trueProf.K = 0.13 + rng.NormFloat64()*0.02
				prism, recordedPrism := prof.PrismConstant, ""
				id++
				// Blunder 2: both sets from SB-PILLAR2 to WATERTOWER went to
				// a reflector with a 0 mm constant, recorded as the default.
				if from == "SB-PILLAR2" && to == "WATERTOWER" {
					prism = 0
				}
				// Blunder 3: in set 2 the sight from SB-PILLAR1 to
				// NB-PILLAR2 was booked to NB-PILLAR1.
				booked := to
				if set == 2 && from == "SB-PILLAR1" && to == "NB-PILLAR2" {
					booked = "NB-PILLAR1"
				}
				obs := reduce.Observation{InstrumentHeight: hi, TargetHeight: ht, PrismConstant: prism,
					Meteorology: reduce.Meteorology{Instrument: met, HaveInstrument: true}}
				p := sim.predict(t, obs, trueProf, from, to)
				d := p.Displayed.Slope
				edm := math.Hypot(1e-3, 1.5e-6*d)
				d += rng.NormFloat64()*edm + rng.NormFloat64()*0.5e-3*math.Sqrt2
				z := p.Observation.Zenith + s1.Angle(rng.NormFloat64()*1.5/3600*math.Pi/180)
				ds := fmt.Sprintf("%.4f", d)
				// Blunder 1: two digits swapped when set 1 of NB-PILLAR2 to
				// SB-PILLAR1 was booked.
				if set == 1 && from == "NB-PILLAR2" && to == "SB-PILLAR1" {
					ds = swapDecimals(ds)
				}
				zs, err := units.FormatAngle(z, units.PackedDMS, 1)
				require.NoError(t, err)
				fmt.Fprintf(&b, "%d,%s,%s,%s,%s,%.3f,%.3f,%.1f,%.1f,%.0f,%s\n", id, from, booked, ds, zs, hi, ht,
					met.TemperatureC, met.PressureHPa, met.HumidityPct, recordedPrism)
			}
		}
	}
	// Two rows that cannot be reduced: a target that is not in the points
	// file, and a zenith angle booked face right without reduction.
	fmt.Fprintf(&b, "%d,NB-PILLAR1,SB-PILLAR3,701.2210,90.0312,1.602,1.600,11.4,1008.1,80,\n", id+1)
	fmt.Fprintf(&b, "%d,HILLTOP,NB-PILLAR1,5626.3512,269.0944,1.580,1.500,11.5,998.5,79,\n", id+2)
	return b.Bytes()
}

// A simulator runs the chain backwards (reduce.Predict) over a job's
// control: what an instrument would display between two of its points.
type simulator struct {
	job  *jobconfig.Job
	s    *session
	plan *job.Plan
}

// newSimulator opens the job of jobTOML (named demo/job.toml) over the
// control points of points.
func newSimulator(t *testing.T, jobTOML, points []byte) *simulator {
	t.Helper()
	f, err := jobconfig.Parse(jobTOML, "demo/job.toml")
	require.NoError(t, err)
	j, err := jobconfig.Resolve(f, "demo/job.toml")
	require.NoError(t, err)
	s, err := openSession(j.CRS, "", units.Metre)
	require.NoError(t, err)
	_, err = s.loadPoints(bytes.NewReader(points), "points.csv", warnTo(os.Stderr))
	if err != nil {
		s.close()
		require.NoError(t, err)
	}
	plan, err := job.NewPlan(j.Settings(), s.crs, s.geod, s.control)
	if err != nil {
		s.close()
		require.NoError(t, err)
	}
	return &simulator{job: j, s: s, plan: plan}
}

func (sim *simulator) close() { sim.s.close() }

// profile is the job's default instrument profile.
func (sim *simulator) profile() jobconfig.Profile { return sim.job.Profiles[sim.job.DefaultInstrument] }

// predict is what an instrument whose chain is chain displays for obs
// from point from to point to. Its zenith angle is read from the plumb
// line, which the geoid tilts against the ellipsoid's normal by its
// slope along the line, (N_B − N_A)/s: reduce.Predict's zenith is from
// the normal.
func (sim *simulator) predict(t *testing.T, obs reduce.Observation, chain reduce.Job, from, to string) reduce.Prediction {
	t.Helper()
	s := sim.s
	line, _, err := job.NewReduceLine(s.control[from], s.control[to], s.geod, s.proj)
	require.NoError(t, err)
	mFrom, okFrom := sim.plan.Mark(from)
	mTo, okTo := sim.plan.Mark(to)
	require.True(t, okFrom && okTo)
	p, err := reduce.Predict(obs, chain, line, mFrom, mTo)
	require.NoError(t, err)
	p.Observation.Zenith += s1.Angle((mTo.Separation.N - mFrom.Separation.N) / line.Inverse.Distance)
	return p
}

// swapDecimals swaps the second and third decimals of a number written
// with four, as a booking slip would: 921.6581 → 921.6851.
func swapDecimals(s string) string {
	b := []byte(s)
	n := len(b)
	b[n-3], b[n-2] = b[n-2], b[n-3]
	return string(b)
}

func mustDemo(t *testing.T, name string) []byte {
	t.Helper()
	b, err := demoFiles.ReadFile(name)
	require.NoError(t, err)
	return b
}

// The embedded demo observations are what simulateDemo makes from the
// demo control; `go test ./cmd/geored -run DemoObservations -update`
// rewrites them.
func TestDemoObservationsAreSimulated(t *testing.T) {
	got := simulateDemo(t)
	if *update {
		require.NoError(t, os.WriteFile("demo/observations.csv", got, 0o644))
	}
	want, err := os.ReadFile("demo/observations.csv")
	require.NoError(t, err)
	require.Equal(t, string(want), string(got))
}
