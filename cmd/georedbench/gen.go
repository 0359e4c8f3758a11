package main

import (
	"bufio"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"

	"github.com/golang/geo/s1"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// The synthetic job's settings; its values are invented.
const benchJob = `# georedbench: a synthetic job (invented values).
crs = "EPSG:25832"
points = "points.csv"
observations = ["observations.csv"]
out = "out"
angle_unit = "deg"
default_instrument = "ts"

[tolerance]
constant_mm = 5
ppm = 5

[default_atmosphere]
temperature_c = 15
pressure_hpa = 1000
humidity_pct = 60

[centring]
instrument_mm = 0.5
target_mm = 0.5
height_mm = 1

[instrument.ts]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
prism_constant_mm = -30
field_prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5
`

// gen writes a deterministic synthetic job: points on a jittered 1 km grid
// in ETRS89 / UTM zone 32N, distinct lines between grid neighbours up to
// 3 cells apart, and observations simulated through the chain run
// backwards with noise, in random order.
func gen(args []string) error {
	fs := flag.NewFlagSet("gen", flag.ContinueOnError)
	dir := fs.String("dir", "", "output folder")
	nPoints := fs.Int("points", 10000, "points (a square grid)")
	nLines := fs.Int("lines", 200000, "distinct lines")
	nObs := fs.Int("obs", 1000000, "observations")
	seed := fs.Uint64("seed", 6, "random seed")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if *dir == "" {
		return fmt.Errorf("gen: -dir is required")
	}
	if err := os.MkdirAll(*dir, 0o755); err != nil {
		return err
	}
	rng := rand.New(rand.NewPCG(*seed, 2026))
	side := int(math.Sqrt(float64(*nPoints)))
	if side*side != *nPoints {
		return fmt.Errorf("gen: -points %d is not a square", *nPoints)
	}

	// Points.
	var pb strings.Builder
	pb.WriteString("id,easting,northing,elevation\n")
	for i := range side {
		for j := range side {
			e := 450000 + float64(j)*1000 + rng.NormFloat64()*150
			n := 5650000 + float64(i)*1000 + rng.NormFloat64()*150
			h := 200 + 150*math.Sin(float64(i)/9)*math.Cos(float64(j)/13) + rng.Float64()*20
			fmt.Fprintf(&pb, "P%05d,%.3f,%.3f,%.3f\n", i*side+j, e, n, h)
		}
	}
	if err := os.WriteFile(filepath.Join(*dir, "points.csv"), []byte(pb.String()), 0o644); err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(*dir, "job.toml"), []byte(benchJob), 0o644); err != nil {
		return err
	}

	// The chain's view of the control, as geored will see it.
	f, err := jobconfig.Parse([]byte(benchJob), "job.toml")
	if err != nil {
		return err
	}
	j, err := jobconfig.Resolve(f, "job.toml")
	if err != nil {
		return err
	}
	crs, err := geodesic.OpenCRS(j.CRS)
	if err != nil {
		return err
	}
	g, err := geodesic.NewGeodesic(crs.Ellipsoid())
	if err != nil {
		return err
	}
	proj, err := crs.NewProjector()
	if err != nil {
		return err
	}
	defer proj.Close()
	geoid, err := geodesic.OpenGeoid("")
	if err != nil {
		return err
	}
	defer geoid.Close()
	pts, _, err := obsfile.ReadPoints(strings.NewReader(pb.String()), "points.csv", obsfile.PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre})
	if err != nil {
		return err
	}
	control, err := job.ResolveControl(pts, "points.csv", proj, job.Separations{Grid: geoid})
	if err != nil {
		return err
	}
	plan, err := job.NewPlan(j.Settings(), crs, g, control)
	if err != nil {
		return err
	}
	prof := j.Profiles["ts"]

	// Distinct lines between neighbours.
	type pair struct{ a, b int }
	var all []pair
	for i := range side {
		for jj := range side {
			for di := 0; di <= 3; di++ {
				for dj := -3; dj <= 3; dj++ {
					if di == 0 && dj <= 0 {
						continue
					}
					i2, j2 := i+di, jj+dj
					if i2 < side && j2 >= 0 && j2 < side {
						all = append(all, pair{i*side + jj, i2*side + j2})
					}
				}
			}
		}
	}
	if *nLines > len(all) {
		return fmt.Errorf("gen: only %d distinct neighbour lines", len(all))
	}
	rng.Shuffle(len(all), func(x, y int) { all[x], all[y] = all[y], all[x] })
	lines := all[:*nLines]
	ids := func(k int) string { return fmt.Sprintf("P%05d", k) }
	cache := make([][2]*reduce.Line, len(lines))

	of, err := os.Create(filepath.Join(*dir, "observations.csv"))
	if err != nil {
		return err
	}
	defer of.Close()
	ow := bufio.NewWriterSize(of, 1<<20)
	gf, err := os.Create(filepath.Join(*dir, "geod.txt"))
	if err != nil {
		return err
	}
	defer gf.Close()
	gw := bufio.NewWriterSize(gf, 1<<20)
	ow.WriteString("obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct\n")
	for k := range *nObs {
		li := k % len(lines)
		if k >= len(lines) {
			li = rng.IntN(len(lines))
		}
		dir := rng.IntN(2)
		a, b := ids(lines[li].a), ids(lines[li].b)
		if dir == 1 {
			a, b = b, a
		}
		if cache[li][dir] == nil {
			l, _, err := job.NewReduceLine(control[a], control[b], g, proj)
			if err != nil {
				return err
			}
			cache[li][dir] = &l
		}
		hi := 1.5 + rng.Float64()*0.2
		ht := 1.5 + 0.1*float64(rng.IntN(3))
		met := reduce.Atmosphere{TemperatureC: 5 + rng.Float64()*20, PressureHPa: 990 + rng.Float64()*20, HumidityPct: 40 + rng.Float64()*50}
		obs := reduce.Observation{InstrumentHeight: hi, TargetHeight: ht, PrismConstant: prof.PrismConstant,
			Meteorology: reduce.Meteorology{Instrument: met, HaveInstrument: true}}
		ma, okA := plan.Mark(a)
		mb, okB := plan.Mark(b)
		if !okA || !okB {
			return fmt.Errorf("observation %d (%s → %s): a point has no mark height", k, a, b)
		}
		p, err := reduce.Predict(obs, prof.Chain, *cache[li][dir], ma, mb)
		if err != nil {
			return fmt.Errorf("observation %d (%s → %s): %w", k, a, b, err)
		}
		d := p.Displayed.Slope + rng.NormFloat64()*math.Hypot(1e-3, 1.5e-6*p.Displayed.Slope)
		// read from the plumb line, which the geoid tilts against the
		// prediction's ellipsoid normal by its slope along the line
		// (reduce.CheckTargetHeight), with 1.5″ of noise
		tilt := (mb.Separation.N - ma.Separation.N) / cache[li][dir].Inverse.Distance
		z := (p.Observation.Zenith + s1.Angle(tilt)).Degrees() + rng.NormFloat64()*1.5/3600
		fmt.Fprintf(ow, "%d,%s,%s,%.4f,%.6f,%.3f,%.3f,%.1f,%.1f,%.0f\n", k+1, a, b, d, z, hi, ht, met.TemperatureC, met.PressureHPa, met.HumidityPct)
		ca, cb := control[a].LatLng, control[b].LatLng
		fmt.Fprintf(gw, "%.10f %.10f %.10f %.10f\n", ca.Lat.Degrees(), ca.Lng.Degrees(), cb.Lat.Degrees(), cb.Lng.Degrees())
	}
	if err := ow.Flush(); err != nil {
		return err
	}
	return gw.Flush()
}
