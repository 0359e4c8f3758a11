package report

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"golang.org/x/net/html"
	"golang.org/x/net/html/atom"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata from the current output")

// hostileID is a point id that would run a script if the page did not
// escape it.
const hostileID = "<script>alert(1)</script>"

// testSummary is an invented run, made to exercise the page: flagged and
// clean lines, ids in several scripts and one hostile id, a line without
// k, a fit with a significant constant, warnings that need escaping. The
// numbers are not the result of any reduction.
func testSummary() *Summary {
	k := func(x float64) *float64 { return &x }
	return &Summary{
		Tool:        "geored",
		Version:     "0.4.0-test",
		ProjVersion: "9.1.1",
		Settings: Settings{
			CRS:            "EPSG:25832",
			CRSName:        "ETRS89 / UTM zone 32N",
			Datum:          "European Terrestrial Reference System 1989",
			Ellipsoid:      "GRS 1980, a = 6378137 m, 1/f = 298.257222101",
			ReductionDatum: "ellipsoid",
			LengthUnit:     "m",
			AngleUnit:      "gon",
			Geoid:          "constant N = 47.300 m",
			RefractionK:    0.13,
			CriticalValue:  3.29,
			Tolerance:      "5 mm + 5 ppm linear, 95 %",
			DefaultAtmos:   "15 °C, 1013.25 hPa, 60 %",
			Instruments: []InstrumentSettings{{
				Name:                  "TS-A <north crew>",
				WavelengthUM:          0.658,
				ReferenceRefractivity: 286.34,
				AdditiveConstantMM:    0.4,
				ScalePPM:              1.2,
				PrismConstantMM:       -30,
				AppliedPPM:            0,
				AppliedPrismMM:        -30,
				RowPrismConstant:      "target",
				Spec:                  "1 mm + 1.5 ppm, RSS, 1σ",
			}},
			Strict: false,
		},
		Inputs: []InputFile{
			{Role: "points", Path: "control/Brücke & Ufer.csv", SHA256: strings.Repeat("3f", 32), Rows: 6},
			{Role: "observations", Path: "day1/obs.csv", SHA256: strings.Repeat("a0", 32), Rows: 14},
		},
		InputHash: strings.Repeat("5c", 32),
		Counts:    Counts{Read: 14, Reduced: 13, Rejected: 1, Flagged: 3, Lines: 5, FlaggedLines: 2},
		Residuals: ResidualStats{
			Ellipsoid:          Stats{N: 13, MeanMM: 2.14, RMSMM: 4.87, StdDevMM: 4.55, MedianMM: 1.3, RobustSigmaMM: 1.61, MinMM: -3.06, MaxMM: 14.95, MeanPPM: 2.481, MaxAbsW: 5.12},
			Grid:               Stats{N: 13, MeanMM: 2.2, RMSMM: 4.9, StdDevMM: 4.6, MedianMM: 1.36, RobustSigmaMM: 1.63, MinMM: -2.97, MaxMM: 15.02, MeanPPM: 2.517, MaxAbsW: 5.14},
			EllipsoidUnflagged: Stats{N: 10, MeanMM: 0.41, RMSMM: 1.52, StdDevMM: 1.54, MedianMM: 0.62, RobustSigmaMM: 1.48, MinMM: -3.06, MaxMM: 3.3, MeanPPM: 0.73, MaxAbsW: 1.95},
			GridUnflagged:      Stats{N: 10, MeanMM: 0.43, RMSMM: 1.55, StdDevMM: 1.57, MedianMM: 0.64, RobustSigmaMM: 1.5, MinMM: -2.97, MaxMM: 3.31, MeanPPM: 0.75, MaxAbsW: 1.96},
		},
		FlaggedObservations: []FlaggedObservation{
			{File: "day1/obs.csv", Line: 5, From: "Brücke-Nord", To: "東塔", Instrument: "TS-A <north crew>", Geodesic: 642.10558,
				ResidualMM: 7.95, ResidualPPM: 12.38, SigmaMM: 1.9, W: 4.18, Flags: []string{FlagOutlier, FlagHeight}, HeightChecked: true, HeightDifference: 0.498, HeightSigma: 0.012, HeightW: 41.5},
			{File: "day1/obs.csv", Line: 12, ObsID: "A-17", From: "P3", To: hostileID, Instrument: "TS-A <north crew>", Geodesic: 1208.43317,
				ResidualMM: 15.01, ResidualPPM: 12.42, SigmaMM: 2.93, W: 5.12, Flags: []string{FlagOutlier, FlagTolerance},
				HeightChecked: true, HeightDifference: -0.0042, HeightSigma: 0.011, HeightW: -0.38},
			{File: "day1/obs.csv", Line: 13, ObsID: "A-18", From: hostileID, To: "P3", Instrument: "TS-A <north crew>", Geodesic: 1208.43317,
				ResidualMM: 14.89, ResidualPPM: 12.32, SigmaMM: 2.93, W: 5.08, Flags: []string{FlagOutlier, FlagTolerance}},
		},
		Fit: &Fit{
			N: 13, LinesLeftOut: 1, LinesRejected: 1, ObservationsLeftOut: 2,
			ConstantMM: 1.84, ConstantSigma: 0.52, ScalePPM: 0.71, ScaleSigma: 0.9,
			VarianceFactor: 1.37, Evidence: EvidenceEnough, ShortestM: 88.5091, LongestM: 1208.43317, MaxLeverage: 0.41,
			Critical: 4.5, ConstantSignificant: true, ScaleSignificant: false,
		},
		Lines: []Line{
			{From: "P3", To: hostileID, Count: 2, Reciprocal: false, Geodesic: 1208.43317, Grid: 1208.0452,
				MeanArc: 1208.44812, SpreadMM: 0.6, StdDevMM: 0.42, ResidualMM: 14.95, ResidualPPM: 12.372,
				SigmaMM: 2.92, MaxAbsW: 5.12, Flags: []string{"outlier", "tolerance"},
				FlaggedObservations: 2, FlaggedAt: []string{"day1/obs.csv:12", "day1/obs.csv:13"}},
			{From: "Brücke-Nord", To: "東塔", Count: 4, Reciprocal: true, Geodesic: 642.10558, Grid: 641.89981,
				MeanArc: 642.1087, SpreadMM: 9.84, StdDevMM: 4.31, ResidualMM: 3.12, ResidualPPM: 4.859,
				SigmaMM: 1.6, MaxAbsW: 1.95, K: k(0.1318), Flags: []string{"spread", "height"},
				FlaggedObservations: 1, UnflaggedResidualMM: 1.51, FlaggedAt: []string{"day1/obs.csv:5"}},
			{From: "P1", To: "P2", Count: 3, Reciprocal: true, Geodesic: 412.00041, Grid: 411.86843,
				MeanArc: 412.00112, SpreadMM: 1.1, StdDevMM: 0.55, ResidualMM: 0.71, ResidualPPM: 1.723,
				SigmaMM: 1.21, MaxAbsW: 0.6, K: k(0.1402), UnflaggedResidualMM: 0.71},
			{From: "P2", To: "P3", Count: 2, Reciprocal: false, Geodesic: 955.2718, Grid: 954.96564,
				MeanArc: 955.27027, SpreadMM: 0.4, StdDevMM: 0.28, ResidualMM: -1.53, ResidualPPM: -1.602,
				SigmaMM: 1.44, MaxAbsW: 1.07, UnflaggedResidualMM: -1.53},
			{From: "Ω-7", To: "P1", Count: 2, Reciprocal: true, Geodesic: 88.5091, Grid: 88.48069,
				MeanArc: 88.50906, SpreadMM: 0.2, StdDevMM: 0.14, ResidualMM: -0.04, ResidualPPM: -0.452,
				SigmaMM: 1.01, MaxAbsW: 0.03, K: k(-0.4), UnflaggedResidualMM: -0.04},
		},
		Warnings:     []string{`obs.csv: unknown column "remark" & ignored`, "obs.csv:9: rejected, unknown point <Q9>"},
		FirstRejects: []Reject{{File: "day1/obs.csv", Line: 9, Row: `8,P2,<Q9>,412.0071,100.1020,1.55,1.6,,,`, Reason: "day1/obs.csv:9: target \"<Q9>\" is not in the points file"}},
		Testing: Testing{Scope: ScopeObservation, Critical: 3.29, AlphaPerObservation: 0.001, Outliers: 2, ExpectedByChance: 0.013,
			Global: &GlobalTest{N: 13, VarianceFactor: 4.21, Alpha: 0.05, Lower: 0.385, Upper: 1.897, Outcome: "too large", UnflaggedN: 10, UnflaggedVarianceFactor: 0.93}},
		ExitStatus: 1,
		Verdict:    "needs a look: some rows or results need attention",
		Reasons:    []string{"1 of 14 rows rejected (rejects.csv)", "3 of 13 reduced observations flagged"},
		Caution:    Caution,
	}
}

