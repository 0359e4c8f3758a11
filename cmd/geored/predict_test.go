package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// predictJob writes a job in US survey feet and packed DDD.MMSS with one
// instrument that applies its own ppm and prism constant, a points file
// and a pairs file, and returns the folder.
func predictJob(t *testing.T, pairs string) string {
	t.Helper()
	dir := t.TempDir()
	write := func(name, text string) {
		require.NoError(t, os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644))
	}
	write("job.toml", `crs = "EPSG:25832"
points = "pts.csv"
length_unit = "us-ft"
angle_unit = "dms"
geoid = "none"
refraction_k = 0.13
[tolerance]
constant_mm = 5
ppm = 5
[default_atmosphere]
temperature_c = 15
pressure_hpa = 1000
humidity_pct = 60
[instrument.ts1]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
additive_constant_mm = 0.4
scale_ppm = 1.2
prism_constant_mm = -30
field_ppm = 8
field_prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5
[instrument.ts2]
wavelength_um = 0.850
reference_refractivity = 281.8
prism_constant_mm = 0
spec_mm = 2
spec_ppm = 2
`)
	// ellipsoidal heights in US survey feet; C is 3 km north of A on the
	// central meridian, D 14 km away and 1 km higher
	write("pts.csv", "id,lat,lon,ellipsoid_height\nA,52,9,328.0840\nB,52.01,9.02,393.7008\nC,52.027,9,295.2756\nD,52.1,9.15,3608.924\n")
	write("pairs.csv", pairs)
	return dir
}

// Issue 5: reducing what predict prints gives back the control. predict
// -csv feeds an observation file, reduce reduces it, and every residual
// against the control geodesic and grid distance is under 0.01 mm, through
// US survey feet and packed DDD.MMSS at the edges, both instruments, and
// the air at both ends, one end or the job's default.
func TestPredictThenReduceGivesControl(t *testing.T) {
	dir := predictJob(t, `# sights for the next day
from,to,instrument_height,target_height,instrument,temperature_c,pressure_hpa,humidity_pct,temperature_c_to,pressure_hpa_to,humidity_pct_to
A,B,5.0853,5.9055,ts1,18,1001,55,17,999,60
A,C,5.0853,6.5617,ts2,,,,,,
B,C,5.2493,4.2651,ts1,20,1000,40,,,
A,D,5.0853,6.5617,ts1,16,1002,50,9,890,70
D,A,4.9213,6.5617,ts2,9,890,70,,,
`)
	code, out, stderr := runCmd(t, "predict", "-config", filepath.Join(dir, "job.toml"), "-pairs", filepath.Join(dir, "pairs.csv"), "-csv")
	require.Equal(t, exitOK, code, stderr)
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	require.Len(t, recs, 6)
	col := columns(recs[0])
	for _, h := range []string{"slope_distance_usft", "zenith_angle_dms", "horizontal_distance_usft", "slope_distance_bare_usft", "grid_bearing_dms", "geodetic_azimuth_dms"} {
		require.Contains(t, col, h)
	}

	// the observation file a field crew would bring back
	pr := csv.NewReader(strings.NewReader(readFile(t, filepath.Join(dir, "pairs.csv"))))
	pr.Comment = '#'
	pairs, err := pr.ReadAll()
	require.NoError(t, err)
	var b strings.Builder
	b.WriteString("from,to,slope_distance,zenith_angle,instrument_height,target_height,instrument,temperature_c,pressure_hpa,humidity_pct,temperature_c_to,pressure_hpa_to,humidity_pct_to\n")
	for i, r := range recs[1:] {
		p := pairs[i+1]
		b.WriteString(strings.Join([]string{r[col["from"]], r[col["to"]], r[col["slope_distance_usft"]], r[col["zenith_angle_dms"]],
			p[2], p[3], p[4], p[5], p[6], p[7], p[8], p[9], p[10]}, ",") + "\n")
	}
	obs := filepath.Join(dir, "obs.csv")
	require.NoError(t, os.WriteFile(obs, []byte(b.String()), 0o644))
	outDir := filepath.Join(dir, "out")
	code, _, stderr = runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-out", outDir, "-quiet", obs)
	require.Equal(t, exitOK, code, stderr)

	reduced, err := csv.NewReader(strings.NewReader(readFile(t, filepath.Join(outDir, "reduced.csv")))).ReadAll()
	require.NoError(t, err)
	require.Len(t, reduced, 6, "every predicted sight reduced")
	rc := columns(reduced[0])
	for _, r := range reduced[1:] {
		for _, name := range []string{"residual_mm", "grid_residual_mm"} {
			v, err := strconv.ParseFloat(r[rc[name]], 64)
			require.NoError(t, err, name)
			assert.InDeltaf(t, 0, v, 0.01, "%s of %s → %s, mm", name, r[rc["from"]], r[rc["to"]])
		}
	}

	// the displayed slope is the bare one with the field ppm and prism
	// constant applied (ts1: 8 ppm, −30 mm = −0.0984 US ft); ts2 applies none
	for _, r := range recs[1:] {
		shown, bare := num(t, r[col["slope_distance_usft"]]), num(t, r[col["slope_distance_bare_usft"]])
		want := bare
		if r[col["instrument"]] == "ts1" {
			want = bare*(1+8e-6) - 0.030*3937/1200
		}
		assert.InDeltaf(t, want, shown, 1e-9, "%s → %s: displayed slope, US ft", r[col["from"]], r[col["to"]])
	}
	// A → C runs due north along the central meridian of UTM zone 32:
	// grid bearing and azimuth are zero
	for _, r := range recs[1:] {
		if r[col["from"]] == "A" && r[col["to"]] == "C" {
			assert.InDelta(t, 0, num(t, r[col["grid_bearing_dms"]]), 1e-6, "grid bearing A → C, packed DMS")
			assert.InDelta(t, 0, num(t, r[col["geodetic_azimuth_dms"]]), 1e-6, "azimuth A → C, packed DMS")
		}
	}
}

