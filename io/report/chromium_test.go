package report

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
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

// TestReportInChromium opens report.html in headless Chromium from a file
// URL and checks what a reader would get: no console errors, no request
// other than the page itself, a drawn plot, and a flagged-line table that
// reads back, cell by cell, as the summary's flagged lines.
func TestReportInChromium(t *testing.T) {
	browser := startChromium(t)

	t.Run("report", func(t *testing.T) {
		s := testSummary()
		path := filepath.Join(t.TempDir(), "report.html")
		var page bytes.Buffer
		require.NoError(t, WriteHTML(&page, s))
		require.NoError(t, os.WriteFile(path, page.Bytes(), 0o644))

		var (
			flagged [][]string
			header  []string
			allRows int
			plot    []float64
		)
		ev := open(t, browser, path,
			read(&flagged, `Array.from(document.querySelectorAll('#flagged-lines tbody tr'),
				tr => Array.from(tr.cells, td => td.innerText))`),
			read(&header, `Array.from(document.querySelectorAll('#flagged-lines thead th'), th => th.innerText)`),
			read(&allRows, `document.querySelectorAll('#all-lines tbody tr').length`),
			read(&plot, `(() => { const r = document.querySelector('#plot svg').getBoundingClientRect();
				return [r.width, r.height, document.querySelectorAll('#plot svg text').length]; })()`),
		)
		assert.Empty(t, ev.problems, "console errors, exceptions or error log entries")
		assert.Equal(t, []string{"file://" + path}, ev.requests, "the page must request nothing but itself")

		assert.Equal(t, []string{"from", "to", "count", "geodesic m", "mean residual mm", "ppm", "σ mm",
			"max |w|", "spread mm", "k", "flags"}, header)
		var want []Line
		for _, l := range s.Lines {
			if l.Flagged() {
				want = append(want, l)
			}
		}
		require.Len(t, flagged, len(want), "one row per flagged line")
		for i, l := range want {
			checkFlaggedRow(t, l, flagged[i])
		}
		assert.Equal(t, len(s.Lines), allRows, "rows of the all-lines table")
		require.Len(t, plot, 3)
		assert.Greater(t, plot[0], 300.0, "plot width, CSS px")
		assert.Greater(t, plot[1], 150.0, "plot height, CSS px")
		assert.Greater(t, plot[2], 10.0, "text elements in the plot")
	})

	// The demo's report as geored reduce wrote it (the golden file of
	// cmd/geored's end-to-end test, refreshed from a real run): its
	// rendered flagged-line table reads back as the run's summary.json.
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
		var flagged [][]string
		ev := open(t, browser, path, read(&flagged, `Array.from(document.querySelectorAll('#flagged-lines tbody tr'),
				tr => Array.from(tr.cells, td => td.innerText))`))
		assert.Empty(t, ev.problems, "console errors, exceptions or error log entries")
		assert.Equal(t, []string{"file://" + path}, ev.requests, "the page must request nothing but itself")
		require.Len(t, flagged, s.Counts.FlaggedLines, "one row per flagged line of the run")
		require.Equal(t, 3, s.Counts.FlaggedLines, "the demo's three blunders")
		for i, l := range s.Lines[:s.Counts.FlaggedLines] {
			checkFlaggedRow(t, l, flagged[i])
		}
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
}

// checkFlaggedRow compares one row of the rendered flagged-line table
// with the line it shows: ids and flags exactly, numbers within half a
// unit of the decimal the page prints.
func checkFlaggedRow(t *testing.T, l Line, row []string) {
	t.Helper()
	name := l.From + " → " + l.To
	require.Len(t, row, 11, "%s: cells", name)
	assert.Equal(t, l.From, row[0], "%s: from", name)
	assert.Equal(t, l.To, row[1], "%s: to", name)
	assert.Equal(t, strconv.Itoa(l.Count), row[2], "%s: count", name)
	for _, c := range []struct {
		col  int
		what string
		want float64
		half float64 // half the last printed decimal, in the column's unit
	}{
		{3, "geodesic, m", l.Geodesic, 0.00005},
		{4, "mean residual, mm", l.ResidualMM, 0.05},
		{5, "residual, ppm", l.ResidualPPM, 0.005},
		{6, "σ, mm", l.SigmaMM, 0.05},
		{7, "max |w|", l.MaxAbsW, 0.005},
		{8, "spread, mm", l.SpreadMM, 0.05},
	} {
		got, err := strconv.ParseFloat(row[c.col], 64)
		if assert.NoError(t, err, "%s: %s cell %q", name, c.what, row[c.col]) {
			assert.InDeltaf(t, c.want, got, c.half*(1+1e-9), "%s: %s", name, c.what)
		}
	}
	if l.K == nil {
		assert.Equal(t, "–", row[9], "%s: k where there is none", name)
	} else if k, err := strconv.ParseFloat(row[9], 64); assert.NoError(t, err, "%s: k cell %q", name, row[9]) {
		assert.InDeltaf(t, *l.K, k, 0.0005, "%s: k", name)
	}
	assert.Equal(t, strings.Join(l.Flags, ", "), row[10], "%s: flags", name)
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
