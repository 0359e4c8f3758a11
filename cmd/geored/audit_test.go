package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce/audit"
	"github.com/geored/geored/reduce/job"
)

// auditScenario is an invented delivery on ETRS89 / UTM zone 32N: five
// marks near 50.1°N 8.6°E with ellipsoidal heights and per-point N,
// distances of every kind and GNSS vectors, a few millimetres of noise on
// the clean ones and six injected errors. The delivered values are made
// from the control with the geodesic package (checked against PROJ's
// tools and GN7-2 in its own tests), then each error is put in by the
// formula a subcontractor's slip would follow.
type auditScenario struct {
	dir     string
	config  string
	file    string
	want    map[string]string // id → the cause the audit must name; absent: must pass
	nRows   int
	nVector int
}

// scenarioMark is an invented mark: degrees, ellipsoidal height and N in metres.
type scenarioMark struct {
	id       string
	lat, lon float64
	h, n     float64
}

var scenarioMarks = []scenarioMark{
	{"ALDER", 50.1000, 8.6000, 152.300, 47.95},
	{"BIRCH", 50.1120, 8.6220, 131.800, 47.98},
	{"CEDAR", 50.0950, 8.6310, 188.400, 47.90},
	{"DOGWOOD", 50.1180, 8.5950, 143.100, 48.00},
	{"ELM", 50.1040, 8.6450, 120.600, 47.93},
}

// writeScenarioPoints writes marks as dir/points.csv and returns its text.
func writeScenarioPoints(t *testing.T, dir string, marks []scenarioMark) string {
	t.Helper()
	var pts strings.Builder
	pts.WriteString("id,lat,lon,ellipsoid_height,geoid_separation\n")
	for _, m := range marks {
		fmt.Fprintf(&pts, "%s,%.7f,%.7f,%.3f,%.2f\n", m.id, m.lat, m.lon, m.h, m.n)
	}
	require.NoError(t, os.WriteFile(filepath.Join(dir, "points.csv"), []byte(pts.String()), 0o644))
	return pts.String()
}