// A sight to a −34.4 mm target with ts1 (8 ppm and −30 mm set): the
// instrument displays the bare slope·(1 + 8e-6) plus what it applies,
// −34.4 mm (−0.112861 US ft) if it applies the target's own constant,
// −30 mm (−0.098425 US ft) if it keeps the one set in it.
func TestPredictWithEachPrismReading(t *testing.T) {
	dir := predictJob(t, "from,to,instrument_height,target_height,instrument,prism_constant_mm\nA,B,5.0853,5.9055,ts1,-34.4\n")
	for reading, applied := range map[string]float64{"applied": -0.0344, "target": -0.030} {
		code, out, stderr := runCmd(t, "predict", "-config", filepath.Join(dir, "job.toml"), "-pairs", filepath.Join(dir, "pairs.csv"), "-csv",
			"-instrument", "ts1", "-row-prism-constant", reading)
		require.Equal(t, exitOK, code, stderr)
		recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
		require.NoError(t, err)
		require.Len(t, recs, 2)
		col, r := columns(recs[0]), recs[1]
		shown, bare := num(t, r[col["slope_distance_usft"]]), num(t, r[col["slope_distance_bare_usft"]])
		assert.InDeltaf(t, bare*(1+8e-6)+applied*3937/1200, shown, 1e-9, "%s: displayed slope, US ft", reading)
		assert.Equalf(t, strconv.FormatFloat(applied*1000, 'g', -1, 64), r[col["field_prism_constant_mm"]], "%s: the constant applied, mm", reading)
		assert.Equalf(t, "-34.4", r[col["prism_constant_mm"]], "%s: the target's constant, mm", reading)
	}
}

func TestPredictTable(t *testing.T) {
	dir := predictJob(t, "from,to,instrument_height,target_height\nA,C,5,5\n")
	code, out, stderr := runCmd(t, "predict", "-config", filepath.Join(dir, "job.toml"), "-pairs", filepath.Join(dir, "pairs.csv"),
		"-instrument", "ts1", "-length-unit", "m", "-points", filepath.Join(dir, "pts-m.csv"))
	require.Equal(t, exitFailed, code, "the flags win: a points file that is not there")
	assert.Contains(t, stderr, "pts-m.csv")

	code, out, stderr = runCmd(t, "predict", "-config", filepath.Join(dir, "job.toml"), "-pairs", filepath.Join(dir, "pairs.csv"))
	require.Equal(t, exitFailed, code, "two profiles and no default_instrument")
	assert.Contains(t, stderr, "pairs.csv:2: no instrument column and no default_instrument")

	require.NoError(t, os.WriteFile(filepath.Join(dir, "pairs.csv"), []byte("from,to,instrument_height,target_height,instrument,note\nA,C,5,5,ts1,north\n"), 0o644))
	code, out, stderr = runCmd(t, "predict", "-config", filepath.Join(dir, "job.toml"), "-pairs", filepath.Join(dir, "pairs.csv"))
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, stderr, `pairs.csv:1: unknown column "note" (column 6) is ignored`)
	assert.Contains(t, out, "lengths in us-ft, angles in dms")
	assert.Contains(t, out, "licensed surveyor")
	// due north: both bearings print as 0°00′00.00″
	assert.Equal(t, 2, strings.Count(out, "0°00′00.00″"), out)
}

