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
// vector, two of which fail, and a loop.
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
		header  []string
		verdict string
		plot    []float64
	)
	ev := open(t, browser, path,
		read(&rows, `Array.from(document.querySelectorAll('#pass-fail tbody tr'), tr => Array.from(tr.cells, td => td.innerText))`),
		read(&header, `Array.from(document.querySelectorAll('#pass-fail thead th'), th => th.innerText)`),
		read(&verdict, `document.querySelector('#verdict').innerText`),
		read(&plot, `(() => { const r = document.querySelector('#plot svg').getBoundingClientRect(); return [r.width, r.height]; })()`),
	)
	assert.Empty(t, ev.problems)
	assert.Equal(t, []string{"file://" + path}, ev.requests)
	assert.Equal(t, "Exit status 1: not accepted: some delivered values fail", verdict)
	require.Equal(t, []string{"verdict", "from", "to", "what", "id", "delivered", "control", "residual mm", "ppm", "σ mm",
		"tolerance mm", "margin mm", "cause", "where"}, header)
	require.Len(t, rows, 4)
	// The scale factor applied twice fails by the most: 1499.4 × 0.9996
	// = 1498.80024 m, −599.76 mm, −400 ppm, against 5 mm + 2 ppm ·
	// 1.4994 km = 8.0 mm; then the ellipsoid distance's 40.5 mm, which no
	// signature fits (the elevation factor's s·h_m/R = 1500 · 205/6.38e6
	// = 48.2 mm is 3.9 σ away).
	assert.Equal(t, []string{"fail", "OAK", "PINE", "grid distance", "", "1498.8002", "1499.4000", "-599.8", "-400.00", "2.0", "8.0", "-591.8", "scale factor applied twice", "d.csv:3"}, rows[0])
	assert.Equal(t, "fail", rows[1][0])
	assert.Equal(t, "ellipsoid distance", rows[1][3])
	assert.Equal(t, "40.5", rows[1][7])
	assert.Equal(t, audit.NoKnownCause, rows[1][12])
	for _, r := range rows[2:] {
		assert.Equal(t, "pass", r[0])
		assert.Empty(t, r[12], "a passing value has no cause")
	}
	require.Len(t, plot, 2)
	assert.Greater(t, plot[0], 300.0)
	assert.False(t, math.IsNaN(plot[1]))
}
