package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/outset"
	"github.com/geored/geored/reduce"
)

// rawXMLRows are the raw scenario's observations as LandXML carries them
// (the meteorology, the same on every row, goes to the job's
// default_atmosphere: LandXML 1.2 has none per observation).
func rawXMLRows(t *testing.T, sc *rawScenario) []xmlRow {
	t.Helper()
	r := csv.NewReader(bytes.NewReader(readAuditFile(t, filepath.Join(sc.dir, "raw.csv"))))
	r.Comment = '#'
	recs, err := r.ReadAll()
	require.NoError(t, err)
	require.Equal(t, []string{"from", "to", "slope_distance", "zenith_angle", "instrument_height", "target_height", "temperature_c", "pressure_hpa", "humidity_pct"}, recs[0])
	var rows []xmlRow
	for i, f := range recs[1:] {
		require.Equal(t, []string{"26.5", "987.5", "55"}, f[6:], "one atmosphere for every row")
		rows = append(rows, xmlRow{"o" + strconv.Itoa(i+1), f[0], f[1], f[2], f[3], f[4], f[5], ""})
	}
	return rows
}

func readAuditFile(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	return b
}

// rawJobWith writes the raw scenario's job with extra top-level settings
// and tables, and observations as given, as dir/NAME.
func rawJobWith(t *testing.T, sc *rawScenario, name, top, tables string, observations string) string {
	t.Helper()
	job := strings.Replace(rawScenarioJob, `observations = ["raw.csv"]`+"\n", observations+"\n"+top, 1)
	p := filepath.Join(sc.dir, name)
	require.NoError(t, os.WriteFile(p, []byte(job+tables), 0o644))
	return p
}

const rawScenarioAtmosphere = "[default_atmosphere]\ntemperature_c = 26.5\npressure_hpa = 987.5\nhumidity_pct = 55\n"

// The raw scenario's observations given as a LandXML 1.2 file give the
// audit the CSV gives: audit.csv byte for byte (every stage of our
// reduction, every verdict and named cause), the raw row to an unknown
// mark rejected at its element's line.
func TestAuditRawLandXML(t *testing.T) {
	sc := newRawScenario(t)
	code, stdout, stderr := runCmd(t, "audit", "-config", sc.config, sc.file)
	require.Equal(t, exitFlagged, code, "%s\n%s", stdout, stderr)
	csvAudit := string(readAuditFile(t, filepath.Join(sc.dir, "out", "audit.csv")))

	// and one more that LandXML refuses: its target height is not a number
	xmlRows := append(rawXMLRows(t, sc), xmlRow{"o-bad", "ALDER", "BIRCH", "812.3456", "89.5", "1.602", "n/a", ""})
	xml := landXML(xmlRows, `<Metric linearUnit="meter" areaUnit="squareMeter" volumeUnit="cubicMeter" angularUnit="decimal degrees"/>`, nil)
	require.NoError(t, os.WriteFile(filepath.Join(sc.dir, "raw.xml"), []byte(xml), 0o644))
	cfg := rawJobWith(t, sc, "xml.toml", `out = "out-xml"`+"\n", rawScenarioAtmosphere, `observations = ["raw.xml"]`)
	require.NoError(t, os.WriteFile(cfg, bytes.Replace(readAuditFile(t, cfg), []byte(`out = "out"`+"\n"), nil, 1), 0o644))
	code, stdout, stderr = runCmd(t, "audit", "-config", cfg, sc.file)
	require.Equal(t, exitFlagged, code, "%s\n%s", stdout, stderr)
	out := filepath.Join(sc.dir, "out-xml")
	assert.Equal(t, csvAudit, string(readAuditFile(t, filepath.Join(out, "audit.csv"))))

	rows, col := readColumns(t, filepath.Join(out, "audit.csv"))
	named := 0
	for _, r := range rows[1:] {
		if w, ok := sc.want[r[col["id"]]]; ok {
			assert.Equal(t, w[1], r[col["cause"]], r[col["id"]])
			named++
		}
	}
	assert.Equal(t, len(sc.want), named)

	rej := readCSV(t, filepath.Join(out, "rejects.csv"))
	require.Len(t, rej, 3)
	assert.Equal(t, filepath.Join(sc.dir, "raw.xml"), rej[1][0])
	line := strings.Count(xml[:strings.Index(xml, `<TargetPoint pntRef="NOWHERE"/>`)], "\n")
	assert.Equal(t, strconv.Itoa(line), rej[1][1], "the element's line: its RawObservation's, the line before its TargetPoint")
	assert.Contains(t, rej[1][3], `"NOWHERE" is not in the points file`)
	line = strings.Count(xml[:strings.Index(xml, `name="o-bad"`)], "\n") + 1
	assert.Equal(t, []string{filepath.Join(sc.dir, "raw.xml"), strconv.Itoa(line)}, rej[2][:2], "the refused element's line")
	assert.Contains(t, rej[2][2], `targetHeight="n/a"`, "the element as written")
	assert.Contains(t, rej[2][3], `raw.xml:`+strconv.Itoa(line)+`:`, "the reason names the element's line")
	assert.Contains(t, rej[2][3], `targetHeight "n/a"`, "and LandXML's own reason")
	var sum struct {
		Inputs []struct{ Role, Path string } `json:"inputs"`
		Counts struct {
			ObsRead     int `json:"observations_read"`
			ObsRejected int `json:"observations_rejected"`
		} `json:"counts"`
	}
	require.NoError(t, json.Unmarshal(readAuditFile(t, filepath.Join(out, "summary.json")), &sum))
	assert.Equal(t, sc.obs+1, sum.Counts.ObsRead)
	assert.Equal(t, 2, sum.Counts.ObsRejected)
	assert.Contains(t, sum.Inputs, struct{ Role, Path string }{"raw observations", filepath.Join(sc.dir, "raw.xml")})
}

