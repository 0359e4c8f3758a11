package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/history"
	"github.com/geored/geored/io/history/pgtest"
)

// nightlyFolder is a job folder of the demo's job and points with an
// empty inbox; the job's name in the history is its folder's, name.
func nightlyFolder(t *testing.T, name string) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), name)
	require.NoError(t, os.MkdirAll(filepath.Join(dir, "inbox"), 0o755))
	for _, f := range []string{"job.toml", "points.csv"} {
		require.NoError(t, os.WriteFile(filepath.Join(dir, f), mustDemo(t, "demo/"+f), 0o644))
	}
	return dir
}

// deliver puts the demo's observations into the inbox as name, made a
// file of its own content by a first comment line naming tag.
func deliver(t *testing.T, dir, name, tag string) {
	t.Helper()
	b := append([]byte("# delivery "+tag+"\n"), mustDemo(t, "demo/observations.csv")...)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", name), b, 0o644))
}

func nightlyJSON(t *testing.T, args ...string) (int, nightlySummary, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(append([]string{"nightly", "-json"}, args...), &out, &errb)
	var s nightlySummary
	if out.Len() > 0 {
		require.NoError(t, json.Unmarshal(out.Bytes(), &s), out.String())
	}
	return code, s, errb.String()
}

func outcomes(s nightlySummary) map[string]string {
	m := map[string]string{}
	for _, f := range s.Files {
		m[f.Name] = f.Outcome
	}
	return m
}

func countRows(t *testing.T, where, job string) history.Counts {
	t.Helper()
	st, err := history.Open(context.Background(), where)
	require.NoError(t, err)
	defer st.Close()
	c, err := st.Count(context.Background(), job)
	require.NoError(t, err)
	return c
}

// nightRows are the history's rows of one delivery of the demo's
// observations, from a night of its own: the rows that reduce (the
// demo's two unreadable rows are rejected), as its summary counts them.
func nightRows(t *testing.T) history.Counts {
	t.Helper()
	dir := nightlyFolder(t, "probe")
	deliver(t, dir, "probe.csv", "probe")
	_, s, _ := nightlyJSON(t, "-config", filepath.Join(dir, "job.toml"), "-night", "2026-11-01")
	require.Len(t, s.Files, 1)
	c := countRows(t, filepath.Join(dir, "history.db"), "probe")
	require.Equal(t, s.Files[0].Reduced, c.Observations, "every reduced row in the history")
	require.Equal(t, 1, c.Files)
	return c
}

func times(c history.Counts, n int) history.Counts {
	return history.Counts{Files: c.Files * n, Observations: c.Observations * n, Lines: c.Lines * n, Fits: c.Fits * n}
}

// TestNightlyOnce: new files reduced into the night's folder and moved to
// the archive; a file delivered twice under two names processed once; a
// corrupt file rejected with its reason and moved aside; a rerun does
// nothing new; a third night's file is added to the same history.
func TestNightlyOnce(t *testing.T) {
	per := nightRows(t)
	dir := nightlyFolder(t, "bridge")
	cfg := filepath.Join(dir, "job.toml")
	deliver(t, dir, "mon.csv", "mon")
	deliver(t, dir, "mon-again.csv", "mon") // the same content under another name
	require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", "broken.csv"), []byte("not,a,file\n1,2,3\n"), 0o644))

	code, s, stderr := nightlyJSON(t, "-config", cfg, "-night", "2026-12-01")
	require.Equal(t, exitFlagged, code, "a rejected file needs a look: %s", stderr)
	require.Equal(t, map[string]string{"broken.csv": "rejected", "mon-again.csv": "reduced", "mon.csv": "duplicate"}, outcomes(s))
	for _, f := range s.Files {
		if f.Name == "broken.csv" {
			require.Contains(t, f.Reason, "missing required column")
			require.FileExists(t, filepath.Join(dir, "rejected", "broken-"+f.SHA256[:8]+".csv"))
		} else {
			require.FileExists(t, filepath.Join(dir, "archive", f.Name[:len(f.Name)-4]+"-"+f.SHA256[:8]+".csv"))
		}
	}
	require.DirExists(t, filepath.Join(dir, "results", "2026-12-01", "mon-again-"+s.Files[1].SHA256[:8]))
	entries, _ := os.ReadDir(filepath.Join(dir, "inbox"))
	require.Empty(t, entries, "the inbox is emptied")
	hist := filepath.Join(dir, "history.db")
	require.Equal(t, history.Counts{Files: 2, Observations: per.Observations, Lines: per.Lines, Fits: per.Fits}, countRows(t, hist, "bridge"))

	code, s, _ = nightlyJSON(t, "-config", cfg, "-night", "2026-12-01")
	require.Equal(t, exitOK, code)
	require.Empty(t, s.Files, "a rerun does nothing new")

	// The same file delivered again on a later night is not counted twice.
	deliver(t, dir, "tue.csv", "tue")
	deliver(t, dir, "mon-late.csv", "mon")
	code, s, _ = nightlyJSON(t, "-config", cfg, "-night", "2026-12-02")
	require.Equal(t, map[string]string{"tue.csv": "reduced", "mon-late.csv": "duplicate"}, outcomes(s))
	require.Equal(t, history.Counts{Files: 3, Observations: 2 * per.Observations, Lines: 2 * per.Lines, Fits: 2 * per.Fits}, countRows(t, hist, "bridge"))
	require.Contains(t, []int{exitOK, exitFlagged}, code)
}

