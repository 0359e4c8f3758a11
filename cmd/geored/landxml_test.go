package main

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

// xmlRow is what a LandXML RawObservation carries of a demo row, as
// written in the file.
type xmlRow struct{ id, from, to, sd, za, hi, ht, at string }

// demoXMLRows are the demo's observations as LandXML carries them: the
// CSV's meteorology columns are left out (LandXML 1.2 has no
// per-observation weather, as recalled; the job's default_atmosphere
// applies to both files alike) and the prism column is blank throughout.
// Each is given an invented time of observation, a minute apart.
func demoXMLRows(t *testing.T) []xmlRow {
	t.Helper()
	r := csv.NewReader(bytes.NewReader(mustDemo(t, "demo/observations.csv")))
	r.Comment = '#'
	recs, err := r.ReadAll()
	require.NoError(t, err)
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	var rows []xmlRow
	for i, f := range recs[1:] {
		require.Empty(t, f[col["prism_constant_mm"]], "a prism constant LandXML would not carry")
		rows = append(rows, xmlRow{f[col["obs_id"]], f[col["from"]], f[col["to"]], f[col["slope_distance"]],
			f[col["zenith_angle"]], f[col["instrument_height"]], f[col["target_height"]], fmt.Sprintf("2026-03-14T%02d:%02d:00", 9+i/60, i%60)})
	}
	return rows
}

// demoPoints are the demo's control points: id, easting, northing,
// elevation as written.
func demoPoints(t *testing.T) [][4]string {
	t.Helper()
	r := csv.NewReader(bytes.NewReader(mustDemo(t, "demo/points.csv")))
	r.Comment = '#'
	recs, err := r.ReadAll()
	require.NoError(t, err)
	var pts [][4]string
	for _, f := range recs[1:] {
		pts = append(pts, [4]string{f[0], f[1], f[2], f[3]})
	}
	return pts
}

// obsCSV writes rows as the observation CSV.
func obsCSV(rows []xmlRow) string {
	var b strings.Builder
	b.WriteString("obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,observed_at\n")
	for _, r := range rows {
		fmt.Fprintf(&b, "%s,%s,%s,%s,%s,%s,%s,%s\n", r.id, r.from, r.to, r.sd, r.za, r.hi, r.ht, r.at)
	}
	return b.String()
}

// landXML writes rows as a LandXML 1.2 file of our own: units is the
// Units element's child, points (if any) its CgPoints. A new
// InstrumentSetup starts at each change of station or instrument height,
// as a field export has one per setup. Where face is a packed-degrees
// unit ("dms"), every fifth zenith angle is written as read on the
// reverse face (directFace false: a full turn less the face-left value).
func landXML(rows []xmlRow, unitsEl string, points [][4]string, face ...string) string {
	var b strings.Builder
	b.WriteString(`<?xml version="1.0" encoding="UTF-8"?>
<LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" version="1.2" date="2026-03-14" time="16:20:00">
  <Units>
    ` + unitsEl + `
  </Units>
`)
	if len(points) > 0 {
		b.WriteString("  <CgPoints>\n")
		for _, p := range points {
			fmt.Fprintf(&b, "    <CgPoint name=%q>%s %s %s</CgPoint>\n", p[0], p[2], p[1], p[3])
		}
		b.WriteString("  </CgPoints>\n")
	}
	b.WriteString("  <Survey>\n")
	setup, last, n := 0, "", 0
	for _, r := range rows {
		if key := r.from + "\x00" + r.hi; key != last {
			if last != "" {
				b.WriteString("    </InstrumentSetup>\n")
			}
			setup++
			last = key
			fmt.Fprintf(&b, "    <InstrumentSetup id=\"setup%d\" stationName=%q instrumentHeight=%q>\n      <InstrumentPoint pntRef=%q/>\n", setup, r.from, r.hi, r.from)
		}
		za, direct := r.za, ""
		if n++; len(face) > 0 && n%5 == 0 {
			za, direct = faceRightDMS(r.za), ` directFace="false"`
		}
		at := ""
		if r.at != "" {
			at = fmt.Sprintf(" timeStamp=%q", r.at)
		}
		fmt.Fprintf(&b, "      <RawObservation setupID=\"setup%d\" name=%q slopeDistance=%q zenithAngle=%q%s targetHeight=%q%s>\n        <TargetPoint pntRef=%q/>\n      </RawObservation>\n",
			setup, r.id, r.sd, za, direct, r.ht, at, r.to)
	}
	if last != "" {
		b.WriteString("    </InstrumentSetup>\n")
	}
	b.WriteString("  </Survey>\n</LandXML>\n")
	return b.String()
}

