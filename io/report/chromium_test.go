package report

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	cdplog "github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// chromiumPath is Debian's chromium package's browser, which `make
// chromium` installs.
const chromiumPath = "/usr/bin/chromium"

// chromiumEnv, set to 1 (as `make test` does), makes a missing browser a
// failure instead of a skip.
const chromiumEnv = "GEORED_CHROMIUM_TEST"

// screenshotDir, when set, keeps the screenshots that TestReportInChromium
// takes there; by default they go to the test's temporary folder.
var screenshotDir = flag.String("screenshots", "", "keep the report's screenshots from the Chromium test in this folder")

// The widths a report must read at without anything cut off or
// overlapping: an office laptop's and a desktop monitor's; the heights
// are their first screens (the browser's own bars take the rest).
var layoutWidths = []struct{ width, height int64 }{{1280, 900}, {1920, 1080}}

// TestReportInChromium opens report.html in headless Chromium from a file
// URL and checks what a reader would get: no console errors, no request
// other than the page itself, a drawn plot, the verdict and the worst
// flagged observation on the first screen and reading back as the
// summary's, the lines' table holding every listed line, and, at 1280
// and 1920 px wide, no table cut off, overflowing its box or overlapping
// another. It takes a screenshot of the first screen and of the whole
// page at each width (see -screenshots).
func TestReportInChromium(t *testing.T) {
	browser := startChromium(t)

	t.Run("report", func(t *testing.T) {
		s := testSummary()
		path := filepath.Join(t.TempDir(), "report.html")
		var page bytes.Buffer
		require.NoError(t, WriteHTML(&page, s))
		require.NoError(t, os.WriteFile(path, page.Bytes(), 0o644))

		var (
			lines   [][]string
			allRows int
			plot    []float64
		)
		ev := open(t, browser, path,
			read(&lines, `Array.from(document.querySelectorAll('#lines-table tbody tr.flagged'),
				tr => Array.from(tr.cells, td => td.innerText))`),
			read(&allRows, `document.querySelectorAll('#lines-table tbody tr').length`),
			read(&plot, `(() => { const r = document.querySelector('#plot svg').getBoundingClientRect();
				return [r.width, r.height, document.querySelectorAll('#plot svg text').length]; })()`),
		)
		assert.Empty(t, ev.problems, "console errors, exceptions or error log entries")
		assert.Equal(t, []string{"file://" + path}, ev.requests, "the page must request nothing but itself")

		var want []Line
		for _, l := range s.Lines {
			if l.Flagged() {
				want = append(want, l)
			}
		}
		require.Len(t, lines, len(want), "one highlighted row per flagged line")
		for i, l := range want {
			checkLineRow(t, l, lines[i])
		}
		assert.Equal(t, len(s.Lines), allRows, "rows of the lines' table")
		require.Len(t, plot, 3)
		assert.Greater(t, plot[0], 300.0, "plot width, CSS px")
		assert.Greater(t, plot[1], 150.0, "plot height, CSS px")
		assert.Greater(t, plot[2], 10.0, "text elements in the plot")

		checkLayout(t, browser, path, s)
	})

	// The demo's report as geored reduce wrote it (the golden file of
	// cmd/geored's end-to-end test, refreshed from a real run): its
	// verdict, worst flagged observation and flagged lines read back as
	// the run's summary.json.
	t.Run("demo report", func(t *testing.T) {
		golden := filepath.Join("..", "..", "cmd", "geored", "testdata", "demo")
		var s Summary
		b, err := os.ReadFile(filepath.Join(golden, "summary.json.golden"))
		require.NoError(t, err)
		require.NoError(t, json.Unmarshal(b, &s))
		page, err := os.ReadFile(filepath.Join(golden, "report.html.golden"))
		require.NoError(t, err)
		path := filepath.Join(t.TempDir(), "report.html")
		require.NoError(t, os.WriteFile(path, page, 0o644))
		var lines [][]string
		ev := open(t, browser, path, read(&lines, `Array.from(document.querySelectorAll('#lines-table tbody tr.flagged'),
				tr => Array.from(tr.cells, td => td.innerText))`))
		assert.Empty(t, ev.problems, "console errors, exceptions or error log entries")
		assert.Equal(t, []string{"file://" + path}, ev.requests, "the page must request nothing but itself")
		require.Equal(t, 3, s.Counts.FlaggedLines, "the demo's three blunders")
		require.Len(t, lines, s.Counts.FlaggedLines, "one highlighted row per flagged line of the run")
		for i, l := range s.Lines[:s.Counts.FlaggedLines] {
			checkLineRow(t, l, lines[i])
		}
		require.NotEmpty(t, s.FlaggedObservations)
		assert.Equal(t, "demo/observations.csv:26", s.FlaggedObservations[0].Where(), "the booking slip is the worst")
		checkLayout(t, browser, path, &s)
	})

	// The checks above can fail: a page with a console error, an
	// uncaught exception and a missing image is caught by each of them.
	t.Run("detects problems", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "bad.html")
		require.NoError(t, os.WriteFile(path, []byte(`<!DOCTYPE html><html><head><meta charset="utf-8"><title>bad</title></head><body>
<script>console.error("planted error")</script>
<script>notDefinedAnywhere()</script>
<img src="missing.png" alt="">
</body></html>`), 0o644))
		ev := open(t, browser, path)
		joined := strings.Join(ev.problems, "\n")
		t.Logf("caught:\n%s", joined)
		assert.Contains(t, joined, "planted error")
		assert.Contains(t, joined, "notDefinedAnywhere")
		assert.Contains(t, joined, "missing.png")
		assert.Contains(t, ev.requests, "file://"+filepath.Join(filepath.Dir(path), "missing.png"))
	})

	// The layout check finds a table wider than the window, a cell whose
	// text runs out of it and a table over another.
	t.Run("detects layout problems", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "bad-layout.html")
		require.NoError(t, os.WriteFile(path, []byte(`<!DOCTYPE html><html><head><meta charset="utf-8"><title>bad</title>
<style>td { white-space: nowrap; } #lines-table td { max-width: 3rem; overflow: hidden; } #statistics-table { position: relative; top: -4rem; }</style></head><body>
<table id="flagged-observations"><tr><td>`+strings.Repeat("wide ", 400)+`</td></tr></table>
<table id="lines-table"><tr><td>a cell too narrow for its text</td></tr></table>
<table id="statistics-table"><tr><td>over the table above</td></tr></table>
</body></html>`), 0o644))
		var problems []string
		open(t, browser, path, chromedp.EmulateViewport(1280, 900), read(&problems, layoutProblems))
		joined := strings.Join(problems, "\n")
		t.Logf("caught:\n%s", joined)
		assert.Contains(t, joined, "flagged-observations: beyond the window")
		assert.Contains(t, joined, "lines-table row 0 cell 0: its text is")
		assert.Contains(t, joined, "statistics-table overlaps")
	})
}