// render writes s with WriteHTML and returns the page.
func render(t *testing.T, s *Summary) string {
	t.Helper()
	var b bytes.Buffer
	require.NoError(t, WriteHTML(&b, s))
	return b.String()
}

func TestWriteHTMLGolden(t *testing.T) {
	got := render(t, testSummary())
	golden := filepath.Join("testdata", "report.golden.html")
	if *update {
		require.NoError(t, os.MkdirAll("testdata", 0o755))
		require.NoError(t, os.WriteFile(golden, []byte(got), 0o644))
	}
	want, err := os.ReadFile(golden)
	require.NoError(t, err, "run go test ./io/report -run TestWriteHTMLGolden -update to create it")
	assert.Equal(t, string(want), got, "report.html differs from %s; review the change and refresh with -update", golden)
}

func TestWriteHTMLDeterministic(t *testing.T) {
	first := render(t, testSummary())
	for i := range 3 {
		assert.Equal(t, first, render(t, testSummary()), "render %d of the same summary", i+2)
	}
}

func TestWriteHTMLEscapesIDs(t *testing.T) {
	page := render(t, testSummary())
	assert.NotContains(t, page, "<script", "a point id became markup")
	assert.NotContains(t, page, "<Q9>", "a warning became markup")
	assert.NotContains(t, page, "<north crew>", "an instrument name became markup")
	assert.Contains(t, page, "&lt;script&gt;alert(1)&lt;/script&gt;", "the id is shown, escaped")

	// Parsed as a browser would, the cells hold the ids as written.
	rows := tableRows(t, page, "lines-table")
	require.Len(t, rows, 5, "one row per line")
	assert.Equal(t, []string{"P3", hostileID}, rows[0][:2])
	assert.Equal(t, []string{"Brücke-Nord", "東塔"}, rows[1][:2])
	obs := tableRows(t, page, "flagged-observations")
	require.Len(t, obs, 3, "one row per flagged observation")
	assert.Equal(t, "P3 → "+hostileID, obs[1][5])
	rejects := tableRows(t, page, "rejected-rows")
	require.Len(t, rejects, 1)
	assert.Equal(t, `8,P2,<Q9>,412.0071,100.1020,1.55,1.6,,,`, rejects[0][2], "the row as written")
}