// faceRightDMS is 360° less the packed-degrees zenith angle za
// (ddd.mmssf…), in whole tenths of arc seconds and more as written: a
// demo value that is not a zenith angle is kept, for its reject.
func faceRightDMS(za string) string {
	i := strings.IndexByte(za, '.')
	if i < 0 || len(za)-i-1 < 4 {
		return za
	}
	deg, err1 := strconv.Atoi(za[:i])
	mm, err2 := strconv.Atoi(za[i+1 : i+3])
	frac := za[i+3:] // seconds, then their decimals
	if err1 != nil || err2 != nil || deg <= 0 || deg >= 180 {
		return za
	}
	sec, err := strconv.ParseFloat(frac[:2]+"."+frac[2:], 64)
	if err != nil {
		return za
	}
	dec := len(frac) - 2
	scale := math.Pow(10, float64(dec))
	total := int64(math.Round((float64(deg)*3600 + float64(mm)*60 + sec) * scale)) // in units of the last decimal
	rest := int64(360*3600)*int64(scale) - total
	s := rest / int64(scale)
	f := rest % int64(scale)
	out := fmt.Sprintf("%d.%02d%02d", s/3600, s/60%60, s%60)
	if dec > 0 {
		out += fmt.Sprintf("%0*d", dec, f)
	}
	return out
}

const metricDMS = `<Metric linearUnit="meter" areaUnit="squareMeter" volumeUnit="cubicMeter" angularUnit="decimal dd.mm.ss"/>`

// xmlJob writes the demo job into a folder with the given observation
// files (name → text), units and points (a points.csv, or none: the
// LandXML file's CgPoints).
func xmlJob(t *testing.T, files map[string]string, lengthUnit, angleUnit, points string) string {
	t.Helper()
	dir := t.TempDir()
	job := string(mustDemo(t, "demo/job.toml"))
	job = strings.Replace(job, `points = "points.csv"`, "", 1)
	job = regexp.MustCompile(`(?m)^observations = .*$`).ReplaceAllString(job, "")
	job = regexp.MustCompile(`(?m)^length_unit = .*$`).ReplaceAllString(job, fmt.Sprintf("length_unit = %q", lengthUnit))
	job = regexp.MustCompile(`(?m)^angle_unit = .*$`).ReplaceAllString(job, fmt.Sprintf("angle_unit = %q", angleUnit))
	if points != "" {
		job = `points = "points.csv"` + "\n" + job
		require.NoError(t, os.WriteFile(filepath.Join(dir, "points.csv"), []byte(points), 0o644))
	}
	require.NoError(t, os.WriteFile(filepath.Join(dir, "job.toml"), []byte(job), 0o644))
	for name, text := range files {
		require.NoError(t, os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644))
	}
	return dir
}

// reduceIn runs reduce on the job in dir with the observation file name
// and returns its exit status, stderr and outputs.
func reduceIn(t *testing.T, dir, name string) (int, string, map[string]string) {
	t.Helper()
	out := filepath.Join(dir, "out-"+name)
	code, _, stderr := runCmd(t, "reduce", "-config", filepath.Join(dir, "job.toml"), "-out", out, "-quiet", filepath.Join(dir, name))
	files := map[string]string{}
	for _, f := range []string{"reduced.csv", "lines.csv", "rejects.csv"} {
		if b, err := os.ReadFile(filepath.Join(out, f)); err == nil {
			files[f] = string(b)
		}
	}
	return code, stderr, files
}

// withoutSource drops the file and line columns of reduced.csv, and the
// file:line of each reason in rejects.csv, which name the input.
func withoutSource(t *testing.T, text string, rejects bool) []string {
	t.Helper()
	r := csv.NewReader(strings.NewReader(text))
	recs, err := r.ReadAll()
	require.NoError(t, err)
	var out []string
	for _, rec := range recs {
		if rejects {
			out = append(out, regexp.MustCompile(`^[^:]*:\d+(:\d+)?: `).ReplaceAllString(rec[3], ""))
			continue
		}
		out = append(out, strings.Join(rec[2:], ","))
	}
	return out
}