// layoutProblems is JavaScript that lists what is wrong with the layout of
// the report's main tables in the window as it is: a table or cell beyond
// the window's width, a table wider than its scrolling box, a cell whose
// text is wider than the cell, cells of a row over each other, and tables
// over each other.
const layoutProblems = `(() => {
	const ids = ['flagged-observations', 'rejected-rows', 'lines-table', 'statistics-table', 'fit-table'];
	const vw = document.documentElement.clientWidth;
	const out = [];
	const tables = ids.map(id => document.getElementById(id)).filter(t => t);
	for (const t of tables) {
		const r = t.getBoundingClientRect();
		if (r.left < -0.5 || r.right > vw + 0.5) out.push(t.id + ': beyond the window: ' + r.left + ' to ' + r.right + ' of ' + vw + ' px');
		const box = t.parentElement;
		if (box.scrollWidth > box.clientWidth + 1) out.push(t.id + ': wider than its box: ' + box.scrollWidth + ' > ' + box.clientWidth + ' px');
		for (const tr of t.rows) {
			let prev = null;
			for (const c of tr.cells) {
				const cr = c.getBoundingClientRect();
				const at = t.id + ' row ' + tr.rowIndex + ' cell ' + c.cellIndex;
				if (cr.left < -0.5 || cr.right > vw + 0.5) out.push(at + ': beyond the window: ' + cr.left + ' to ' + cr.right + ' px');
				if (c.scrollWidth > c.clientWidth + 1) out.push(at + ': its text is ' + c.scrollWidth + ' px in ' + c.clientWidth + ' px: ' + JSON.stringify(c.innerText));
				if (prev && cr.left < prev.right - 1.5) out.push(at + ': over the cell before it');
				prev = cr;
			}
		}
	}
	for (let i = 0; i < tables.length; i++) {
		for (let j = 0; j < i; j++) {
			const a = tables[i].getBoundingClientRect(), b = tables[j].getBoundingClientRect();
			if (a.left < b.right && b.left < a.right && a.top < b.bottom && b.top < a.bottom) out.push(tables[i].id + ' overlaps ' + tables[j].id);
		}
	}
	return out;
})()`

