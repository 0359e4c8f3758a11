package main

import (
	"bufio"
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
)

// The State Plane grids of ../../testdata/geodesic/stateplane_cs2cs.txt
// (cs2cs, PROJ 9.1.1): opened by EPSG code, each CRS's unit is
// recognised (EPSG units of measure 9001 metre, 9002 foot, the
// international foot, 9003 US survey foot), and a points file giving
// cs2cs's easting and northing in the CRS's unit resolves to cs2cs's
// latitude and longitude within 1 mm.
//
// Before the fix every grid in US survey feet refused each point with
// "want a length in LengthUnit(0.30480060960121924 m)": proj.db's US
// survey foot is one ulp from 1200/3937 and was compared exactly.
func TestEPSGGridUnitsAgainstCS2CS(t *testing.T) {
	byCode := map[string]units.LengthUnit{"9001": units.Metre, "9002": units.InternationalFoot, "9003": units.USSurveyFoot}
	f, err := os.Open(filepath.Join("..", "..", "testdata", "geodesic", "stateplane_cs2cs.txt"))
	require.NoError(t, err)
	defer f.Close()
	sc := bufio.NewScanner(f)
	rows := 0
	for n := 1; sc.Scan(); n++ {
		fields := strings.Fields(sc.Text())
		if len(fields) == 0 || strings.HasPrefix(fields[0], "#") {
			continue
		}
		require.Len(t, fields, 7, "line %d", n)
		rows++
		def := "EPSG:" + fields[0]
		s, err := openSession(def, "none", units.Metre)
		require.NoError(t, err, "line %d %s", n, def)
		assert.Equal(t, byCode[fields[2]], s.gridUnit, "line %d %s: grid unit", n, def)
		pts := "id,easting,northing\nP," + fields[5] + "," + fields[6] + "\n"
		_, err = s.loadPoints(strings.NewReader(pts), "pts.csv", func(w obsfile.Warning) { t.Errorf("line %d: warning %v", n, w) })
		require.NoError(t, err, "line %d %s", n, def)
		want := s2.LatLngFromDegrees(num(t, fields[3]), num(t, fields[4]))
		got := s.control["P"].LatLng
		line, err := s.geod.Inverse(want, got)
		require.NoError(t, err)
		assert.Lessf(t, line.Distance, 1*mm, "line %d %s: %v is %.3g mm from cs2cs's %v", n, def, got, line.Distance/mm, want)
		s.close()
	}
	require.NoError(t, sc.Err())
	assert.Equal(t, 20, rows)
}

// A CRS whose axis unit geored does not read is refused by every command
// with the CRS, the unit's name and length in words, and what to do;
// never a Go type name. EPSG:24100, Jamaica 1875 / Jamaica (Old Grid), is
// in Clarke's foot, 0.3047972654 m (proj.db, EPSG unit of measure 9005).
func TestUnknownGridUnitRefused(t *testing.T) {
	for _, tc := range []struct {
		crs  string
		want []string
	}{
		{"EPSG:24100", []string{`CRS EPSG:24100 (Jamaica 1875 / Jamaica (Old Grid))`, `"Clarke's foot" (EPSG:9005) is 0.3047972654 m per unit`,
			"convert the points' easting and northing to metres (× 0.3047972654)", `"+proj=lcc +lat_1=18 +lat_0=18 +lon_0=-77`, "+units=m"}},
		{"+proj=utm +zone=13 +ellps=GRS80 +to_meter=0.3048006", []string{"0.3048006 m per unit", "-0.0315 ppm from the US survey foot", "+units=us-ft"}},
	} {
		code, _, stderr := runCmd(t, "inverse", "-crs", tc.crs, "-a", "18,-77", "-b", "18.01,-77")
		assert.Equal(t, exitFailed, code, tc.crs)
		for _, w := range tc.want {
			assert.Contains(t, stderr, w, tc.crs)
		}
		assert.NotContains(t, stderr, "LengthUnit", tc.crs)
	}
}

// gridJob is a small invented job in a State Plane grid: three marks
// given by easting and northing in the CRS's unit and elevation in the
// job's length unit, one N for the job, and one instrument.
type gridJob struct {
	crs, lengthUnit string
	unit            units.LengthUnit // of the CRS's grid
	points          [3][3]float64    // easting, northing (CRS unit), elevation (job unit)
}