// "-observations -" reads the raw observations from standard input, CSV
// or LandXML, with job_alpha too (which counts them first), named stdin
// in summary.json, and gives the audit the file gives; "-" twice is
// refused.
func TestAuditRawStdin(t *testing.T) {
	bin := setBinary(t)
	sc := newRawScenario(t)
	code, stdout, stderr := exitCode(t, bin, "audit", "-config", sc.config, sc.file)
	require.Equal(t, exitFlagged, code, "%s\n%s", stdout, stderr)
	want := string(readAuditFile(t, filepath.Join(sc.dir, "out", "audit.csv")))
	xml := landXML(rawXMLRows(t, sc), `<Metric linearUnit="meter" angularUnit="decimal degrees"/>`, nil)
	atm := rawJobWith(t, sc, "atm.toml", "", rawScenarioAtmosphere, `observations = ["raw.csv"]`)
	alpha := rawJobWith(t, sc, "alpha.toml", "job_alpha = 0.001\n", rawScenarioAtmosphere, `observations = ["raw.csv"]`)
	for _, c := range []struct {
		name, config, input string
	}{
		{"CSV", sc.config, string(readAuditFile(t, filepath.Join(sc.dir, "raw.csv")))},
		{"LandXML", atm, xml},
		{"CSV with job_alpha", alpha, string(readAuditFile(t, filepath.Join(sc.dir, "raw.csv")))},
	} {
		cmd := exec.Command(bin, "audit", "-config", c.config, "-quiet", "-observations", "-", sc.file)
		cmd.Stdin = strings.NewReader(c.input)
		var e bytes.Buffer
		cmd.Stderr = &e
		err := cmd.Run()
		var ee *exec.ExitError
		require.ErrorAs(t, err, &ee, "%s: %s", c.name, e.String())
		require.Equal(t, exitFlagged, ee.ExitCode(), "%s: %s", c.name, e.String())
		out := filepath.Join(sc.dir, "out")
		var sum struct {
			Inputs []struct {
				Role, Path string
				Rows       int
			} `json:"inputs"`
			Tests int `json:"tests"`
		}
		require.NoError(t, json.Unmarshal(readAuditFile(t, filepath.Join(out, "summary.json")), &sum))
		assert.Contains(t, sum.Inputs, struct {
			Role, Path string
			Rows       int
		}{"raw observations", "stdin", sc.obs}, c.name)
		if c.config == alpha {
			assert.Equal(t, 2*sc.rows, sum.Tests, "%s: the delivered rows and their raw comparisons", c.name)
			continue
		}
		assert.Equal(t, want, string(readAuditFile(t, filepath.Join(out, "audit.csv"))), c.name)
	}
	code, _, stderr = exitCode(t, bin, "audit", "-config", sc.config, "-observations", "-", "-observations", "-", sc.file)
	assert.Equal(t, exitFailed, code)
	assert.Contains(t, stderr, `standard input ("-") can be read once`)
}

