package main

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/units"
)

// horizontalJob reduces with nothing but geometry: no instrument or
// prism constants, the air at the instrument's reference atmosphere (a
// first velocity correction of exactly 0) and k = 0 (no second velocity
// correction, no refraction), as the exact construction below has no
// refraction.
const horizontalJob = `crs = "EPSG:25832"
points = "points.csv"
observations = ["obs.csv"]
geoid = "none"
length_unit = "m"
angle_unit = "deg"
out = "out"
refraction_k = 0
default_instrument = "ts"
[tolerance]
constant_mm = 5
ppm = 5
[default_atmosphere]
temperature_c = 12
pressure_hpa = 1013.25
humidity_pct = 60
[instrument.ts]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
prism_constant_mm = 0
field_prism_constant_mm = 0
spec_mm = 1
spec_ppm = 1
`

// utm32Projector opens the demo job's CRS, ETRS89 / UTM zone 32N, and a
// projector on it, closed when the test ends.
func utm32Projector(t *testing.T) (*geodesic.CRS, *geodesic.Projector) {
	t.Helper()
	crs, err := geodesic.OpenCRS("EPSG:25832")
	require.NoError(t, err)
	p, err := crs.NewProjector()
	require.NoError(t, err)
	t.Cleanup(p.Close)
	return crs, p
}

// hdLine is one line of ../../testdata/reduce/horizontal_geodsolve.txt.
type hdLine struct {
	a, b s2.LatLng
	azi1 s1.Angle // GeodSolve's azimuth at a
	s12  float64  // GeodSolve's geodesic, metres
}

func readHorizontalLines(t *testing.T) []hdLine {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "..", "testdata", "reduce", "horizontal_geodsolve.txt"))
	require.NoError(t, err)
	defer f.Close()
	var out []hdLine
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fs := strings.Fields(sc.Text())
		if len(fs) == 0 || strings.HasPrefix(fs[0], "#") {
			continue
		}
		require.Len(t, fs, 7, sc.Text())
		out = append(out, hdLine{a: s2.LatLngFromDegrees(num(t, fs[0]), num(t, fs[1])), b: s2.LatLngFromDegrees(num(t, fs[2]), num(t, fs[3])),
			azi1: s1.Angle(num(t, fs[4]) * math.Pi / 180), s12: num(t, fs[6])})
	}
	require.NoError(t, sc.Err())
	require.Len(t, out, 24)
	return out
}

// The instrument heights and target heights of the construction, metres.
const hdHI, hdHT = 1.543, 1.612

// hdSight is the exact 3-D construction of one line's sight: the marks'
// ellipsoidal heights (invented: hills and valleys up to 900 m apart),
// and the instrument's horizontal and vertical distances from its axis to
// the reflector.
type hdSight struct {
	ha, hb float64 // the marks' ellipsoidal heights, metres
	hd, vd float64 // across and along the ellipsoid normal at the axis, metres
}

// horizontalSights puts, for each GeodSolve line, the instrument's axis
// and the reflector at their ellipsoidal heights (mark + instrument or
// target height) in earth-centred coordinates (PROJ's geodetic →
// geocentric); hd and vd are the components of axis → reflector across
// and along the ellipsoid normal at the axis (its local level frame; a
// straight line of sight, no refraction).
func horizontalSights(t *testing.T, p *geodesic.Projector, lines []hdLine) []hdSight {
	t.Helper()
	out := make([]hdSight, len(lines))
	for i, l := range lines {
		ha := 40 + 37.5*float64(i%7)
		hb := ha + []float64{-3, 12, -40, 85, -150, 300, 600, 900}[i%8]*(1+float64(i%3))/3
		a, err := p.ToGeocentric(l.a, ha+hdHI)
		require.NoError(t, err)
		b, err := p.ToGeocentric(l.b, hb+hdHT)
		require.NoError(t, err)
		phi, lam := float64(l.a.Lat), float64(l.a.Lng)
		up := r3.Vector{X: math.Cos(phi) * math.Cos(lam), Y: math.Cos(phi) * math.Sin(lam), Z: math.Sin(phi)} // the ellipsoid normal
		d := b.Sub(a)
		vd := d.Dot(up)
		out[i] = hdSight{ha: ha, hb: hb, hd: d.Sub(up.Mul(vd)).Norm(), vd: vd}
	}
	return out
}