func TestWriteHTMLNoNetworkReferences(t *testing.T) {
	page := render(t, testSummary())
	for _, ref := range []string{"http://", "https://", "//", "url(", "@import", "src=", "href=", "<script", "<link", "<iframe", "<object", "<img"} {
		assert.NotContains(t, page, ref, "the page must load nothing: found %q", ref)
	}
}

func TestWriteHTMLCaution(t *testing.T) {
	s := testSummary()
	page := render(t, s)
	assert.Equal(t, 2, strings.Count(page, Caution), "caution at top and bottom")
	first, last := strings.Index(page, Caution), strings.LastIndex(page, Caution)
	assert.Less(t, first, strings.Index(page, `id="verdict"`), "caution before the verdict")
	assert.Greater(t, last, strings.Index(page, `id="inputs"`), "caution after the job's inputs")

	s.Caution = ""
	assert.Equal(t, 2, strings.Count(render(t, s), Caution), "a summary without a caution still gets the package's")
}

// What needs action comes first: the verdict, the flagged observations,
// the rejected rows and the lines; then the plot, the statistics, the fit
// and the warnings; the settings, instruments, inputs and hashes last.
func TestWriteHTMLSectionOrder(t *testing.T) {
	page := render(t, testSummary())
	marks := []string{
		"ETRS89 / UTM zone 32N", Caution, `id="verdict"`, "Exit status 1", `id="flagged-observations"`,
		`id="rejected-rows"`, `id="lines-table"`, `<svg viewBox`, `id="statistics-table"`,
		`id="fit-table"`, `id="warnings"`, `id="job"`, "Input hash", `id="instruments"`, `id="inputs"`,
		strings.Repeat("3f", 32), "</footer>",
	}
	at := -1
	for _, m := range marks {
		i := strings.Index(page[at+1:], m)
		require.GreaterOrEqual(t, i, 0, "%q missing after the previous mark", m)
		at += 1 + i
	}
}

