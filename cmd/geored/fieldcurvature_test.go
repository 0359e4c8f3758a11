package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/reduce"
)

// eulerRadiusAt is the radius of curvature, metres, in azimuth az of the
// surface parallel to the ellipsoid at height h above it at latitude lat:
// 1/R = cos²α/(M + h) + sin²α/(N + h) (Euler's formula; the parallel
// surface's principal radii are M + h and N + h, common practice).
func eulerRadiusAt(e geodesic.Ellipsoid, lat, az s1.Angle, h float64) float64 {
	c, s := math.Cos(float64(az)), math.Sin(float64(az))
	return 1 / (c*c/(e.MeridianRadius(lat)+h) + s*s/(e.PrimeVerticalRadius(lat)+h))
}

// The instrument's forward formulas (reduce.FieldCurvature) against the
// exact 3-D construction of the GeodSolve lines (horizontalSights: PROJ's
// geocentric coordinates of axis and reflector, a straight line of
// sight). With k = 0 and R the Euler radius in the line's azimuth at the
// axis — of the level surface through the axis, the parallel surface at
// its height hA + hi —, vd' (of either mode) must be the construction's
// ellipsoidal height difference (hB + ht) − (hA + hi), and mode "both"'s
// hd' the geodesic at the axis's height, s12·(1 + (hA + hi)/R_α)
// (GeodSolve's s12 at the ellipsoid scaled to the parallel surface, R_α
// the ellipsoid's Euler radius: a length in azimuth α grows by h/R_α at
// height h, common practice).
//
// The tolerances are the terms the first-order forms neglect. With
// X = vd and Y = hd, on the sphere of radius R through the axis the
// reflector's height is √((R + X)² + Y²) − R = X + Y²/(2(R + X)) −
// Y⁴/(8(R + X)³) + …, so vd' = X + Y²/(2R) is off by
// −XY²/(2R²) − Y⁴/(8R³) + O(X²Y²/R³); and the arc R·atan(Y/(R + X)) =
// Y − XY/R + X²Y/R² − Y³/(3R²) + O(XY³/R³), so hd' = Y − XY/R is off by
// X²Y/R² − Y³/(3R²) + O(XY³/R³). The ellipsoid is no sphere: along the
// line the normal section's curvature 1/R_α changes by at most
// (3/2)e'²/R² a metre (from Euler's formula and dφ/ds = cos α/M, dα/ds =
// sin α tan φ/N), which moves the height by at most (1/6)(3/2)e'²Y³/R² =
// e'²Y³/(4R²) and the arc by less; the bound e'²Y³/R² takes four times
// that for both. Each tolerance is the sum of its terms' magnitudes (the
// O(·) ones as |X|Y³/R³ + X²Y²/R³) plus 1 µm for PROJ's and the
// construction's round-off; at 10 km with X = 900 m they are 1.3 mm for
// vd' and 8.6 mm for hd'. And with the leading terms taken off, what is
// left must be within the ellipsoid's and the higher terms' bound alone
// (0.17 mm at 10 km): the leading terms are the difference.
//
// The construction has no refraction, so the terms in k are checked only
// by the round trip (reduce's tests) and the end-to-end test below.
func TestFieldCurvatureFormulasAgainstConstruction(t *testing.T) {
	lines := readHorizontalLines(t)
	crs, p := utm32Projector(t)
	e := crs.Ellipsoid()
	ep2 := e.EccentricitySquared() / (1 - e.EccentricitySquared()) // e'²
	var worstV, worstH, slackV, slackH, worstRest float64
	for i, g := range horizontalSights(t, p, lines) {
		l := lines[i]
		axis := g.ha + hdHI
		r := eulerRadiusAt(e, l.a.Lat, l.azi1, axis)
		x, y := g.vd, g.hd
		s, z := math.Hypot(y, x), s1.Angle(math.Atan2(y, x))
		ell := ep2 * y * y * y / (r * r)
		higher := (math.Abs(x)*y*y*y + x*x*y*y) / (r * r * r)

		_, vd := reduce.FieldCurvature{Mode: reduce.FieldCurvatureVertical, K: 0, Radius: r}.Forward(s, z)
		dh := (g.hb + hdHT) - (g.ha + hdHI)
		tolV := math.Abs(x)*y*y/(2*r*r) + y*y*y*y/(8*r*r*r) + higher + ell + 1e-6
		assert.LessOrEqualf(t, math.Abs(vd-dh), tolV, "line %d (%.0f m, Δh %.0f m): vd' − Δh = %.4f mm, tolerance %.4f mm", i, l.s12, dh, (vd-dh)*1e3, tolV*1e3)

		hd, vdBoth := reduce.FieldCurvature{Mode: reduce.FieldCurvatureBoth, K: 0, Radius: r}.Forward(s, z)
		assert.LessOrEqualf(t, math.Abs(vdBoth-dh), tolV, "line %d: mode both's vd' − Δh = %.4f mm", i, (vdBoth-dh)*1e3)
		arc := l.s12 * (1 + axis/eulerRadiusAt(e, l.a.Lat, l.azi1, 0))
		tolH := x*x*y/(r*r) + y*y*y/(3*r*r) + higher + ell + 1e-6
		assert.LessOrEqualf(t, math.Abs(hd-arc), tolH, "line %d (%.0f m, Δh %.0f m): hd' − arc = %.4f mm, tolerance %.4f mm", i, l.s12, dh, (hd-arc)*1e3, tolH*1e3)

		// The leading neglected terms are the difference: what is left
		// is within the ellipsoid's and the higher terms' bound.
		restV := vd - dh - (x*y*y/(2*r*r) + y*y*y*y/(8*r*r*r))
		restH := hd - arc - (y*y*y/(3*r*r) - x*x*y/(r*r))
		assert.LessOrEqualf(t, math.Abs(restV), higher+ell+1e-6, "line %d: vd' − Δh less its leading terms %.4f mm", i, restV*1e3)
		assert.LessOrEqualf(t, math.Abs(restH), higher+ell+1e-6, "line %d: hd' − arc less its leading terms %.4f mm", i, restH*1e3)
		worstRest = math.Max(worstRest, math.Max(math.Abs(restV), math.Abs(restH)))

		worstV, worstH = math.Max(worstV, math.Abs(vd-dh)), math.Max(worstH, math.Abs(hd-arc))
		slackV, slackH = math.Max(slackV, math.Abs(vd-dh)/tolV), math.Max(slackH, math.Abs(hd-arc)/tolH)
	}
	t.Logf("worst: vd' − Δh %.4f mm, hd' − arc %.4f mm; worst share of the tolerance: vd' %.2f, hd' %.2f; less the leading terms %.4f mm",
		worstV*1e3, worstH*1e3, slackV, slackH, worstRest*1e3)
}

