package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/report"
)

// statusAgrees runs geored reduce -json on a job and checks that the
// process status, the -json line, summary.json and report.html say the
// same; it returns the status, the -json line's fields and stderr.
func statusAgrees(t *testing.T, bin, job string, args ...string) (int, map[string]any, string) {
	t.Helper()
	code, stdout, stderr := exitCode(t, bin, append([]string{"reduce", "-config", job, "-json"}, args...)...)
	var m map[string]any
	require.NoError(t, json.Unmarshal([]byte(stdout), &m), "stdout %q stderr %q", stdout, stderr)
	assert.EqualValues(t, code, m["exit_status"], "-json against the process")
	out := filepath.Join(filepath.Dir(job), "out")
	var sum report.Summary
	b, err := os.ReadFile(filepath.Join(out, "summary.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &sum))
	assert.Equal(t, code, sum.ExitStatus, "summary.json against the process")
	assert.Equal(t, m["verdict"], sum.Verdict)
	page, err := os.ReadFile(filepath.Join(out, "report.html"))
	require.NoError(t, err)
	got := regexp.MustCompile(`Exit status (\d): ([^<]*)`).FindSubmatch(page)
	require.NotNil(t, got, "report.html has no exit status")
	assert.Equal(t, fmt.Sprint(code), string(got[1]), "report.html against the process")
	assert.Equal(t, sum.Verdict+".", string(got[2]))
	return code, m, stderr
}

// The exit status a scheduler reads (DESIGN §5): 0 only when rows were
// reduced and none was rejected or flagged; 1 something needs a look; 2
// could not run or nothing could be reduced. Each case was found wrong
// before: nothing reduced and a header-only file exited 0, and rejected
// rows exited 0 without a word.
func TestExitStatusCases(t *testing.T) {
	bin := buildBinary(t)
	clean := cleanDemoRows(t)
	header := clean[:strings.Index(clean, "\n")+1]

	t.Run("clean", func(t *testing.T) {
		code, m, stderr := statusAgrees(t, bin, writeJob(t, clean, ""))
		assert.Equal(t, 0, code, stderr)
		assert.Equal(t, "clean: every row was reduced and no result is flagged", m["verdict"])
		assert.Equal(t, "pass", m["global_test"])
		assert.Empty(t, stderr, "a clean run says nothing on stderr")
	})

	t.Run("points without heights: nothing reduced", func(t *testing.T) {
		job := writeJob(t, clean, "")
		var pts strings.Builder
		for _, line := range strings.Split(strings.TrimSpace(string(mustDemo(t, "demo/points.csv"))), "\n") {
			if f := strings.Split(line, ","); !strings.HasPrefix(line, "#") && !strings.HasPrefix(line, "id,") && len(f) == 4 {
				line = strings.Join(f[:3], ",") + ","
			}
			pts.WriteString(line + "\n")
		}
		require.NoError(t, os.WriteFile(filepath.Join(filepath.Dir(job), "points.csv"), []byte(pts.String()), 0o644))
		code, m, stderr := statusAgrees(t, bin, job)
		assert.Equal(t, 2, code, stderr)
		assert.EqualValues(t, 0, m["reduced"])
		assert.EqualValues(t, 12, m["rejected"])
		assert.Contains(t, stderr, "exit status 2, failed: no row could be reduced")
		assert.Contains(t, stderr, "none of the 12 rows could be reduced")
		assert.Contains(t, stderr, "has no height on the reduction datum", "the first reasons")
		page, err := os.ReadFile(filepath.Join(filepath.Dir(job), "out", "report.html"))
		require.NoError(t, err)
		assert.False(t, strings.Contains(string(page), "every line is within"), "no clean verdict on a run that reduced nothing")
		assert.True(t, strings.Contains(string(page), "No line was reduced, so none could be checked."))
	})

	t.Run("header only", func(t *testing.T) {
		code, m, stderr := statusAgrees(t, bin, writeJob(t, header, ""))
		assert.Equal(t, 2, code, stderr)
		assert.EqualValues(t, 0, m["read"])
		assert.Contains(t, stderr, "the observation files hold no rows")
	})

	t.Run("some rows rejected", func(t *testing.T) {
		require.Equal(t, "obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm\n", header)
		bad := clean
		for i := range 4 {
			bad += fmt.Sprintf("9%d,NB-PILLAR1,NOWHERE-%d,662.6700,90.0000,1.55,1.60,8.5,1007.9,77,\n", i, i)
		}
		code, m, stderr := statusAgrees(t, bin, writeJob(t, bad, ""))
		assert.Equal(t, 1, code, stderr)
		assert.EqualValues(t, 4, m["rejected"])
		assert.EqualValues(t, 12, m["reduced"])
		assert.Contains(t, stderr, "exit status 1, needs a look")
		assert.Contains(t, stderr, "4 of 16 rows rejected")
		assert.Contains(t, stderr, `target "NOWHERE-0" is not in the points file`)
		assert.Equal(t, 4, strings.Count(stderr, "\n  rejected "), "each rejected row's reason")
	})

	t.Run("strict", func(t *testing.T) {
		code, _, stderr := statusAgrees(t, bin, writeJob(t, string(mustDemo(t, "demo/observations.csv")), ""), "-strict")
		assert.Equal(t, 2, code, stderr)
	})

	t.Run("demo observations", func(t *testing.T) {
		code, _, stderr := statusAgrees(t, bin, writeJob(t, string(mustDemo(t, "demo/observations.csv")), ""))
		assert.Equal(t, 1, code, stderr)
	})
}