// assertSameReduction checks that the LandXML run gave the CSV run's
// outputs: lines.csv byte for byte, reduced.csv but for the file and line
// columns, and the same rejects for the same reasons.
func assertSameReduction(t *testing.T, csvOut, xmlOut map[string]string) {
	t.Helper()
	require.Contains(t, xmlOut, "lines.csv")
	assert.Equal(t, csvOut["lines.csv"], xmlOut["lines.csv"], "lines.csv")
	assert.Equal(t, withoutSource(t, csvOut["reduced.csv"], false), withoutSource(t, xmlOut["reduced.csv"], false), "reduced.csv")
	// A row the CSV reader refuses is refused by the LandXML reader, for
	// the same value, in its own words (the element and attribute).
	cr, xr := withoutSource(t, csvOut["rejects.csv"], true), withoutSource(t, xmlOut["rejects.csv"], true)
	require.Equal(t, len(cr), len(xr), "rejects.csv\n%s\n%s", csvOut["rejects.csv"], xmlOut["rejects.csv"])
	quoted := regexp.MustCompile(`^([a-z_]+) ("[^"]*")`)
	attrs := map[string]string{"zenith_angle": "zenithAngle", "slope_distance": "slopeDistance", "target_height": "targetHeight"}
	for i := range cr {
		if m := quoted.FindStringSubmatch(cr[i]); m != nil && attrs[m[1]] != "" {
			assert.Contains(t, xr[i], fmt.Sprintf("RawObservation %s %s: want", attrs[m[1]], m[2]), "rejects.csv row %d", i)
			continue
		}
		assert.Equal(t, cr[i], xr[i], "rejects.csv row %d", i)
	}
}

// The demo job written as LandXML (testdata/landxml/demo.xml, made here
// from the demo's CSV; `-update` rewrites it) reduces as the CSV of the
// same values: lines.csv byte for byte, every reduced value, each row's
// source its element's line and name. With no points file, the control
// comes from the file's CgPoints, with the same result.
func TestLandXMLDemoFile(t *testing.T) {
	rows, pts := demoXMLRows(t), demoPoints(t)
	xml := landXML(rows, metricDMS, pts, "dms")
	golden := filepath.Join("testdata", "landxml", "demo.xml")
	if *update {
		require.NoError(t, os.WriteFile(golden, []byte(xml), 0o644))
	}
	committed, err := os.ReadFile(golden)
	require.NoError(t, err)
	require.Equal(t, xml, string(committed), "%s is not what the demo CSV gives: -update", golden)

	points := string(mustDemo(t, "demo/points.csv"))
	dir := xmlJob(t, map[string]string{"obs.csv": obsCSV(rows), "obs.xml": xml}, "m", "dms", points)
	codeCSV, errCSV, csvOut := reduceIn(t, dir, "obs.csv")
	codeXML, errXML, xmlOut := reduceIn(t, dir, "obs.xml")
	require.Equal(t, exitFlagged, codeCSV, errCSV)
	require.Equal(t, codeCSV, codeXML, errXML)
	assertSameReduction(t, csvOut, xmlOut)
	// The CSV's reject for a mark not in the points file names its
	// column; the LandXML file's names the element's line only, since the
	// column of its stream is not the file's.
	assert.Regexp(t, `obs\.csv:\d+:3: target ""SB-PILLAR3"" is not in the points file`, csvOut["rejects.csv"])
	assert.Regexp(t, `obs\.xml:\d+: target ""SB-PILLAR3"" is not in the points file`, xmlOut["rejects.csv"])

	// Each reduced row names the file, its RawObservation's line and its
	// name attribute.
	lines := strings.Split(xml, "\n")
	recs, err := csv.NewReader(strings.NewReader(xmlOut["reduced.csv"])).ReadAll()
	require.NoError(t, err)
	require.Greater(t, len(recs), 30)
	for _, rec := range recs[1:] {
		assert.Equal(t, filepath.Join(dir, "obs.xml"), rec[0])
		n, err := strconv.Atoi(rec[1])
		require.NoError(t, err)
		assert.Contains(t, lines[n-1], fmt.Sprintf(`<RawObservation setupID="setup`), "line %d", n)
		assert.Contains(t, lines[n-1], fmt.Sprintf(`name=%q`, rec[2]), "line %d", n)
	}

	// Control from the CgPoints.
	dir2 := xmlJob(t, map[string]string{"obs.xml": xml}, "m", "dms", "")
	code2, err2, cgOut := reduceIn(t, dir2, "obs.xml")
	require.Equal(t, codeCSV, code2, err2)
	assert.Equal(t, csvOut["lines.csv"], cgOut["lines.csv"], "lines.csv with the control from CgPoints")
	assert.Equal(t, withoutSource(t, csvOut["reduced.csv"], false), withoutSource(t, cgOut["reduced.csv"], false))
}