func newAuditScenario(t *testing.T) *auditScenario {
	t.Helper()
	dir := t.TempDir()
	writeScenarioPoints(t, dir, scenarioMarks)
	cfg := `crs = "EPSG:25832"
points = "points.csv"
geoid = "none"
length_unit = "m"
out = "out"
[tolerance]
constant_mm = 5
ppm = 2
`
	require.NoError(t, os.WriteFile(filepath.Join(dir, "job.toml"), []byte(cfg), 0o644))

	crs, p := utm32Projector(t)
	g, err := geodesic.NewGeodesic(crs.Ellipsoid())
	require.NoError(t, err)
	ctl := map[string]job.Control{}
	for _, m := range scenarioMarks {
		ll := s2.LatLngFromDegrees(m.lat, m.lon)
		grid, err := p.Forward(ll)
		require.NoError(t, err)
		ctl[m.id] = job.Control{ID: m.id, LatLng: ll, Grid: grid, Ellipsoidal: m.h, HeightSource: job.HeightGiven,
			Separation: m.n, SeparationSource: 2}
	}
	line := func(a, b string) audit.LineControl {
		lc, _, err := job.AuditLine(ctl[a], ctl[b], g, p)
		require.NoError(t, err)
		return lc
	}
	ecef := func(id string) r3.Vector {
		x, err := p.ToGeocentric(ctl[id].LatLng, ctl[id].Ellipsoidal)
		require.NoError(t, err)
		return x
	}
	up := func(id string) r3.Vector { return audit.Up(ctl[id].LatLng) }
	sc := &auditScenario{dir: dir, config: filepath.Join(dir, "job.toml"), file: filepath.Join(dir, "delivered.csv"), want: map[string]string{}}
	var b strings.Builder
	b.WriteString("id,from,to,kind,distance,sigma,dx,dy,dz,sigma_x,sigma_y,sigma_z,applied_ppm\n")
	dist := func(id, from, to, kind string, v float64, ppmApplied string) {
		fmt.Fprintf(&b, "%s,%s,%s,%s,%.4f,0.002,,,,,,,%s\n", id, from, to, kind, v, ppmApplied)
		sc.nRows++
	}
	vec := func(id, from, to string, d r3.Vector) {
		fmt.Fprintf(&b, "%s,%s,%s,vector,,,%.4f,%.4f,%.4f,0.003,0.003,0.005,\n", id, from, to, d.X, d.Y, d.Z)
		sc.nRows++
		sc.nVector++
	}
	ground := func(l audit.LineControl) float64 { return l.Ellipsoid * (l.Radius + l.MeanHeight()) / l.Radius }
	seaLevel := func(l audit.LineControl) float64 { return l.Ellipsoid * (l.Radius + l.MeanSeparation()) / l.Radius }

	// Clean distances, within a few mm.
	ab, ac, bc, cd, ad, ae := line("ALDER", "BIRCH"), line("ALDER", "CEDAR"), line("BIRCH", "CEDAR"), line("CEDAR", "DOGWOOD"), line("ALDER", "DOGWOOD"), line("ALDER", "ELM")
	dist("d-ad-ground", "ALDER", "DOGWOOD", "ground", ground(ad)+1.2e-3, "")
	dist("d-ae-sea", "ALDER", "ELM", "sea-level", seaLevel(ae)-1.5e-3, "")
	dist("d-ca-ell", "CEDAR", "ALDER", "ellipsoid", ac.Ellipsoid+0.8e-3, "")
	dist("d-bc-grid", "BIRCH", "CEDAR", "grid", bc.Grid-1.1e-3, "")
	// Injected errors.
	dist("e-scale-twice", "ALDER", "BIRCH", "grid", ab.Grid*ab.LineScale, "")
	sc.want["e-scale-twice"] = "scale factor applied twice"
	dist("e-geoid-ignored", "ALDER", "CEDAR", "grid", ac.Grid*(1+ac.MeanSeparation()/ac.Radius), "")
	sc.want["e-geoid-ignored"] = "geoid separation ignored (orthometric heights taken as ellipsoidal)"
	dist("e-ppm-twice", "BIRCH", "CEDAR", "ellipsoid", bc.Ellipsoid*(1+12e-6)+0.5e-3, "12")
	sc.want["e-ppm-twice"] = "ppm applied twice (+12 ppm)"
	dist("e-ground-as-grid", "CEDAR", "DOGWOOD", "grid", ground(cd)-0.9e-3, "")
	sc.want["e-ground-as-grid"] = "grid and ground swapped (a ground distance delivered as grid)"

	// Vectors: a triangle and a repeat that close, and two errors off
	// the loops.
	x := map[string]r3.Vector{}
	for _, m := range scenarioMarks {
		x[m.id] = ecef(m.id)
	}
	vec("v-ab", "ALDER", "BIRCH", x["BIRCH"].Sub(x["ALDER"]).Add(r3.Vector{X: 1e-3, Y: -2e-3, Z: 1e-3}))
	vec("v-bc", "BIRCH", "CEDAR", x["CEDAR"].Sub(x["BIRCH"]).Add(r3.Vector{X: -1e-3, Y: 1e-3, Z: 2e-3}))
	vec("v-ca", "CEDAR", "ALDER", x["ALDER"].Sub(x["CEDAR"]).Add(r3.Vector{X: 2e-3, Y: 0, Z: -1e-3}))
	vec("v-ba", "BIRCH", "ALDER", x["ALDER"].Sub(x["BIRCH"]).Add(r3.Vector{X: -1e-3, Y: 1e-3, Z: 0}))
	east := audit.Up(ctl["ALDER"].LatLng).Cross(r3.Vector{Z: 1}).Normalize().Mul(-1) // east at ALDER
	vec("e-blunder", "ALDER", "DOGWOOD", x["DOGWOOD"].Sub(x["ALDER"]).Add(east.Mul(0.030)))
	sc.want["e-blunder"] = audit.NoKnownCause
	vec("e-antenna", "BIRCH", "ELM", x["ELM"].Sub(x["BIRCH"]).Add(up("ELM").Mul(1.650)).Add(east.Mul(1e-3)))
	sc.want["e-antenna"] = "antenna height left in at the end mark (+1.650 m along its vertical): the vector is not mark to mark"
	require.NoError(t, os.WriteFile(sc.file, []byte(b.String()), 0o644))
	return sc
}

// scenarioStages are the stages of the scenario's injected errors.
var scenarioStages = map[string]string{
	"e-scale-twice": audit.StageScale, "e-geoid-ignored": audit.StageHeights, "e-ppm-twice": audit.StageAtmosphere,
	"e-ground-as-grid": audit.StageKind, "e-blunder": "", "e-antenna": audit.StageAntenna,
}