// Horizontal-distance observations against the exact 3-D construction:
// for each GeodSolve line the instrument's axis and the reflector are put
// at their ellipsoidal heights (mark + instrument or target height) in
// earth-centred coordinates (PROJ's geodetic → geocentric), and the
// instrument's horizontal and vertical distances are the components of
// axis → reflector across and along the ellipsoid normal at the axis (its
// local level frame; a straight line of sight, no refraction). Each is
// reduced by the command twice — to a target mark of known height (route
// "horizontal heights") and to the same mark without a height (route
// "horizontal": its height from vd) — and each reduced ellipsoid distance
// must be GeodSolve's geodesic between the marks within 0.05 mm. The
// equivalent slope distance and zenith angle row reduces to the same
// distance, to reduced.csv's 0.01 mm.
func TestHorizontalDistanceAgainstGeodSolve(t *testing.T) {
	lines := readHorizontalLines(t)
	_, p := utm32Projector(t)

	var pts, obs, xml strings.Builder
	xml.WriteString(`<?xml version="1.0"?>
<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2">
<Units><Metric linearUnit="meter" angularUnit="decimal degrees"/></Units>
<Survey>
`)
	pts.WriteString("id,lat,lon,ellipsoid_height\n")
	obs.WriteString("obs_id,from,to,slope_distance,zenith_angle,horizontal_distance,vertical_distance,instrument_height,target_height\n")
	const hi, ht = hdHI, hdHT
	for i, g := range horizontalSights(t, p, lines) {
		l, ha, hb, hd, vd := lines[i], g.ha, g.hb, g.hd, g.vd
		fmt.Fprintf(&pts, "A%02d,%.12f,%.12f,%.4f\nB%02d,%.12f,%.12f,%.4f\nC%02d,%.12f,%.12f,\n",
			i, l.a.Lat.Degrees(), l.a.Lng.Degrees(), ha, i, l.b.Lat.Degrees(), l.b.Lng.Degrees(), hb, i, l.b.Lat.Degrees(), l.b.Lng.Degrees())
		s, z := math.Hypot(hd, vd), math.Atan2(hd, vd)*180/math.Pi
		fmt.Fprintf(&xml, "<InstrumentSetup id=\"s%02d\" stationName=\"A%02d\" instrumentHeight=\"%g\"/>\n", i, i, hi)
		for _, to := range []string{"B", "C"} {
			fmt.Fprintf(&obs, "h%s%02d,A%02d,%s%02d,,,%.6f,%.6f,%g,%g\n", to, i, i, to, i, hd, vd, hi, ht)
			fmt.Fprintf(&xml, "<RawObservation setupID=\"s%02d\" name=\"h%s%02d\" horizDistance=\"%.6f\" vertDistance=\"%.6f\" targetHeight=\"%g\"><TargetPoint pntRef=\"%s%02d\"/></RawObservation>\n", i, to, i, hd, vd, ht, to, i)
			fmt.Fprintf(&obs, "s%s%02d,A%02d,%s%02d,%.6f,%.10f,,,%g,%g\n", to, i, i, to, i, s, z, hi, ht)
		}
	}
	xml.WriteString("</Survey>\n</LandXML>\n")
	dir := t.TempDir()
	for name, text := range map[string]string{"job.toml": horizontalJob, "points.csv": pts.String(), "obs.csv": obs.String(), "obs.xml": xml.String()} {
		require.NoError(t, os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644))
	}
	code, _, stderr := runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-quiet")
	require.Equal(t, 0, code, stderr)
	rows, col := readColumns(t, filepath.Join(dir, "out", "reduced.csv"))
	require.Len(t, rows, 1+4*len(lines))
	byID := map[string][]string{}
	for _, r := range rows[1:] {
		byID[r[col["obs_id"]]] = r
	}
	worst := 0.0
	for i, l := range lines {
		for to, route := range map[string]string{"B": "horizontal heights", "C": "horizontal"} {
			h, s := byID[fmt.Sprintf("h%s%02d", to, i)], byID[fmt.Sprintf("s%s%02d", to, i)]
			require.NotNil(t, h)
			require.NotNil(t, s)
			assert.Equal(t, route, h[col["route"]], "line %d", i)
			dist, err := strconv.ParseFloat(h[col["ellipsoid_distance_m"]], 64)
			require.NoError(t, err)
			diff := dist - l.s12
			worst = math.Max(worst, math.Abs(diff))
			assert.LessOrEqualf(t, math.Abs(diff), 0.05e-3, "line %d to %s (%.0f m, %s): %.4f mm from GeodSolve", i, to, l.s12, route, diff*1e3)
			assert.Equal(t, s[col["ellipsoid_distance_m"]], h[col["ellipsoid_distance_m"]], "line %d to %s: the slope row", i, to)
		}
	}
	t.Logf("worst difference from GeodSolve: %.4f mm", worst*1e3)

	// The same horizontal observations from LandXML (horizDistance,
	// vertDistance) reduce to the same rows but for their source.
	code, _, stderr = runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-quiet", "-out", filepath.Join(dir, "outxml"), filepath.Join(dir, "obs.xml"))
	require.Equal(t, 0, code, stderr)
	xrows, xcol := readColumns(t, filepath.Join(dir, "outxml", "reduced.csv"))
	require.Len(t, xrows, 1+2*len(lines))
	for _, x := range xrows[1:] {
		c := byID[x[xcol["obs_id"]]]
		require.NotNil(t, c, x[xcol["obs_id"]])
		for _, name := range []string{"route", "slope_raw_m", "zenith_deg", "height_target_m", "ellipsoid_distance_m", "grid_distance_m"} {
			assert.Equal(t, c[col[name]], x[xcol[name]], "%s %s", x[xcol["obs_id"]], name)
		}
	}
}