func TestWriteHTMLContent(t *testing.T) {
	s := testSummary()
	page := render(t, s)
	for _, want := range []string{
		"14 observations read: 13 reduced, 1 rejected.",
		"3 reduced observations flagged, on 2 of 5 lines.",
		"Exit status 1: needs a look",
		"<li>3 of 13 reduced observations flagged</li>",
		"Σw²/n = 4.210, bounds 0.385 to 1.897 at α 0.05: <strong>too large</strong>; 0.930 without the flagged observations.",
		"chance alone would give about 0.0",
		`<td class="text">day1/<wbr>obs.csv:9</td><td class="text">target &#34;&lt;Q9&gt;&#34; is not in the points file</td>`,
		"Variance factor s₀² = 1.37 from 13 lines, 89 m to 1208 m; largest leverage 0.41. Left out of the fit: 2 flagged observation(s) from the means of lines whose observations disagree; 1 line(s) whose observations disagree and are all flagged; 1 line(s) removed by the fit&#39;s own test.",
		"differs from zero at the critical value 4.50 (Student&#39;s t with 11 degrees of freedom",
		"suggests a wrong prism constant",
		"no sign of a wrong ppm or atmosphere setting",
		"Brücke &amp; Ufer.csv",
		strings.Repeat("3f", 32),
		"0.4.0-test, PROJ 9.1.1",
		"Error bars are ±2σ",
		"<dt>spread</dt><dd>the observations of the line disagree",
		"distances in metres, residuals in mm and ppm",
		"disagrees: the booked target height is 0.498 m above the one the zenith angle implies (σ 0.012 m, w 41.50)",
		"agrees: the booked target height is 0.004 m below the one the zenith angle implies (σ 0.011 m, w -0.38)",
		"not checked: the zenith angle gave the target&#39;s height",
	} {
		assert.Contains(t, page, want)
	}
	assert.NotContains(t, page, "counts do not add up")

	all := tableRows(t, page, "lines-table")
	require.Len(t, all, len(s.Lines))
	// Columns: from, to, flags, count, flagged observations, both ways,
	// geodesic, grid, mean residual, without the flagged, ppm, σ,
	// max |w|, spread, k.
	assert.Equal(t, []string{"Ω-7", "P1", "", "2", "none", "yes", "88.5091", "88.4807", "0.0", "0.0", "-0.45", "1.0", "0.03", "0.2", "-0.400"}, all[4])
	assert.Equal(t, "–", all[3][14], "no k without reciprocal zenith angles")
	assert.Equal(t, []string{"outlier, tolerance", "2", "day1/obs.csv:12, day1/obs.csv:13"}, all[0][2:5], "a line's flagged observations")
	assert.Equal(t, "–", all[0][9], "no mean without the flagged where all are flagged")
	assert.Equal(t, []string{"3.1", "1.5"}, all[1][8:10], "the mean with and without the flagged observation")

	obs := tableRows(t, page, "flagged-observations")
	require.Len(t, obs, 3)
	// Columns: #, |w|, residual, ppm, σ, line, geodesic, file:line, obs
	// id, flagged by, height check.
	assert.Equal(t, []string{"2", "5.12", "15.0", "12.42", "2.9", "P3 → " + hostileID, "1208.4332", "day1/obs.csv:12", "A-17", "outlier, tolerance"}, obs[1][:10])

	stats := tableRows(t, page, "statistics-table")
	require.Len(t, stats, 4)
	// Columns: what, n, median, robust σ, mean, RMS, std. dev., min, max,
	// mean ppm, max |w|.
	assert.Equal(t, []string{"ellipsoid, every observation", "13", "1.3", "1.6", "2.1", "4.9", "4.5", "-3.1", "14.9", "2.48", "5.12"}, stats[0])
	assert.Equal(t, []string{"ellipsoid, without the flagged", "10", "0.6", "1.5", "0.4", "1.5", "1.5", "-3.1", "3.3", "0.73", "1.95"}, stats[1])

	s.Counts.Read = 15
	assert.Contains(t, render(t, s), "These counts do not add up")
}

func TestWriteHTMLNoFlaggedLines(t *testing.T) {
	s := testSummary()
	var clean []Line
	for _, l := range s.Lines {
		if !l.Flagged() {
			clean = append(clean, l)
		}
	}
	s.Lines, s.Counts.Flagged, s.Counts.FlaggedLines = clean, 0, 0
	s.Counts.Read, s.Counts.Rejected, s.FirstRejects = 13, 0, nil
	s.Testing.Outliers, s.Testing.Global.VarianceFactor, s.Testing.Global.Outcome = 0, 1.02, "pass"
	s.Fit = nil
	Decide(s, false)
	require.Equal(t, StatusClean, s.ExitStatus, s.Reasons)
	page := render(t, s)
	assert.NotContains(t, page, `class="flagged"`)
	assert.Contains(t, page, `<p id="no-flagged-lines">No flagged lines`)
	assert.Contains(t, page, "Exit status 0: clean")
	assert.Contains(t, page, "No fit in this run.")
	assert.NotContains(t, page, "flagged line</text>", "no flagged entry in the plot's legend")
}