func TestPredictBadInput(t *testing.T) {
	for _, tc := range []struct {
		name, pairs string
		flags       []string
		want        []string
	}{
		{"bad height", "from,to,instrument_height,target_height,instrument\nA,B,5,abc,ts1\nA,C,5,5,ts1\nB,C,5,500,ts1\n", nil,
			[]string{`pairs.csv:2:4: target_height "abc": want a height over the mark in us-ft`, `pairs.csv:4:4: target_height "500"`}},
		{"missing column", "from,to,instrument_height\nA,B,5\n", nil, []string{"pairs.csv:1: header: missing required column(s) target_height"}},
		{"half an atmosphere", "from,to,instrument_height,target_height,instrument,temperature_c,pressure_hpa,humidity_pct\nA,B,5,5,ts1,20,,50\n", nil,
			[]string{`pairs.csv:2:7: pressure_hpa "": want a value`}},
		{"pressure out of range", "from,to,instrument_height,target_height,instrument,temperature_c,pressure_hpa,humidity_pct\nA,B,5,5,ts1,20,101.3,50\n", nil,
			[]string{`pairs.csv:2:7: pressure_hpa "101.3": want a pressure in 500..1100 hPa`}},
		{"unknown point", "from,to,instrument_height,target_height,instrument\nA,Z,5,5,ts1\n", nil, []string{`pairs.csv:2: target "Z" is not in`}},
		{"unknown profile", "from,to,instrument_height,target_height,instrument\nA,B,5,5,ts9\n", nil, []string{`pairs.csv:2: instrument "ts9" has no [instrument.ts9] profile`}},
		{"same point", "from,to,instrument_height,target_height,instrument\nA,A,5,5,ts1\n", nil, []string{`pairs.csv:2:2: to "A": want a target other than the station "A"`}},
		{"ragged row", "from,to,instrument_height,target_height,instrument\nA,B,5,5\n", nil, []string{"pairs.csv:2: want 5 fields as in the header, got 4"}},
		{"empty", "", nil, []string{"pairs.csv:1: header: the file is empty"}},
		{"no sights", "from,to,instrument_height,target_height\n", nil, []string{"no sights after the header"}},
		{"no pairs flag", "from,to,instrument_height,target_height\n", []string{"-pairs", ""}, []string{"-pairs FILE is required"}},
		{"bad k", "from,to,instrument_height,target_height,instrument\nA,B,5,5,ts1\n", []string{"-k", "NaN"}, []string{`-k "NaN": want a decimal number`}},
		{"prism constant not said", "from,to,instrument_height,target_height,instrument,prism_constant_mm\nA,B,5,5,ts1,-34.4\n", nil,
			[]string{`pairs.csv:2: prism_constant_mm -34.4 mm differs from field_prism_constant_mm -30 mm of [instrument.ts1], and the job does not say which the instrument applies: say which with row_prism_constant = "target" or "applied"`}},
		{"bad row prism reading", "from,to,instrument_height,target_height,instrument\nA,B,5,5,ts1\n", []string{"-instrument", "ts1", "-row-prism-constant", "true"},
			[]string{`instrument.ts1.row_prism_constant: "true": want "target"`}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := predictJob(t, tc.pairs)
			args := append([]string{"predict", "-config", filepath.Join(dir, "job.toml"), "-pairs", filepath.Join(dir, "pairs.csv")}, tc.flags...)
			code, out, stderr := runCmd(t, args...)
			assert.Equal(t, exitFailed, code)
			assert.Empty(t, out, "no table when a sight cannot be predicted")
			for _, w := range tc.want {
				assert.Contains(t, stderr, w)
			}
		})
	}
}

func columns(header []string) map[string]int {
	col := map[string]int{}
	for i, h := range header {
		col[h] = i
	}
	return col
}

func num(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	require.NoError(t, err, s)
	return v
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	return string(b)
}