func (g gridJob) write(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	write := func(name, text string) {
		require.NoError(t, os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644))
	}
	write("job.toml", fmt.Sprintf(`crs = %q
points = "pts.csv"
length_unit = %q
geoid_separation_m = -17.0
refraction_k = 0.13
default_instrument = "ts1"
[tolerance]
constant_mm = 3
ppm = 3
[default_atmosphere]
temperature_c = 18
pressure_hpa = 830
humidity_pct = 40
[instrument.ts1]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
prism_constant_mm = -30
field_prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5
`, g.crs, g.lengthUnit))
	var b strings.Builder
	b.WriteString("id,easting,northing,elevation\n")
	for i, p := range g.points {
		fmt.Fprintf(&b, "M%d,%.3f,%.3f,%.2f\n", i+1, p[0], p[1], p[2])
	}
	write("pts.csv", b.String())
	b.Reset()
	b.WriteString("from,to,instrument_height,target_height\n")
	for _, pr := range [][2]int{{1, 2}, {2, 1}, {1, 3}, {3, 1}, {2, 3}, {3, 2}} {
		fmt.Fprintf(&b, "M%d,M%d,5.25,6.5\n", pr[0], pr[1])
	}
	write("pairs.csv", b.String())
	return dir
}

// planeDistance is the distance between two marks from their grid
// coordinates alone, in metres: no PROJ, no chain.
func (g gridJob) planeDistance(a, b int) float64 {
	pa, pb := g.points[a-1], g.points[b-1]
	return math.Hypot(pb[0]-pa[0], pb[1]-pa[1]) * float64(g.unit)
}