// TestAuditScenario: each injected error is caught and named, and nothing
// else is flagged: the clean distances, the vectors of the triangle, the
// repeated baseline, the loops and the distance beside its vector pass.
func TestAuditScenario(t *testing.T) {
	sc := newAuditScenario(t)
	var stdout, stderr bytes.Buffer
	code := run([]string{"audit", "-config", sc.config, sc.file}, &stdout, &stderr)
	require.Equal(t, exitFlagged, code, "stdout:\n%s\nstderr:\n%s", stdout.String(), stderr.String())
	out := filepath.Join(sc.dir, "out")
	rows, col := readColumns(t, filepath.Join(out, "audit.csv"))
	require.Len(t, rows, sc.nRows+1, "a row per delivered value")
	for _, r := range rows[1:] {
		id := r[col["id"]]
		cause, bad := sc.want[id]
		if !bad {
			assert.Equal(t, "pass", r[col["verdict"]], "%s passes: %v", id, r)
			assert.Empty(t, r[col["cause"]], "%s has nothing to explain", id)
			continue
		}
		assert.Equal(t, "fail", r[col["verdict"]], "%s is caught", id)
		assert.Equal(t, cause, r[col["cause"]], "%s is named", id)
		assert.Equal(t, scenarioStages[id], r[col["stage"]], "%s: the stage", id)
		assert.Equal(t, "5 mm + 2 ppm, linear, 95 %", r[col["tolerance"]], "%s: the tolerance with the verdict", id)
	}
	// The clean distance CEDAR → ALDER beside the vector CEDAR → ALDER.
	for _, r := range rows[1:] {
		if r[col["id"]] == "d-ca-ell" {
			assert.Equal(t, "pass", r[col["distance_vs_vector"]])
		}
	}
	loops, lcol := readColumns(t, filepath.Join(out, "loops.csv"))
	require.Len(t, loops, 3, "the triangle and the repeat: 6 vectors − 5 marks + 1")
	kinds := map[string]int{}
	for _, l := range loops[1:] {
		kinds[l[lcol["kind"]]]++
		assert.Equal(t, "pass", l[lcol["verdict"]], "loop %v", l)
	}
	assert.Equal(t, map[string]int{"loop": 1, "repeated baseline": 1}, kinds)

	var sum struct {
		ExitStatus int `json:"exit_status"`
		Counts     struct {
			Read, Checked, Rejected, Passed, Failed, Vectors, Loops int
		} `json:"counts"`
		Tolerance string `json:"tolerance"`
		Caution   string `json:"caution"`
	}
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &sum))
	assert.Equal(t, 1, sum.ExitStatus)
	assert.Equal(t, sc.nRows, sum.Counts.Read)
	assert.Equal(t, sum.Counts.Read, sum.Counts.Checked+sum.Counts.Rejected, "read = checked + rejected")
	assert.Equal(t, len(sc.want), sum.Counts.Failed)
	assert.Equal(t, sc.nVector, sum.Counts.Vectors)
	assert.NotEmpty(t, sum.Caution)
	html, err := os.ReadFile(filepath.Join(out, "report.html"))
	require.NoError(t, err)
	assert.Contains(t, string(html), "Caution.")
	assert.Contains(t, string(html), "<svg", "the misclosure plot")
}

// TestAuditExitStatus: 0 when everything passes, 2 when nothing could
// run; an unknown mark is a rejected row, with its file and line.
func TestAuditExitStatus(t *testing.T) {
	sc := newAuditScenario(t)
	data, err := os.ReadFile(sc.file)
	require.NoError(t, err)
	var clean []string
	for _, l := range strings.Split(strings.TrimSpace(string(data)), "\n") {
		if !strings.HasPrefix(l, "e-") {
			clean = append(clean, l)
		}
	}
	path := filepath.Join(sc.dir, "clean.csv")
	require.NoError(t, os.WriteFile(path, []byte(strings.Join(clean, "\n")+"\n"), 0o644))
	var stdout, stderr bytes.Buffer
	assert.Equal(t, exitOK, run([]string{"audit", "-config", sc.config, path}, &stdout, &stderr), "stdout:\n%s\nstderr:\n%s", &stdout, &stderr)

	unknown := filepath.Join(sc.dir, "unknown.csv")
	require.NoError(t, os.WriteFile(unknown, []byte(clean[0]+"\n"+clean[1]+"\nx,ALDER,NOWHERE,grid,100,0.002,,,,,,,\n"), 0o644))
	stdout.Reset()
	stderr.Reset()
	assert.Equal(t, exitFlagged, run([]string{"audit", "-config", sc.config, unknown}, &stdout, &stderr))
	rej := readCSV(t, filepath.Join(sc.dir, "out", "rejects.csv"))
	require.Len(t, rej, 2)
	assert.Equal(t, []string{"file", "line", "raw", "reason"}, rej[0])
	assert.Equal(t, []string{unknown, "3", "x,ALDER,NOWHERE,grid,100,0.002,,,,,,,"}, rej[1][:3])
	assert.Contains(t, rej[1][3], "unknown.csv:3: end mark \"NOWHERE\" is not in the points file")

	stderr.Reset()
	assert.Equal(t, exitFailed, run([]string{"audit", "-config", sc.config, filepath.Join(sc.dir, "missing.csv")}, &stdout, &stderr))
	assert.Contains(t, stderr.String(), "missing.csv")
	stderr.Reset()
	assert.Equal(t, exitFailed, run([]string{"audit", "-config", sc.config}, &stdout, &stderr))
	assert.Contains(t, stderr.String(), "no baselines file")
}