// auditOffsetRow is a delivered grid distance of ALDER–BIRCH 7 mm longer than
// the scenario's clean one: within the tolerance (5 mm + 2 ppm, 95 %)
// but |w| = 3.5 beside our reduction (σ 2 mm), over the default critical
// value 3.29: a cause is looked for, and named, only while the critical
// value is under 3.5.
func auditOffsetRow(t *testing.T, sc *rawScenario) {
	t.Helper()
	rows := readCSV(t, sc.file)
	require.Equal(t, []string{"id", "from", "to", "kind", "distance", "sigma"}, rows[0])
	require.Equal(t, "r-clean-grid", rows[1][0])
	v, err := strconv.ParseFloat(rows[1][4], 64)
	require.NoError(t, err)
	f, err := os.OpenFile(sc.file, os.O_APPEND|os.O_WRONLY, 0)
	require.NoError(t, err)
	_, err = f.WriteString("r-offset,ALDER,BIRCH,grid," + strconv.FormatFloat(v+0.007, 'f', 4, 64) + ",0.002\n")
	require.NoError(t, err)
	require.NoError(t, f.Close())
	sc.rows++
}

// The audit's critical value is critical_value, or with job_alpha
// Šidák's over its tests (reduce.SidakCritical): one for each delivered
// row and one for each delivered distance set beside our reduction of
// its raw observations. It decides whether a cause is looked for on a
// row within the tolerance.
func TestAuditCriticalValue(t *testing.T) {
	sc := newRawScenario(t)
	auditOffsetRow(t, sc)
	tests := 2 * sc.rows // every delivered row has raw observations
	cases := []struct {
		name, top string
		critical  float64
		named     bool
	}{
		{"default", "", reduce.DefaultCriticalValue, true},
		{"critical_value", "critical_value = 4.5\n", 4.5, false},
		{"job_alpha", "job_alpha = 0.001\n", 0, false},
		{"job_alpha large", "job_alpha = 0.3\n", 0, true},
	}
	for i, c := range cases {
		cfg := rawJobWith(t, sc, "job"+strconv.Itoa(i)+".toml", c.top, "", `observations = ["raw.csv"]`)
		code, stdout, stderr := runCmd(t, "audit", "-config", cfg, "-quiet", sc.file)
		require.Equal(t, exitFlagged, code, "%s: %s\n%s", c.name, stdout, stderr)
		out := filepath.Join(sc.dir, "out")
		var sum struct {
			Critical float64 `json:"critical_value"`
			JobAlpha float64 `json:"job_alpha"`
			Tests    int     `json:"tests"`
		}
		require.NoError(t, json.Unmarshal(readAuditFile(t, filepath.Join(out, "summary.json")), &sum))
		want := c.critical
		if alpha, ok := strings.CutPrefix(c.top, "job_alpha = "); ok {
			a, err := strconv.ParseFloat(strings.TrimSpace(alpha), 64)
			require.NoError(t, err)
			want, err = reduce.SidakCritical(a, tests)
			require.NoError(t, err)
			assert.Equal(t, a, sum.JobAlpha, c.name)
			assert.Equal(t, tests, sum.Tests, c.name)
		} else {
			assert.Zero(t, sum.Tests, c.name)
		}
		assert.InDelta(t, want, sum.Critical, 1e-12, c.name)
		html := string(readAuditFile(t, filepath.Join(out, "report.html")))
		assert.Contains(t, html, "critical value "+strconv.FormatFloat(want, 'f', 2, 64), c.name)
		if sum.Tests > 0 {
			assert.Contains(t, html, "over the audit's "+strconv.Itoa(tests)+" tests", c.name)
		}
		rows, col := readColumns(t, filepath.Join(out, "audit.csv"))
		last := rows[len(rows)-1]
		require.Equal(t, "r-offset", last[col["id"]])
		assert.Equal(t, "pass", last[col["verdict"]], c.name)
		w, err := strconv.ParseFloat(last[col["delivered_minus_ours_w"]], 64)
		require.NoError(t, err)
		require.InDelta(t, 3.5, w, 0.5, "%s: the raw comparison's w", c.name)
		require.Equal(t, c.named, w > want, "%s: w %.2f against %.2f", c.name, w, want)
		if c.named {
			assert.NotEmpty(t, last[col["raw_cause"]], "%s: |w| %.2f over %.2f: a cause is looked for", c.name, w, want)
		} else {
			assert.Empty(t, last[col["raw_cause"]], "%s: |w| %.2f within %.2f", c.name, w, want)
		}
		for _, r := range rows[1:] {
			if _, bad := sc.want[r[col["id"]]]; !bad && r[col["id"]] != "r-offset" {
				assert.Empty(t, r[col["cause"]], "%s: %s", c.name, r[col["id"]])
			}
		}
	}
}