func TestWriteHTMLNoLines(t *testing.T) {
	s := testSummary()
	s.Lines, s.Fit, s.Warnings = nil, nil, nil
	s.Counts.Lines, s.Counts.FlaggedLines = 0, 0
	page := render(t, s)
	assert.NotContains(t, page, "<svg")
	assert.NotContains(t, page, `id="lines-table"`)
	assert.Contains(t, page, "No line has a residual to plot.")
	assert.Contains(t, page, "No line was reduced, so none could be checked.")
	assert.Contains(t, page, "No warnings.")
}

func TestWriteHTMLNil(t *testing.T) {
	assert.Error(t, WriteHTML(&bytes.Buffer{}, nil))
}

// tableRows parses page as HTML and returns the text of each cell of each
// row in the <tbody> of the table with the given id.
func tableRows(t *testing.T, page, id string) [][]string {
	t.Helper()
	doc, err := html.Parse(strings.NewReader(page))
	require.NoError(t, err)
	table := find(doc, func(n *html.Node) bool {
		if n.DataAtom != atom.Table {
			return false
		}
		for _, a := range n.Attr {
			if a.Key == "id" && a.Val == id {
				return true
			}
		}
		return false
	})
	require.NotNil(t, table, "no table with id %q", id)
	tbody := find(table, func(n *html.Node) bool { return n.DataAtom == atom.Tbody })
	require.NotNil(t, tbody, "table %q has no tbody", id)
	var rows [][]string
	for tr := tbody.FirstChild; tr != nil; tr = tr.NextSibling {
		if tr.DataAtom != atom.Tr {
			continue
		}
		var row []string
		for td := tr.FirstChild; td != nil; td = td.NextSibling {
			if td.DataAtom == atom.Td || td.DataAtom == atom.Th {
				row = append(row, textOf(td))
			}
		}
		rows = append(rows, row)
	}
	return rows
}

// find returns the first node under n, n included, in document order for
// which match is true, or nil.
func find(n *html.Node, match func(*html.Node) bool) *html.Node {
	if match(n) {
		return n
	}
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		if f := find(c, match); f != nil {
			return f
		}
	}
	return nil
}

// textOf joins the text under n.
func textOf(n *html.Node) string {
	if n.Type == html.TextNode {
		return n.Data
	}
	var b strings.Builder
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		b.WriteString(textOf(c))
	}
	return b.String()
}

// A job in US survey feet gets its distances and heights in US survey
// feet on the page, as in its CSVs; residuals stay in mm and ppm.
func TestWriteHTMLLengthUnit(t *testing.T) {
	s := testSummary()
	s.Settings.LengthUnit = "us-ft"
	page := render(t, s)
	assert.Contains(t, page, "distances in US survey feet (1200/3937 m)")
	assert.Contains(t, page, "<th>geodesic US ft</th><th>grid US ft</th>")
	lines := tableRows(t, page, "lines-table")
	// 1208.43317 m · 3937/1200 = 3964.66783 US ft (by hand: 1208.43317 ·
	// 3937 = 4757601.390, / 1200).
	assert.Equal(t, "3964.6678", lines[0][6], "geodesic, US ft")
	obs := tableRows(t, page, "flagged-observations")
	// 0.498 m · 3937/1200 = 1.634 US ft; σ 0.012 m = 0.039 US ft.
	assert.Contains(t, obs[0][10], "the booked target height is 1.634 US ft above the one the zenith angle implies (σ 0.039 US ft, w 41.50)")
	assert.Equal(t, "8.0", obs[0][2], "residual still in mm")
	// The fit's lengths: 88.5091 m = 290 US ft, 1208.43317 m = 3965 US ft.
	assert.Contains(t, page, "from 13 lines, 290 US ft to 3965 US ft")
	assert.Contains(t, page, "geodesic distance from control (US ft)", "the plot's axis")

	s.Settings.LengthUnit = "furlong"
	assert.Error(t, WriteHTML(&bytes.Buffer{}, s), "a unit the page cannot name")
}
