package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s2"

	"github.com/geored/geored/geodesic"
)

// benchAuditNetwork writes an invented GNSS network into dir: a 50 × 50
// lattice of marks 400 m apart near 50.1°N 8.6°E on ETRS89 / UTM zone
// 32N, vectors to each mark's east, north, north-east and north-west
// neighbours and repeats of the first, 10,000 vectors in all, each the
// control's difference plus a few millimetres of noise. It returns the
// job file and the baselines file.
func benchAuditNetwork(b *testing.B, dir string) (string, string) {
	b.Helper()
	const side, spacing, vectors = 50, 400.0, 10000
	crs, err := geodesic.OpenCRS("EPSG:25832")
	if err != nil {
		b.Fatal(err)
	}
	p, err := crs.NewProjector()
	if err != nil {
		b.Fatal(err)
	}
	defer p.Close()
	rng := rand.New(rand.NewPCG(10, 10000))
	var pts strings.Builder
	pts.WriteString("id,lat,lon,ellipsoid_height,geoid_separation\n")
	x := make([]r3.Vector, side*side)
	name := func(i, j int) string { return fmt.Sprintf("M%02d%02d", i, j) }
	for i := range side {
		for j := range side {
			ll := s2.LatLngFromDegrees(50.1+float64(i)*spacing/111200, 8.6+float64(j)*spacing/71400)
			h := 120 + 60*rng.Float64()
			fmt.Fprintf(&pts, "%s,%.9f,%.9f,%.4f,47.9\n", name(i, j), ll.Lat.Degrees(), ll.Lng.Degrees(), h)
			if x[i*side+j], err = p.ToGeocentric(ll, h); err != nil {
				b.Fatal(err)
			}
		}
	}
	var vec strings.Builder
	vec.WriteString("from,to,kind,dx,dy,dz,sigma_x,sigma_y,sigma_z\n")
	n := 0
	add := func(i, j, k, l int) {
		if n == vectors || k < 0 || k >= side || l < 0 || l >= side {
			return
		}
		d := x[k*side+l].Sub(x[i*side+j]).Add(r3.Vector{X: rng.NormFloat64() * 2e-3, Y: rng.NormFloat64() * 2e-3, Z: rng.NormFloat64() * 3e-3})
		fmt.Fprintf(&vec, "%s,%s,vector,%.4f,%.4f,%.4f,0.003,0.003,0.005\n", name(i, j), name(k, l), d.X, d.Y, d.Z)
		n++
	}
	for _, step := range [][2]int{{0, 1}, {1, 0}, {1, 1}, {1, -1}, {0, 1}} {
		for i := range side {
			for j := range side {
				add(i, j, i+step[0], j+step[1])
			}
		}
	}
	if n != vectors {
		b.Fatalf("%d vectors, want %d", n, vectors)
	}
	job := filepath.Join(dir, "job.toml")
	cfg := "crs = \"EPSG:25832\"\npoints = \"points.csv\"\ngeoid = \"none\"\nout = \"out\"\n[tolerance]\nconstant_mm = 10\nppm = 2\n"
	for _, f := range []struct{ name, text string }{{job, cfg}, {filepath.Join(dir, "points.csv"), pts.String()}, {filepath.Join(dir, "vectors.csv"), vec.String()}} {
		if err := os.WriteFile(f.name, []byte(f.text), 0o644); err != nil {
			b.Fatal(err)
		}
	}
	return job, filepath.Join(dir, "vectors.csv")
}

// BenchmarkAudit10000Vectors is a whole audit of a network of 10,000 GNSS
// vectors: the baselines read, each vector laid from its start mark and
// its end brought back to the ellipsoid and the grid through PROJ, the
// control line's inverse and grid distance, every independent loop, and
// the output set written.
func BenchmarkAudit10000Vectors(b *testing.B) {
	dir := b.TempDir()
	job, vectors := benchAuditNetwork(b, dir)
	for b.Loop() {
		if code := run([]string{"audit", "-config", job, "-quiet", vectors}, io.Discard, io.Discard); code > exitFlagged {
			b.Fatalf("exit status %d", code)
		}
	}
	st, err := os.Stat(filepath.Join(dir, "out", "loops.csv"))
	if err != nil {
		b.Fatal(err)
	}
	b.ReportMetric(float64(st.Size()), "loops.csv-bytes")
	f, err := os.Open(filepath.Join(dir, "out", "loops.csv"))
	if err != nil {
		b.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil || len(rows) < 2 {
		b.Fatalf("loops.csv: %d rows, %v", len(rows), err)
	}
	marks := slices.Index(rows[0], "marks")
	steps := 0
	for _, r := range rows[1:] {
		steps += strings.Count(r[marks], "→")
	}
	b.ReportMetric(float64(len(rows)-1), "loops")
	b.ReportMetric(float64(steps)/float64(len(rows)-1), "vectors/loop")
}