// The demo's observations, each also written as the horizontal and
// vertical distance its instrument would have stored (hd = S sin z,
// vd = S cos z), reduce alike through the demo job's constants, field
// prism constant, atmosphere and k = 0.13: on the heights route, and on
// the zenith route to a copy of a mark without a height.
func TestHorizontalRowsReduceAsTheirSlopeRows(t *testing.T) {
	var obs strings.Builder
	n := 0
	for _, line := range strings.Split(strings.TrimSpace(string(mustDemo(t, "demo/observations.csv"))), "\n") {
		if strings.HasPrefix(line, "#") {
			continue
		}
		f := strings.Split(line, ",")
		if f[0] == "obs_id" {
			obs.WriteString(line + ",horizontal_distance,vertical_distance\n")
			continue
		}
		s, err := strconv.ParseFloat(f[3], 64)
		require.NoError(t, err)
		z, err := units.ParseZenithAngle(f[4], units.PackedDMS)
		if err != nil {
			continue // a row the demo has for its rejects
		}
		for _, to := range []string{f[2], f[2] + "-NH"} {
			g := append([]string(nil), f...)
			g[2] = to
			obs.WriteString("s" + strings.Join(g[:1], "") + to + "," + strings.Join(g[1:], ",") + ",,\n")
			g[3], g[4] = "", ""
			obs.WriteString(fmt.Sprintf("h%s%s,%s,%.9f,%.9f\n", f[0], to, strings.Join(g[1:], ","), s*math.Sin(float64(z)), s*math.Cos(float64(z))))
			n++
		}
	}
	cfg := writeJob(t, obs.String(), "")
	dir := filepath.Dir(cfg)
	pts, err := os.ReadFile(filepath.Join(dir, "points.csv"))
	require.NoError(t, err)
	var more strings.Builder
	for _, l := range strings.Split(string(pts), "\n") {
		if f := strings.Split(l, ","); len(f) == 4 && !strings.HasPrefix(l, "#") && f[0] != "id" {
			more.WriteString(f[0] + "-NH," + f[1] + "," + f[2] + ",\n")
		}
	}
	require.NoError(t, os.WriteFile(filepath.Join(dir, "points.csv"), append(pts, more.String()...), 0o644))
	code, _, stderr := runCmd(t, "reduce", "-config", cfg, "-quiet")
	require.Contains(t, []int{0, 1}, code, stderr) // the demo's blunders are flagged
	rows, col := readColumns(t, filepath.Join(dir, "out", "reduced.csv"))
	byID := map[string][]string{}
	for _, r := range rows[1:] {
		byID[r[col["obs_id"]]] = r
	}
	routes := map[string]int{}
	for id, h := range byID {
		twin := map[byte]string{'h': "s", 's': "h"}[id[0]] + id[1:]
		require.NotNil(t, byID[twin], "%s is reduced and %s is not", id, twin)
		if id[0] != 'h' {
			continue
		}
		s := byID[twin]
		routes[h[col["route"]]]++
		assert.Equal(t, map[string]string{"heights": "horizontal heights", "zenith": "horizontal"}[s[col["route"]]], h[col["route"]], id)
		for _, name := range []string{"slope_instrument_m", "slope_chord_m", "height_target_m", "ellipsoid_distance_m", "grid_distance_m", "residual_mm"} {
			a, err := strconv.ParseFloat(h[col[name]], 64)
			require.NoError(t, err, "%s %s", id, name)
			b, err := strconv.ParseFloat(s[col[name]], 64)
			require.NoError(t, err, "%s %s", id, name)
			tol := 1e-5 // one unit of reduced.csv's last decimal, m
			if name == "residual_mm" {
				tol = 0.01
			}
			assert.InDelta(t, b, a, tol+1e-12, "%s %s", id, name)
		}
	}
	assert.Equal(t, routes["horizontal heights"], routes["horizontal"])
	assert.Greater(t, routes["horizontal"], n/3, "most demo rows reduced (%d written)", n)
}