// firstScreen is JavaScript that reads the verdict and the worst flagged
// observation's cells from the page, and the bottom of each in CSS px
// from the top of the page.
const firstScreen = `(() => {
	const v = document.querySelector('#verdict-text .status');
	const row = document.querySelector('#flagged-observations tbody tr');
	return {
		verdict: v ? v.innerText : '',
		verdictBottom: v ? v.getBoundingClientRect().bottom + window.scrollY : -1,
		worst: row ? Array.from(row.cells, td => td.innerText) : [],
		worstBottom: row ? row.getBoundingClientRect().bottom + window.scrollY : -1,
	};
})()`

// checkLayout opens the report at path at each of layoutWidths: the
// verdict and the worst flagged observation read back as s says, both
// on the first screen; no layout problem; a screenshot of the first
// screen and of the whole page.
func checkLayout(t *testing.T, browser context.Context, path string, s *Summary) {
	t.Helper()
	dir := *screenshotDir
	if dir == "" {
		dir = t.TempDir()
	}
	require.NoError(t, os.MkdirAll(dir, 0o755))
	name := strings.ReplaceAll(t.Name(), "/", "-")
	for _, size := range layoutWidths {
		var (
			problems     []string
			screen, full []byte
			first        struct {
				Verdict       string
				VerdictBottom float64
				Worst         []string
				WorstBottom   float64
			}
		)
		open(t, browser, path,
			chromedp.EmulateViewport(size.width, size.height),
			read(&problems, layoutProblems),
			read(&first, firstScreen),
			keep(&screen, chromedp.CaptureScreenshot()),
			keep(&full, chromedp.FullScreenshot(100)),
		)
		at := fmt.Sprintf("%d px wide", size.width)
		assert.Empty(t, problems, "%s: layout", at)
		assert.Equal(t, fmt.Sprintf("Exit status %d: %s.", s.ExitStatus, s.Verdict), first.Verdict, "%s: the verdict", at)
		assert.Less(t, first.VerdictBottom, float64(size.height), "%s: the verdict on the first screen", at)
		if len(s.FlaggedObservations) > 0 {
			checkWorstRow(t, s, first.Worst)
			assert.Less(t, first.WorstBottom, float64(size.height), "%s: the worst flagged observation on the first screen", at)
		}
		for file, png := range map[string][]byte{"screen": screen, "page": full} {
			out := filepath.Join(dir, fmt.Sprintf("%s-%d-%s.png", name, size.width, file))
			require.NoError(t, os.WriteFile(out, png, 0o644))
			t.Logf("%s: %s", at, out)
		}
	}
}