// TestNightlyKilledRunFinishes kills the built binary at each stage of a
// night (SIGKILL: nothing cleans up) and runs it again: the history ends
// with every file once, the inbox empty, each file archived once.
func TestNightlyKilledRunFinishes(t *testing.T) {
	bin := setBinary(t)
	per := nightRows(t)
	for _, stage := range []string{"row", "complete", "reduced:b.csv", "recorded:b.csv", "moved:a.csv", "moved:b.csv"} {
		t.Run(stage, func(t *testing.T) {
			dir := nightlyFolder(t, "bridge")
			deliver(t, dir, "a.csv", "a")
			deliver(t, dir, "b.csv", "b")
			cfg := filepath.Join(dir, "job.toml")
			cmd := exec.Command(bin, "nightly", "-quiet", "-config", cfg, "-night", "2026-12-01")
			cmd.Env = append(os.Environ(), envStopAt+"="+stage)
			out, err := cmd.CombinedOutput()
			require.Error(t, err, "killed at %s: %s", stage, out)
			cmd = exec.Command(bin, "nightly", "-quiet", "-config", cfg, "-night", "2026-12-01")
			out, err = cmd.CombinedOutput()
			if err != nil {
				require.Equal(t, exitFlagged, cmd.ProcessState.ExitCode(), "%s", out)
			}
			require.Equal(t, times(per, 2), countRows(t, filepath.Join(dir, "history.db"), "bridge"))
			entries, _ := os.ReadDir(filepath.Join(dir, "inbox"))
			require.Empty(t, entries)
			arch, _ := os.ReadDir(filepath.Join(dir, "archive"))
			require.Len(t, arch, 2)
		})
	}
}

// TestNightlyTwoServersOnePostgres: two runs at once, each on its own job
// folder and inbox, into one PostgreSQL: every file's rows once; and a
// run on a folder that another holds is refused by the database's lock.
func TestNightlyTwoServersOnePostgres(t *testing.T) {
	bin := setBinary(t)
	per := nightRows(t)
	db := pgtest.Start(t)
	dirs := []string{nightlyFolder(t, "north"), nightlyFolder(t, "south")}
	for i, d := range dirs {
		for k := range 3 {
			deliver(t, d, fmt.Sprintf("f%d.csv", k), fmt.Sprintf("%d-%d", i, k))
		}
	}
	var wg sync.WaitGroup
	outs := make([][]byte, 2)
	codes := make([]int, 2)
	for i, d := range dirs {
		wg.Go(func() {
			cmd := exec.Command(bin, "nightly", "-quiet", "-config", filepath.Join(d, "job.toml"), "-history", db, "-job", "river", "-night", "2026-12-01")
			outs[i], _ = cmd.CombinedOutput()
			codes[i] = cmd.ProcessState.ExitCode()
		})
	}
	wg.Wait()
	for i := range dirs {
		require.Contains(t, []int{exitOK, exitFlagged}, codes[i], "%s", outs[i])
	}
	require.Equal(t, times(per, 6), countRows(t, db, "river"))

	// The folder's lock is in the database.
	st, err := history.Open(context.Background(), db)
	require.NoError(t, err)
	defer st.Close()
	host, _ := os.Hostname()
	abs, _ := filepath.Abs(dirs[0])
	l, err := st.Lock(context.Background(), host+":"+abs, false)
	require.NoError(t, err)
	defer l.Release()
	cmd := exec.Command(bin, "nightly", "-config", filepath.Join(dirs[0], "job.toml"), "-history", db, "-job", "river")
	out, _ := cmd.CombinedOutput()
	require.Equal(t, exitFailed, cmd.ProcessState.ExitCode())
	require.Contains(t, string(out), "in use by another run")
}