// A rerun of an audit into its folder of earlier outputs says so on
// stderr, with the earlier set's input hash and time, and records them
// in summary.json's replaces; the first run, into a new folder, records
// none. A change of settings changes the input hash.
func TestAuditRerunSaysWhatItReplaces(t *testing.T) {
	sc := newAuditScenario(t)
	out := filepath.Join(sc.dir, "out")
	type summary struct {
		InputHash string `json:"input_hash"`
		Replaces  *struct {
			Created   string `json:"created"`
			InputHash string `json:"input_hash"`
		} `json:"replaces"`
	}
	read := func() summary {
		var s summary
		require.NoError(t, json.Unmarshal(readAuditFile(t, filepath.Join(out, "summary.json")), &s))
		return s
	}
	code, _, stderr := runCmd(t, "audit", "-config", sc.config, "-quiet", sc.file)
	require.Equal(t, exitFlagged, code, stderr)
	assert.NotContains(t, stderr, "holds the outputs")
	first := read()
	assert.Nil(t, first.Replaces)
	require.Len(t, first.InputHash, 64)
	st, err := os.Stat(filepath.Join(out, outset.ManifestName))
	require.NoError(t, err)
	made := st.ModTime().UTC()
	m, err := outset.ReadManifest(out)
	require.NoError(t, err)
	assert.Equal(t, first.InputHash, m.InputHash, "the manifest says what the set is the output of")

	code, _, stderr = runCmd(t, "audit", "-config", sc.config, "-quiet", "-critical", "4", sc.file)
	require.Equal(t, exitFlagged, code, stderr)
	assert.Regexp(t, `^geored: `+regexp.QuoteMeta(out)+` holds the outputs of geored audit \(input hash `+first.InputHash[:12]+`\) made `+made.Format("2006-01-02 15:04:05")+` UTC; this run replaces them`, stderr)
	second := read()
	require.NotNil(t, second.Replaces)
	assert.Equal(t, first.InputHash, second.Replaces.InputHash)
	assert.Equal(t, made.Truncate(time.Second).Format(time.RFC3339), second.Replaces.Created)
	assert.NotEqual(t, first.InputHash, second.InputHash, "another critical value, another audit")
}