// Every unit system the schema allows for these attributes (metric
// meter; imperial USSurveyFoot and foot, the international foot; angles
// in radians, grads, decimal degrees and packed decimal dd.mm.ss) gives
// what the CSV of the same values gives with the job in that unit.
func TestLandXMLUnitSystems(t *testing.T) {
	rows, pts := demoXMLRows(t), demoPoints(t)
	cases := []struct {
		system, linear, angular string
		length                  units.LengthUnit
		angle                   units.AngleUnit
		digits                  int // of the converted angles
	}{
		{"Metric", "meter", "decimal dd.mm.ss", units.Metre, units.PackedDMS, 0},
		{"Metric", "meter", "radians", units.Metre, units.Radians, 12},
		{"Metric", "meter", "grads", units.Metre, units.Gons, 9},
		{"Metric", "meter", "decimal degrees", units.Metre, units.Degrees, 10},
		{"Imperial", "USSurveyFoot", "decimal degrees", units.USSurveyFoot, units.Degrees, 10},
		{"Imperial", "foot", "grads", units.InternationalFoot, units.Gons, 9},
	}
	for _, c := range cases {
		t.Run(c.linear+"/"+c.angular, func(t *testing.T) {
			conv := make([]xmlRow, len(rows))
			length := func(s string) string {
				v, err := strconv.ParseFloat(s, 64)
				require.NoError(t, err)
				return strconv.FormatFloat(v/float64(c.length), 'f', 6, 64)
			}
			for i, r := range rows {
				z, err := units.ParseAngle("zenith", r.za, units.PackedDMS)
				require.NoError(t, err)
				za := r.za
				switch c.angle {
				case units.Radians:
					za = strconv.FormatFloat(z.Radians(), 'f', c.digits, 64)
				case units.Gons:
					za = strconv.FormatFloat(float64(z/units.Gon), 'f', c.digits, 64)
				case units.Degrees:
					za = strconv.FormatFloat(z.Degrees(), 'f', c.digits, 64)
				}
				conv[i] = xmlRow{r.id, r.from, r.to, length(r.sd), za, length(r.hi), length(r.ht), r.at}
			}
			var pb strings.Builder
			pb.WriteString("id,easting,northing,elevation\n")
			for _, p := range pts { // the grid is in metres; heights in the job's unit
				fmt.Fprintf(&pb, "%s,%s,%s,%s\n", p[0], p[1], p[2], length(p[3]))
			}
			unitsEl := fmt.Sprintf(`<%s linearUnit=%q areaUnit="squareFoot" volumeUnit="cubicFeet" angularUnit=%q/>`, c.system, c.linear, c.angular)
			dir := xmlJob(t, map[string]string{"obs.csv": obsCSV(conv), "obs.xml": landXML(conv, unitsEl, nil)}, c.length.String(), c.angle.String(), pb.String())
			codeCSV, errCSV, csvOut := reduceIn(t, dir, "obs.csv")
			codeXML, errXML, xmlOut := reduceIn(t, dir, "obs.xml")
			require.Equal(t, exitFlagged, codeCSV, errCSV)
			require.Equal(t, codeCSV, codeXML, errXML)
			assertSameReduction(t, csvOut, xmlOut)
		})
	}
}

// readRejects reads rejects.csv into line → reason.
func readRejects(t *testing.T, text string) map[int]string {
	t.Helper()
	recs, err := csv.NewReader(strings.NewReader(text)).ReadAll()
	require.NoError(t, err)
	got := map[int]string{}
	for _, rec := range recs[1:] {
		n, err := strconv.Atoi(rec[1])
		require.NoError(t, err)
		got[n] = rec[3]
	}
	return got
}