// checkWorstRow compares the first row of the flagged observations'
// table with the summary's worst flagged observation: its place, ids
// and flags exactly, numbers within half a unit of the printed decimal.
func checkWorstRow(t *testing.T, s *Summary, row []string) {
	t.Helper()
	o := s.FlaggedObservations[0]
	require.Len(t, row, 11, "cells of the worst flagged observation's row")
	assert.Equal(t, "1", row[0])
	assert.Equal(t, o.From+" → "+o.To, row[5], "line")
	assert.Equal(t, o.Where(), row[7], "file:line")
	assert.Equal(t, o.ObsID, row[8], "obs id")
	assert.Equal(t, strings.Join(o.Flags, ", "), row[9], "flagged by")
	lu := float64(lengthOf(s).unit)
	for _, c := range []struct {
		col  int
		what string
		want float64
		half float64 // half the last printed decimal, in the column's unit
	}{
		{1, "|w|", math.Abs(o.W), 0.005},
		{2, "residual, mm", o.ResidualMM, 0.05},
		{3, "residual, ppm", o.ResidualPPM, 0.005},
		{4, "σ, mm", o.SigmaMM, 0.05},
		{6, "geodesic, job's unit", o.Geodesic / lu, 0.00005},
	} {
		got, err := strconv.ParseFloat(row[c.col], 64)
		if assert.NoError(t, err, "%s cell %q", c.what, row[c.col]) {
			assert.InDeltaf(t, c.want, got, c.half*(1+1e-9), "worst flagged observation: %s", c.what)
		}
	}
	if o.HeightChecked {
		assert.Contains(t, row[10], "w "+fixed(o.HeightW, 2), "height check")
	} else {
		assert.Contains(t, row[10], "not checked", "height check")
	}
}

// checkLineRow compares one row of the rendered lines' table with the
// line it shows: ids and flags exactly, numbers within half a unit of
// the decimal the page prints (distances in metres: these summaries'
// jobs are in metres).
func checkLineRow(t *testing.T, l Line, row []string) {
	t.Helper()
	name := l.From + " → " + l.To
	require.Len(t, row, 15, "%s: cells", name)
	assert.Equal(t, l.From, row[0], "%s: from", name)
	assert.Equal(t, l.To, row[1], "%s: to", name)
	assert.Equal(t, strings.Join(l.Flags, ", "), row[2], "%s: flags", name)
	assert.Equal(t, strconv.Itoa(l.Count), row[3], "%s: count", name)
	assert.Equal(t, strings.ReplaceAll(string(flaggedObs(l)), "<wbr>", ""), row[4], "%s: flagged observations", name)
	for _, c := range []struct {
		col  int
		what string
		want float64
		half float64 // half the last printed decimal, in the column's unit
	}{
		{6, "geodesic, m", l.Geodesic, 0.00005},
		{7, "grid, m", l.Grid, 0.00005},
		{8, "mean residual, mm", l.ResidualMM, 0.05},
		{10, "residual, ppm", l.ResidualPPM, 0.005},
		{11, "σ, mm", l.SigmaMM, 0.05},
		{12, "max |w|", l.MaxAbsW, 0.005},
		{13, "spread, mm", l.SpreadMM, 0.05},
	} {
		got, err := strconv.ParseFloat(row[c.col], 64)
		if assert.NoError(t, err, "%s: %s cell %q", name, c.what, row[c.col]) {
			assert.InDeltaf(t, c.want, got, c.half*(1+1e-9), "%s: %s", name, c.what)
		}
	}
	if l.FlaggedObservations < l.Count {
		if got, err := strconv.ParseFloat(row[9], 64); assert.NoError(t, err, "%s: without the flagged %q", name, row[9]) {
			assert.InDeltaf(t, l.UnflaggedResidualMM, got, 0.05*(1+1e-9), "%s: mean without the flagged, mm", name)
		}
	} else {
		assert.Equal(t, "–", row[9], "%s: without the flagged, all flagged", name)
	}
	if l.K == nil {
		assert.Equal(t, "–", row[14], "%s: k where there is none", name)
	} else if k, err := strconv.ParseFloat(row[14], 64); assert.NoError(t, err, "%s: k cell %q", name, row[14]) {
		assert.InDeltaf(t, *l.K, k, 0.0005, "%s: k", name)
	}
}