// TestNightlyLog: off a terminal the run logs one JSON record per file,
// with its path, hash, outcome and reason.
func TestNightlyLog(t *testing.T) {
	dir := nightlyFolder(t, "bridge")
	deliver(t, dir, "mon.csv", "mon")
	require.NoError(t, os.WriteFile(filepath.Join(dir, "inbox", "broken.csv"), []byte("not,a,file\n1,2,3\n"), 0o644))
	_, s, stderr := nightlyJSON(t, "-config", filepath.Join(dir, "job.toml"), "-night", "2026-12-01")
	recs := map[string]map[string]any{}
	for _, line := range bytes.Split([]byte(stderr), []byte("\n")) {
		var r map[string]any
		if json.Unmarshal(line, &r) == nil && r["msg"] == "file" {
			recs[r["name"].(string)] = r
		}
	}
	require.Len(t, recs, len(s.Files), stderr)
	for _, f := range s.Files {
		r := recs[f.Name]
		require.Equal(t, f.SHA256, r["sha256"])
		require.Equal(t, f.Outcome, r["outcome"])
		require.Equal(t, f.Path, r["path"])
	}
	require.Equal(t, "WARN", recs["broken.csv"]["level"])
	require.Contains(t, recs["broken.csv"]["reason"], "missing required column")
}

// TestHistoryCommand: geored history prints the series the store holds,
// as CSV with its units in the column names.
func TestHistoryCommand(t *testing.T) {
	dir := nightlyFolder(t, "bridge")
	cfg := filepath.Join(dir, "job.toml")
	for i, night := range []string{"2026-12-01", "2026-12-02"} {
		deliver(t, dir, fmt.Sprintf("n%d.csv", i), night)
		nightlyJSON(t, "-config", cfg, "-night", night)
	}
	st, err := history.Open(context.Background(), filepath.Join(dir, "history.db"))
	require.NoError(t, err)
	defer st.Close()
	want, err := st.MarkSeries(context.Background(), "bridge", "NB-PILLAR1")
	require.NoError(t, err)
	require.NotEmpty(t, want)
	var out, errb bytes.Buffer
	require.Equal(t, exitOK, run([]string{"history", "-config", cfg, "-mark", "NB-PILLAR1"}, &out, &errb), errb.String())
	rows, err := csv.NewReader(&out).ReadAll()
	require.NoError(t, err)
	require.Equal(t, []string{"night", "instrument", "from", "to", "n", "geodesic_m", "residual_mm", "sigma_mm", "flagged"}, rows[0])
	require.Len(t, rows, len(want)+1)
	for i, p := range want {
		require.Equal(t, p.Night, rows[i+1][0])
		r, err := strconv.ParseFloat(rows[i+1][6], 64)
		require.NoError(t, err)
		require.Equal(t, p.ResidualMM, r)
	}
	out.Reset()
	require.Equal(t, exitOK, run([]string{"history", "-config", cfg, "-line", want[0].To + "," + want[0].From}, &out, &errb))
	rows, _ = csv.NewReader(&out).ReadAll()
	require.Len(t, rows, 3, "one line, either direction, two nights")
	out.Reset()
	require.Equal(t, exitOK, run([]string{"history", "-config", cfg, "-instrument", "ts-red"}, &out, &errb))
	require.True(t, strings.HasPrefix(out.String(), "night,instrument,lines,constant_mm,constant_sigma_mm,scale_ppm,scale_sigma_ppm,evidence\n"))
	require.Equal(t, exitFailed, run([]string{"history", "-config", cfg}, &out, &errb), "one series must be named")
}