// The bad-input corpus (testdata/landxml/bad): each file's fault is
// rejected with its reason at its element's line and column, or, where
// the file cannot be read on (malformed XML, units missing or not the
// job's), stops the run with the error; the good observation beside a
// rejected one is reduced, and read = reduced + rejected.
func TestLandXMLBadInput(t *testing.T) {
	cases := []struct {
		file   string
		reject map[int]string // line → part of the reason; nil: the run stops
		stop   string         // part of the error that stops the run
	}{
		{file: "malformed.xml", stop: "malformed.xml:16:12: want well-formed XML (element <RawObservation> closed by </Survey>)"},
		{file: "missing-target.xml", reject: map[int]string{14: "missing-target.xml:14:5: RawObservation: want a TargetPoint with the pntRef of the point sighted"}},
		{file: "setup-without-station.xml", reject: map[int]string{16: `setup-without-station.xml:16:5: RawObservation setupID "s2": want a setup with a station: the InstrumentSetup at line 14, column 5 has no InstrumentPoint pntRef and no stationName`}},
		{file: "no-distance.xml", reject: map[int]string{14: `no-distance.xml:14:5: RawObservation slopeDistance "": want a slope distance in m, or a horizDistance and vertDistance: an observation without a distance cannot be reduced`}},
		{file: "bad-reference-and-number.xml", reject: map[int]string{
			14: `bad-reference-and-number.xml:14:5: RawObservation setupID "s9": want the id of an InstrumentSetup earlier in the file`,
			17: `bad-reference-and-number.xml:17:5: RawObservation slopeDistance "887,2055": want a slope distance in m, > 0 and at most 100 km`}},
		{file: "face-and-time.xml", reject: map[int]string{
			14: `face-and-time.xml:14:5: RawObservation zenithAngle "90.13254": want a face-right zenith angle in dms (directFace is false), strictly between a half turn and a full turn`,
			17: `face-and-time.xml:17:5: RawObservation directFace "left": want true or false (xs:boolean): whether the zenith angle was read on the direct face, face left`,
			20: `face-and-time.xml:20:5: RawObservation timeStamp "14.03.2026 09:01": want the observation's date and time, xs:dateTime as 2026-05-14T09:31:07`}},
		{file: "unknown-instrument.xml", reject: map[int]string{
			17: `unknown-instrument.xml:15:5: InstrumentSetup instrumentDetailsID "ts-7": want the id of an InstrumentDetails earlier in the file`}},
		{file: "wrong-units.xml", stop: `wrong-units.xml:5:5: Imperial linearUnit "USSurveyFoot": want the job's length_unit m: the file and the job disagree (set length_unit = "us-ft" for this file)`},
		{file: "wrong-angle-unit.xml", stop: `wrong-angle-unit.xml:5:5: Metric angularUnit "grads": want the job's angle_unit dms: the file and the job disagree (set angle_unit = "gon" for this file)`},
		{file: "no-angular-unit.xml", stop: `no-angular-unit.xml:5:5: Metric angularUnit "": want the unit of the file's angles: units are never guessed`},
		{file: "no-units.xml", stop: `no-units.xml:8:5: RawObservation: want the file's Units element before its first observation: units are never guessed`},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			text, err := os.ReadFile(filepath.Join("testdata", "landxml", "bad", c.file))
			require.NoError(t, err)
			dir := xmlJob(t, map[string]string{c.file: string(text)}, "m", "dms", string(mustDemo(t, "demo/points.csv")))
			code, stderr, out := reduceIn(t, dir, c.file)
			if c.reject == nil {
				require.Equal(t, exitFailed, code, stderr)
				assert.Contains(t, stderr, c.stop)
				assert.NotContains(t, stderr, c.file+": "+filepath.Join(dir, c.file), "the file named once")
				return
			}
			require.Equal(t, exitFlagged, code, stderr)
			got := readRejects(t, out["rejects.csv"])
			require.Len(t, got, len(c.reject), out["rejects.csv"])
			for line, reason := range c.reject {
				assert.Contains(t, got[line], reason, "line %d", line)
			}
			reduced := strings.Count(out["reduced.csv"], "\n") - 1
			assert.Equal(t, 1, reduced, "the good observation is reduced")
			assert.Equal(t, strings.Count(string(text), "<RawObservation "), reduced+len(got), "read = reduced + rejected")
		})
	}
}

// A file written on one line (several elements to a line) still names
// each observation's line, and reduces as it does pretty-printed.
func TestLandXMLOnOneLine(t *testing.T) {
	rows := demoXMLRows(t)
	pretty := landXML(rows, metricDMS, nil)
	flat := regexp.MustCompile(`>\s+<`).ReplaceAllString(pretty, "><")
	flat = strings.Replace(flat, "?>\n", "?>", 1) // line 1: the declaration and everything
	require.Equal(t, 1, strings.Count(strings.TrimSpace(flat), "\n")+1)
	dir := xmlJob(t, map[string]string{"pretty.xml": pretty, "flat.xml": flat}, "m", "dms", string(mustDemo(t, "demo/points.csv")))
	codeP, errP, p := reduceIn(t, dir, "pretty.xml")
	codeF, errF, f := reduceIn(t, dir, "flat.xml")
	require.Equal(t, codeP, codeF, errP+errF)
	assertSameReduction(t, p, f)
	recs, err := csv.NewReader(strings.NewReader(f["reduced.csv"])).ReadAll()
	require.NoError(t, err)
	for _, rec := range recs[1:] {
		assert.Equal(t, "1", rec[1], "row %s", rec[2])
	}
	for line, reason := range readRejects(t, f["rejects.csv"]) {
		assert.Equal(t, 1, line)
		assert.Regexp(t, `flat.xml:1(:\d+)?: `, reason)
	}
}