// startChromium starts one headless Chromium for the test, with a new
// profile and everything that would reach the network switched off. It
// skips the test when the browser is missing, or fails it when chromiumEnv
// is 1.
func startChromium(t *testing.T) context.Context {
	t.Helper()
	if _, err := os.Stat(chromiumPath); err != nil {
		if os.Getenv(chromiumEnv) == "1" {
			t.Fatalf("%s is missing (%v) and %s=1: run `make chromium`, or apt-get install chromium", chromiumPath, err, chromiumEnv)
		}
		t.Skipf("%s is missing: install Debian's chromium package (make chromium) to open the report in a browser", chromiumPath)
	}
	var stderr syncBuffer
	alloc, cancelAlloc := chromedp.NewExecAllocator(context.Background(),
		chromedp.ExecPath(chromiumPath),
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.NoDefaultBrowserCheck,
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.Flag("disable-extensions", true),
		chromedp.UserDataDir(t.TempDir()),
		chromedp.CombinedOutput(&stderr),
	)
	ctx, cancelTimeout := context.WithTimeout(alloc, 2*time.Minute)
	browser, cancelBrowser := chromedp.NewContext(ctx)
	t.Cleanup(func() {
		cancelBrowser()
		cancelTimeout()
		cancelAlloc() // waits for the browser to exit, before its profile folder is removed
		if t.Failed() {
			t.Logf("chromium's output:\n%s", stderr.String())
		}
	})
	start := time.Now()
	require.NoError(t, chromedp.Do(browser), "starting %s", chromiumPath)
	t.Logf("chromium started in %v", time.Since(start).Round(time.Millisecond))
	return browser
}

// pageEvents is what a page did while it loaded: each console error,
// uncaught exception and error log entry, and the URL of each request.
type pageEvents struct {
	problems []string
	requests []string
}

// open loads the file at path in a new tab of browser, runs actions there,
// and returns what the page did.
func open(t *testing.T, browser context.Context, path string, actions ...chromedp.Action[chromedp.Void]) pageEvents {
	t.Helper()
	tab, cancel := chromedp.NewContext(browser)
	defer cancel()

	var (
		mu sync.Mutex
		ev pageEvents
	)
	require.NoError(t, chromedp.Listen(tab, func(e any) {
		mu.Lock()
		defer mu.Unlock()
		switch e := e.(type) {
		case *runtime.EventConsoleAPICalled:
			if e.Type == runtime.ConsoleAPICalledTypeError || e.Type == runtime.ConsoleAPICalledTypeAssert {
				var args []string
				for _, a := range e.Args {
					args = append(args, string(a.Value)+a.Description)
				}
				ev.problems = append(ev.problems, fmt.Sprintf("console.%s: %s", e.Type, strings.Join(args, " ")))
			}
		case *runtime.EventExceptionThrown:
			d := e.ExceptionDetails
			msg := d.Text
			if d.Exception != nil {
				msg += " " + d.Exception.Description
			}
			ev.problems = append(ev.problems, "exception: "+msg)
		case *cdplog.EventEntryAdded:
			if e.Entry.Level == cdplog.EntryLevelError {
				ev.problems = append(ev.problems, fmt.Sprintf("log (%s): %s %s", e.Entry.Source, e.Entry.Text, e.Entry.URL))
			}
		case *network.EventRequestWillBeSent:
			ev.requests = append(ev.requests, e.Request.URL)
		}
	}), "opening a tab")

	start := time.Now()
	steps := append([]chromedp.Action[chromedp.Void]{
		chromedp.Navigate("file://" + path),
		chromedp.WaitReady(chromedp.CSS("body")),
	}, actions...)
	// A last round trip to the page: the listener has seen every event
	// sent before its reply.
	steps = append(steps, chromedp.Evaluate[chromedp.Void](`0`))
	require.NoError(t, chromedp.Do(tab, steps...), "loading %s", path)
	t.Logf("%s loaded and read in %v", filepath.Base(path), time.Since(start).Round(time.Millisecond))

	mu.Lock()
	defer mu.Unlock()
	return pageEvents{problems: append([]string(nil), ev.problems...), requests: append([]string(nil), ev.requests...)}
}

// keep is an action that runs a into dst: a screenshot's bytes.
func keep[T any](dst *T, a chromedp.Action[T]) chromedp.Action[chromedp.Void] {
	return chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
		v, err := a(ctx, tg)
		*dst = v
		return err
	})
}

// read is an action that evaluates the JavaScript expression in the page
// and stores its value, decoded from JSON, in dst.
func read[T any](dst *T, expression string) chromedp.Action[chromedp.Void] {
	return chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
		v, err := chromedp.Evaluate[T](expression)(ctx, tg)
		*dst = v
		return err
	})
}

// syncBuffer is a bytes.Buffer safe for the browser's output and the
// test's reading at once.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}
