package report

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/audit"
)

// testAuditSummary is an invented audit of three distances and a
// vector, two of which fail, and a loop; and a fourth distance, beside our
// reduction of its raw observations, delivered with their 20 ppm applied
// twice.
func testAuditSummary(t *testing.T) (*AuditSummary, func(float64) float64) {
	t.Helper()
	spec := reduce.DistanceSpec{Constant: 5e-3, PPM: 2, Rule: reduce.Linear, Level: reduce.Percent95}
	st := audit.Settings{Tolerance: spec, ToleranceText: "5 mm + 2 ppm, linear, 95 %", Critical: reduce.DefaultCriticalValue}
	line := audit.LineControl{Ellipsoid: 1500, Grid: 1499.4, LineScale: 0.9996, Radius: 6.38e6, HeightA: 200, HeightB: 210, HasHeights: true}
	s := &AuditSummary{Tool: "geored", Version: "test", Tolerance: st.ToleranceText, Critical: st.Critical, CRS: "EPSG:25832", LengthUnit: "m"}
	for i, d := range []audit.Distance{
		{Kind: audit.Grid, Value: 1499.401, Sigma: 2e-3},
		{Kind: audit.Grid, Value: 1499.4 * 0.9996, Sigma: 2e-3},
		{Kind: audit.Ellipsoid, Value: 1500.0405, Sigma: 2e-3},
	} {
		b := audit.Baseline{File: "d.csv", Line: i + 2, From: "OAK", To: "PINE", Distance: d}
		c, err := audit.CheckDistance(d, line, st)
		require.NoError(t, err)
		s.Counts.Read++
		s.Add(DistanceRow(&b, &c))
	}
	// Our reduction: 1500.0000 m on the ellipsoid at 20.0 ppm; the
	// delivered value carries 1500 · 20e-6 = 30 mm more.
	ours := audit.Ours{Count: 2, Raw: 1500.2, Slope: 1500.25, Line: line, PPM: 20, PrismConstant: 0}
	d := audit.Distance{Kind: audit.Ellipsoid, Value: 1500.030, Sigma: 2e-3}
	bd := audit.Baseline{File: "d.csv", Line: 6, From: "PINE", To: "OAK", Distance: d}
	c, err := audit.CheckDistance(d, line, st)
	require.NoError(t, err)
	rc, err := audit.CompareRaw(d, ours, st)
	require.NoError(t, err)
	row := DistanceRow(&bd, &c)
	row.AddRaw(&rc)
	s.Counts.Read++
	s.Add(row)
	b := audit.Baseline{File: "d.csv", Line: 5, From: "OAK", To: "PINE", IsVector: true}
	s.Counts.Read++
	s.Add(VectorRow(&b, &audit.VectorCheck{Ellipsoid: 1500.001, ControlEllipsoid: 1500, Length: 2e-3, Misclosure: r3.Vector{X: 1e-3, Y: 1e-3, Z: 1e-3},
		Verdict: audit.Verdict{Tolerance: 8e-3, Margin: 6e-3, Pass: true}}))
	s.AddLoop(AuditLoop{Number: 1, Length: 4500, MM: 3, PPM: 0.67, Tolerance: 14e-3, Margin: 11e-3, Pass: true, Marks: "OAK → PINE → ASH → OAK"})
	DecideAudit(s)
	tol := func(d float64) float64 { v, _ := spec.At(d); return v }
	return s, tol
}

// TestAuditReportInChromium opens an audit's report.html in headless
// Chromium and reads the pass/fail table back: the failing values first,
// each with its named cause, then the passing ones; no console errors, no
// request but the page, a drawn plot.
func TestAuditReportInChromium(t *testing.T) {
	browser := startChromium(t)
	s, tol := testAuditSummary(t)
	path := filepath.Join(t.TempDir(), "report.html")
	var page bytes.Buffer
	require.NoError(t, WriteAuditHTML(&page, s, tol))
	require.NoError(t, os.WriteFile(path, page.Bytes(), 0o644))
	var (
		rows    [][]string
		raw     [][]string
		header  []string
		verdict string
		plot    []float64
	)
	ev := open(t, browser, path,
		read(&rows, `Array.from(document.querySelectorAll('#pass-fail tbody tr'), tr => Array.from(tr.cells, td => td.innerText))`),
		read(&raw, `Array.from(document.querySelectorAll('#raw tbody tr'), tr => Array.from(tr.cells, td => td.innerText))`),
		read(&header, `Array.from(document.querySelectorAll('#pass-fail thead th'), th => th.innerText)`),
		read(&verdict, `document.querySelector('#verdict').innerText`),
		read(&plot, `(() => { const r = document.querySelector('#plot svg').getBoundingClientRect(); return [r.width, r.height]; })()`),
	)
	assert.Empty(t, ev.problems)
	assert.Equal(t, []string{"file://" + path}, ev.requests)
	assert.Equal(t, "Exit status 1: not accepted: some delivered values fail", verdict)
	require.Equal(t, []string{"verdict", "from", "to", "what", "id", "delivered", "control", "residual mm", "ppm", "σ mm",
		"tolerance mm", "margin mm", "stage", "cause", "where"}, header)
	require.Len(t, rows, 5)
	// The scale factor applied twice fails by the most: 1499.4 × 0.9996
	// = 1498.80024 m, −599.76 mm, −400 ppm, against 5 mm + 2 ppm ·
	// 1.4994 km = 8.0 mm; then the ellipsoid distance's 40.5 mm, which no
	// signature fits (the elevation factor's s·h_m/R = 1500 · 205/6.38e6
	// = 48.2 mm is 3.9 σ away).
	assert.Equal(t, []string{"fail", "OAK", "PINE", "grid distance", "", "1498.8002", "1499.4000", "-599.8", "-400.00", "2.0", "8.0", "-591.8", audit.StageScale, "scale factor applied twice", "d.csv:3"}, rows[0])
	assert.Equal(t, "fail", rows[1][0])
	assert.Equal(t, "ellipsoid distance", rows[1][3])
	assert.Equal(t, "40.5", rows[1][7])
	assert.Equal(t, "", rows[1][12], "no stage")
	assert.Equal(t, audit.NoKnownCause, rows[1][13])
	// The ppm applied twice: 30 mm over the control, 8.0 mm tolerance;
	// named from the raw comparison with its stage.
	assert.Equal(t, []string{"fail", "PINE", "OAK", "ellipsoid distance", "", "1500.0300", "1500.0000", "30.0", "20.00", "2.0", "8.0", "-22.0",
		audit.StageAtmosphere, "ppm applied twice (+20 ppm) (differs from our reduction of the raw observations by 30.0 mm)", "d.csv:6"}, rows[2])
	for _, r := range rows[3:] {
		assert.Equal(t, "pass", r[0])
		assert.Empty(t, r[13], "a passing value has no cause")
	}
	require.Len(t, raw, 1, "the one row with raw observations")
	assert.Equal(t, []string{"fail", "PINE", "OAK", "ellipsoid distance", "2", "1500.0300", "1500.0000", "30.0", "8.0",
		"1500.2500", "1500.0482", "1500.0000", "", "1499.4000", "20.00", audit.StageAtmosphere, "ppm applied twice (+20 ppm)", "d.csv:6"}, raw[0])
	require.Len(t, plot, 2)
	assert.Greater(t, plot[0], 300.0)
	assert.False(t, math.IsNaN(plot[1]))
}