// The nightly run reads a LandXML delivery through the same reader: the
// demo as LandXML gives the history the rows of the demo as CSV.
func TestNightlyReadsLandXML(t *testing.T) {
	per := nightRows(t)
	dir := nightlyFolder(t, "bridge")
	xml, err := os.ReadFile(filepath.Join("testdata", "landxml", "demo.xml"))
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", "day.xml"), xml, 0o644))
	code, s, stderr := nightlyJSON(t, "-config", filepath.Join(dir, "job.toml"), "-night", "2026-12-01")
	require.Equal(t, exitFlagged, code, stderr)
	require.Equal(t, map[string]string{"day.xml": "reduced"}, outcomes(s))
	got := countRows(t, filepath.Join(dir, "history.db"), "bridge")
	assert.Equal(t, per.Observations, got.Observations)
	assert.Equal(t, per.Lines, got.Lines)
}

// The demo's LandXML with its instrument named in an Equipment's
// InstrumentDetails reduces as before when the profile gives that
// serialNumber as its serial_number, every row by that profile; with a
// serial number no profile has, every observation is rejected, saying so.
func TestLandXMLInstrumentBySerialNumber(t *testing.T) {
	rows, pts := demoXMLRows(t), demoPoints(t)
	plain := landXML(rows, metricDMS, pts)
	withDetails := func(serial string) string {
		x := strings.Replace(plain, "  <Survey>\n", "  <Survey>\n    <Equipment>\n      <InstrumentDetails id=\"ts\" model=\"T1\" serialNumber=\""+serial+"\"/>\n    </Equipment>\n", 1)
		return strings.ReplaceAll(x, "<InstrumentSetup id=", "<InstrumentSetup instrumentDetailsID=\"ts\" id=")
	}
	dir := xmlJob(t, map[string]string{"plain.xml": plain, "ours.xml": withDetails("S-4711"), "other.xml": withDetails("S-0815")}, "m", "dms", string(mustDemo(t, "demo/points.csv")))
	job := filepath.Join(dir, "job.toml")
	text, err := os.ReadFile(job)
	require.NoError(t, err)
	require.Contains(t, string(text), "[instrument.ts-red]\n")
	require.NoError(t, os.WriteFile(job, []byte(strings.Replace(string(text), "[instrument.ts-red]\n", "[instrument.ts-red]\nserial_number = \"S-4711\"\n", 1)), 0o644))

	codePlain, errPlain, plainOut := reduceIn(t, dir, "plain.xml")
	require.Equal(t, exitFlagged, codePlain, errPlain)
	code, stderr, out := reduceIn(t, dir, "ours.xml")
	require.Equal(t, codePlain, code, stderr)
	assert.Equal(t, plainOut["lines.csv"], out["lines.csv"])
	assert.Equal(t, withoutSource(t, plainOut["reduced.csv"], false), withoutSource(t, out["reduced.csv"], false))
	recs, err := csv.NewReader(strings.NewReader(out["reduced.csv"])).ReadAll()
	require.NoError(t, err)
	for _, r := range recs[1:] {
		assert.Equal(t, "ts-red", r[6])
	}
	sum := readSummary(t, filepath.Join(dir, "out-ours.xml", "summary.json"))
	obs := sum.Inputs[len(sum.Inputs)-1]
	assert.Equal(t, []string{"landxml", "", ""}, []string{obs.Format, obs.Delimiter, obs.DecimalMark}, "summary.json says how the file was read")
	require.Len(t, sum.Settings.Instruments, 1)
	assert.Equal(t, "S-4711", sum.Settings.Instruments[0].SerialNumber, "and the profile's serial number")

	code, stderr, out = reduceIn(t, dir, "other.xml")
	assert.Equal(t, exitFailed, code, "nothing reduced")
	assert.Contains(t, stderr, `InstrumentDetails at line 16, column 7 has serialNumber "S-0815", and no [instrument.NAME] profile has serial_number = "S-0815"`)
}