// End to end against GeodSolve: the construction's sights (as in
// TestHorizontalDistanceAgainstGeodSolve) as an instrument would store
// them having corrected them for curvature and refraction with k = 0.13
// and R = 6378000 m (reduce.FieldCurvature.Forward of S = √(hd² + vd²),
// z = atan2(hd, vd)), to a mark with a height (route "horizontal
// heights") and to one without (route "horizontal"). With the profile
// saying so — mode "both" in the job file, mode "vertical" by flags with
// the default radius — every reduced ellipsoid distance is GeodSolve's
// geodesic within 0.05 mm; the same rows with the profile left at "none"
// are off by more than 1 mm on both routes. The same distances from
// LandXML reduce to the same rows.
func TestFieldCurvatureAgainstGeodSolve(t *testing.T) {
	lines := readHorizontalLines(t)
	_, p := utm32Projector(t)
	sights := horizontalSights(t, p, lines)
	var pts strings.Builder
	pts.WriteString("id,lat,lon,ellipsoid_height\n")
	for i, l := range lines {
		g := sights[i]
		fmt.Fprintf(&pts, "A%02d,%.12f,%.12f,%.4f\nB%02d,%.12f,%.12f,%.4f\nC%02d,%.12f,%.12f,\n",
			i, l.a.Lat.Degrees(), l.a.Lng.Degrees(), g.ha, i, l.b.Lat.Degrees(), l.b.Lng.Degrees(), g.hb, i, l.b.Lat.Degrees(), l.b.Lng.Degrees())
	}
	keys := "field_curvature_refraction = \"both\"\nfield_refraction_k = 0.13\nfield_earth_radius_m = 6378000\n"
	for _, mode := range []reduce.FieldCurvatureMode{reduce.FieldCurvatureVertical, reduce.FieldCurvatureBoth} {
		c := reduce.FieldCurvature{Mode: mode, K: 0.13, Radius: 6378000}
		var obs, xml strings.Builder
		obs.WriteString("obs_id,from,to,horizontal_distance,vertical_distance,instrument_height,target_height\n")
		xml.WriteString(`<?xml version="1.0"?>
<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2">
<Units><Metric linearUnit="meter" angularUnit="decimal degrees"/></Units>
<Survey>
`)
		for i, g := range sights {
			hd, vd := c.Forward(math.Hypot(g.hd, g.vd), s1.Angle(math.Atan2(g.hd, g.vd)))
			fmt.Fprintf(&xml, "<InstrumentSetup id=\"s%02d\" stationName=\"A%02d\" instrumentHeight=\"%g\"/>\n", i, i, hdHI)
			for _, to := range []string{"B", "C"} {
				fmt.Fprintf(&obs, "h%s%02d,A%02d,%s%02d,%.6f,%.6f,%g,%g\n", to, i, i, to, i, hd, vd, hdHI, hdHT)
				fmt.Fprintf(&xml, "<RawObservation setupID=\"s%02d\" name=\"h%s%02d\" horizDistance=\"%.6f\" vertDistance=\"%.6f\" targetHeight=\"%g\"><TargetPoint pntRef=\"%s%02d\"/></RawObservation>\n", i, to, i, hd, vd, hdHT, to, i)
			}
		}
		xml.WriteString("</Survey>\n</LandXML>\n")
		dir := t.TempDir()
		for name, text := range map[string]string{"job.toml": horizontalJob, "corrected.toml": horizontalJob + keys, "points.csv": pts.String(), "obs.csv": obs.String(), "obs.xml": xml.String()} {
			require.NoError(t, os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644))
		}
		args := []string{"reduce", "-config", filepath.Join(dir, "corrected.toml"), "-quiet", "-out", filepath.Join(dir, "corrected")}
		if mode == reduce.FieldCurvatureVertical {
			args = []string{"reduce", "-config", filepath.Join(dir, "job.toml"), "-quiet", "-out", filepath.Join(dir, "corrected"),
				"-field-curvature-refraction", "vertical", "-field-refraction-k", "0.13"}
		}
		code, _, stderr := runCmd(t, args...)
		require.Equal(t, 0, code, "%v: %s", mode, stderr)
		code, _, stderr = runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-quiet", "-out", filepath.Join(dir, "none"))
		require.Equal(t, 1, code, "%v read as uncorrected: the lines are flagged: %s", mode, stderr)

		s := readSummary(t, filepath.Join(dir, "corrected", "summary.json"))
		require.Len(t, s.Settings.Instruments, 1)
		in := s.Settings.Instruments[0]
		assert.Equal(t, mode.String(), in.FieldCurvatureRefraction)
		require.NotNil(t, in.FieldRefractionK)
		require.NotNil(t, in.FieldEarthRadiusM)
		assert.Equal(t, [2]float64{0.13, 6378000}, [2]float64{*in.FieldRefractionK, *in.FieldEarthRadiusM}, "%v: the summary's instrument entry", mode)

		// The same distances from LandXML (horizDistance, vertDistance)
		// reduce to the same rows.
		code, _, stderr = runCmd(t, append(args, "-out", filepath.Join(dir, "xml"), filepath.Join(dir, "obs.xml"))...)
		require.Equal(t, 0, code, "%v LandXML: %s", mode, stderr)
		crows, ccol := readColumns(t, filepath.Join(dir, "corrected", "reduced.csv"))
		xrows, xcol := readColumns(t, filepath.Join(dir, "xml", "reduced.csv"))
		require.Len(t, xrows, len(crows))
		for k := 1; k < len(crows); k++ {
			for _, name := range []string{"obs_id", "route", "slope_raw_m", "zenith_deg", "height_target_m", "ellipsoid_distance_m"} {
				assert.Equal(t, crows[k][ccol[name]], xrows[k][xcol[name]], "%v LandXML row %d %s", mode, k, name)
			}
		}

		for _, out := range []string{"corrected", "none"} {
			rows, col := readColumns(t, filepath.Join(dir, out, "reduced.csv"))
			require.Len(t, rows, 1+2*len(lines), "%v %s", mode, out)
			worst := map[string]float64{}
			for _, r := range rows[1:] {
				id := r[col["obs_id"]]
				i, err := strconv.Atoi(id[2:])
				require.NoError(t, err)
				route := map[byte]string{'B': "horizontal heights", 'C': "horizontal"}[id[1]]
				require.Equal(t, route, r[col["route"]], id)
				dist, err := strconv.ParseFloat(r[col["ellipsoid_distance_m"]], 64)
				require.NoError(t, err)
				diff := dist - lines[i].s12
				worst[route] = math.Max(worst[route], math.Abs(diff))
				if out == "corrected" {
					assert.LessOrEqualf(t, math.Abs(diff), 0.05e-3, "%v line %d (%.0f m, %s): %.4f mm from GeodSolve", mode, i, lines[i].s12, route, diff*1e3)
				}
			}
			for route, w := range worst {
				if out == "none" {
					assert.Greaterf(t, w, 1e-3, "%v read as uncorrected, route %s: worst %.4f mm from GeodSolve", mode, route, w*1e3)
				}
				t.Logf("%v, profile %s, route %s: worst %.4f mm from GeodSolve", mode, map[string]string{"corrected": "set", "none": "none"}[out], route, w*1e3)
			}
		}
	}
}