// A job in a State Plane grid in US survey feet (EPSG:2231), in
// international feet (EPSG:2223), and in US survey feet with lengths in
// metres, reduces end to end with no rejects: what predict says the
// instrument displays (the chain backwards) is reduced back to the
// control within 0.01 mm, and the reduced grid distance is the plane
// distance between the marks' grid coordinates, hypot(ΔE, ΔN) (common
// practice), within 0.1 mm; inverse gives the same plane distance and
// sightline runs on the same marks. The marks are invented, 3 to 4 km
// apart (Simpson's line scale factor is good to far better than 0.1 mm
// there: NOAA Manual NOS NGS 5).
func TestReduceInStatePlaneFeet(t *testing.T) {
	colorado := [3][3]float64{{3111000, 1425000, 5280}, {3121500, 1426200, 5342.5}, {3112300, 1437800, 5195.75}}
	for _, g := range []gridJob{
		{"EPSG:2231", "us-ft", units.USSurveyFoot, colorado},
		{"EPSG:2223", "intl-ft", units.InternationalFoot, [3][3]float64{{674000, 873000, 1100}, {684250, 875500, 1180.4}, {676800, 885900, 1320}}},
		{"EPSG:2231", "m", units.USSurveyFoot, [3][3]float64{colorado[0], colorado[1], colorado[2]}},
	} {
		name := g.crs + " " + g.lengthUnit
		if g.lengthUnit == "m" {
			for i := range g.points {
				g.points[i][2] *= 1200.0 / 3937 // elevations in metres
			}
		}
		dir := g.write(t)
		jobFile := filepath.Join(dir, "job.toml")
		lu, err := units.ParseLengthUnit(g.lengthUnit)
		require.NoError(t, err)

		code, out, stderr := runCmd(t, "predict", "-config", jobFile, "-pairs", filepath.Join(dir, "pairs.csv"), "-csv")
		require.Equal(t, exitOK, code, "%s: %s", name, stderr)
		recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
		require.NoError(t, err)
		require.Len(t, recs, 7, name)
		col := columns(recs[0])
		// predict -csv spells its units as reduced.csv does
		suffix := map[string]string{"us-ft": "usft", "intl-ft": "ift", "m": "m"}[g.lengthUnit]
		var obs strings.Builder
		obs.WriteString("from,to,slope_distance,zenith_angle,instrument_height,target_height\n")
		for _, r := range recs[1:] {
			obs.WriteString(strings.Join([]string{r[col["from"]], r[col["to"]], r[col["slope_distance_"+suffix]], r[col["zenith_angle_deg"]], "5.25", "6.5"}, ",") + "\n")
		}
		obsFile := filepath.Join(dir, "obs.csv")
		require.NoError(t, os.WriteFile(obsFile, []byte(obs.String()), 0o644))

		outDir := filepath.Join(dir, "out")
		code, _, stderr = runCmd(t, "reduce", "-config", jobFile, "-out", outDir, "-quiet", obsFile)
		require.Equal(t, exitOK, code, "%s: %s", name, stderr)
		assert.Len(t, readCSV(t, filepath.Join(outDir, "rejects.csv")), 1, "%s: no rejects", name)
		reduced := readCSV(t, filepath.Join(outDir, "reduced.csv"))
		require.Len(t, reduced, 7, "%s: every sight reduced", name)
		rc := columns(reduced[0])
		for _, r := range reduced[1:] {
			line := r[rc["from"]] + " → " + r[rc["to"]]
			for _, c := range []string{"residual_mm", "grid_residual_mm"} {
				assert.InDeltaf(t, 0, num(t, r[rc[c]]), 0.01, "%s %s: %s, mm", name, line, c)
			}
			var a, b int
			_, err := fmt.Sscanf(line, "M%d → M%d", &a, &b)
			require.NoError(t, err)
			grid := num(t, r[rc["grid_distance_"+suffix]]) * float64(lu)
			assert.InDeltaf(t, g.planeDistance(a, b), grid, 0.1*mm, "%s %s: reduced grid distance against hypot(ΔE, ΔN), metres", name, line)
		}

		// report.html gives the lines' distances in the job's unit, as
		// lines.csv does.
		page, err := os.ReadFile(filepath.Join(outDir, "report.html"))
		require.NoError(t, err)
		label := map[string]string{"us-ft": "US ft", "intl-ft": "intl ft", "m": "m"}[g.lengthUnit]
		assert.Contains(t, string(page), "<th>geodesic "+label+"</th><th>grid "+label+"</th>", name)
		lines := readCSV(t, filepath.Join(outDir, "lines.csv"))
		lc := columns(lines[0])
		for _, l := range lines[1:] {
			// lines.csv has 5 decimals and the page 4: the page's is
			// the CSV's rounded, or one off where the 5th was a 5.
			geodesic := num(t, l[lc["control_geodesic_"+suffix]])
			found := false
			for _, d := range []float64{0, -0.00005, 0.00005} {
				found = found || strings.Contains(string(page), `<td class="num">`+strconv.FormatFloat(geodesic+d, 'f', 4, 64)+`</td>`)
			}
			assert.True(t, found, "%s %s → %s: geodesic %s %s in report.html", name, l[lc["from"]], l[lc["to"]], l[lc["control_geodesic_"+suffix]], label)
		}

		code, out, stderr = runCmd(t, "inverse", "-crs", g.crs, "-points", filepath.Join(dir, "pts.csv"), "-length-unit", g.lengthUnit, "-geoid", "none", "-csv")
		require.Equal(t, exitOK, code, "%s: %s", name, stderr)
		inv, err := csv.NewReader(strings.NewReader(out)).ReadAll()
		require.NoError(t, err)
		require.Len(t, inv, 4, name)
		ic := columns(inv[0])
		for _, r := range inv[1:] {
			var a, b int
			_, err := fmt.Sscanf(r[ic["from"]]+" "+r[ic["to"]], "M%d M%d", &a, &b)
			require.NoError(t, err)
			grid := num(t, r[ic["grid_distance_"+suffix]]) * float64(lu)
			assert.InDeltaf(t, g.planeDistance(a, b), grid, 0.01*mm, "%s inverse M%d → M%d: grid distance against hypot(ΔE, ΔN), metres", name, a, b)
		}

		code, out, stderr = runCmd(t, "sightline", "-config", jobFile, "-from", "M1", "-to", "M2", "-hi", "5.25", "-ht", "6.5")
		assert.Contains(t, []int{exitOK, exitFlagged}, code, "%s: %s", name, stderr)
		assert.Contains(t, out, "line of sight M1 → M2", name)
	}
}
