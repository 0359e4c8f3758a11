package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/outset"
)

// These tests run the built binary into one output folder and stop it at
// the output set's stages, fill its disk, signal it, race it and point its
// outputs at its inputs; after each, the folder holds the whole earlier
// set or the whole new one, and nothing else is left.

// builtOnce is the binary these tests share, built by the first that
// needs it; TestMain removes its folder.
var builtOnce struct {
	once     sync.Once
	dir, bin string
	out      []byte
	err      error
}

func setBinary(t *testing.T) string {
	t.Helper()
	b := &builtOnce
	b.once.Do(func() {
		if b.dir, b.err = os.MkdirTemp("", "geored-bin-"); b.err == nil {
			b.bin = filepath.Join(b.dir, "geored")
			b.out, b.err = exec.Command("go", "build", "-o", b.bin, ".").CombinedOutput()
		}
	})
	require.NoError(t, b.err, string(b.out))
	return b.bin
}

// setJob is a job of the demo's observations repeated (so that its
// reduced.csv is some 300 kB), its folder and its output folder.
type setJob struct {
	bin, job, dir, out string
}

func newSetJob(t *testing.T, bin string, copies int) setJob {
	t.Helper()
	rows := strings.Split(strings.TrimSpace(demoRows(t, func(string) bool { return true })), "\n")
	var b strings.Builder
	b.WriteString(rows[0] + "\n")
	for range copies {
		for _, r := range rows[1:] {
			b.WriteString(r + "\n")
		}
	}
	job := writeJob(t, b.String(), "")
	dir := filepath.Dir(job)
	return setJob{bin: bin, job: job, dir: dir, out: filepath.Join(dir, "out")}
}

// command is geored reduce on the job with the extra arguments and
// environment.
func (j setJob) command(env []string, args ...string) *exec.Cmd {
	cmd := exec.Command(j.bin, append([]string{"reduce", "-config", j.job, "-quiet"}, args...)...)
	cmd.Env = append(os.Environ(), env...)
	return cmd
}

// run runs it to the end: its exit status (-1 when a signal killed it)
// and stderr.
func (j setJob) run(t *testing.T, env []string, args ...string) (int, string) {
	t.Helper()
	var errb bytes.Buffer
	cmd := j.command(env, args...)
	cmd.Stderr = &errb
	err := cmd.Run()
	if ee, ok := err.(*exec.ExitError); ok {
		return ee.ExitCode(), errb.String()
	}
	require.NoError(t, err)
	return 0, errb.String()
}

// newer is a setting that changes every output: the run after the first
// one writes a set that differs in each file.
var newer = []string{"-k", "0.2"}

// snapshot reads the set in dir, checked against its manifest. The
// summary's "replaces" (the set a run replaced, which a run into a fresh
// folder has not) is left out of summary.json, and so are its size and
// SHA-256 from the manifest.
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	m, err := outset.Verify(dir)
	require.NoError(t, err, "the output folder holds a whole set")
	got := map[string]string{}
	for i, f := range m.Files {
		b, err := os.ReadFile(filepath.Join(dir, f.Name))
		require.NoError(t, err)
		got[f.Name] = string(b)
		if f.Name == "summary.json" {
			var sum map[string]json.RawMessage
			require.NoError(t, json.Unmarshal(b, &sum))
			delete(sum, "replaces")
			b, _ = json.Marshal(sum)
			got[f.Name] = string(b)
			m.Files[i].Bytes, m.Files[i].SHA256 = 0, ""
		}
	}
	b, _ := json.Marshal(m)
	got[outset.ManifestName] = string(b)
	return got
}

// temporaries lists what is beside the output folder in its parent
// besides the job's own files and the lock file.
func (j setJob) temporaries(t *testing.T) []string {
	t.Helper()
	entries, err := os.ReadDir(j.dir)
	require.NoError(t, err)
	var l []string
	for _, e := range entries {
		switch e.Name() {
		case "out", ".out.geored-lock", "job.toml", "points.csv", "observations.csv", "clobber":
		default:
			l = append(l, e.Name())
		}
	}
	return l
}

// reference runs the job into a folder of its own and returns its set.
func (j setJob) reference(t *testing.T, args ...string) map[string]string {
	t.Helper()
	out := filepath.Join(t.TempDir(), "ref")
	code, stderr := j.run(t, nil, append([]string{"-out", out}, args...)...)
	require.Equal(t, exitFlagged, code, stderr)
	return snapshot(t, out)
}

// A run killed with SIGKILL at any stage leaves the whole old set (killed
// before the swap) or the whole new one (after it), never a mix; the next
// run takes over the dead run's lock, removes its temporaries and
// succeeds. Before the output set (issue 16), a kill after reduced.csv was
// renamed left a new reduced.csv beside the old rest.
func TestKilledRunLeavesAWholeSet(t *testing.T) {
	j := newSetJob(t, setBinary(t), 20)
	oldSet, newSet := j.reference(t), j.reference(t, newer...)
	require.NotEqual(t, oldSet["reduced.csv"], newSet["reduced.csv"])

	for _, c := range []struct {
		stage string
		want  map[string]string
	}{
		{"row", oldSet},
		{"written:reduced.csv", oldSet},
		{"written:rejects.csv", oldSet},
		{"written:lines.csv", oldSet},
		{"written:summary.json", oldSet},
		{"written:report.html", oldSet},
		{"complete", oldSet},
		{"swapped", newSet},
	} {
		t.Run(strings.ReplaceAll(c.stage, ":", "_"), func(t *testing.T) {
			code, stderr := j.run(t, nil)
			require.Equal(t, exitFlagged, code, stderr)
			require.Equal(t, oldSet, snapshot(t, j.out))

			code, stderr = j.run(t, []string{envStopAt + "=" + c.stage}, newer...)
			require.Equal(t, -1, code, "killed by SIGKILL at %s\n%s", c.stage, stderr)
			assert.Equal(t, c.want, snapshot(t, j.out), "after a kill at %s", c.stage)
			left := j.temporaries(t)
			require.Len(t, left, 1, "the killed run's temporary folder")
			assert.Contains(t, left[0], ".out.geored-tmp-")

			code, stderr = j.run(t, nil, newer...)
			require.Equal(t, exitFlagged, code, stderr)
			assert.Contains(t, stderr, "geored: taking over the lock of "+j.out+" from PID ")
			assert.Contains(t, stderr, "geored: removed "+filepath.Join(j.dir, left[0])+", left by a run (PID ")
			assert.Equal(t, newSet, snapshot(t, j.out))
			assert.Empty(t, j.temporaries(t))
		})
	}
}

// A full disk (here a file size limit, ulimit -f: the same EFBIG or
// ENOSPC from write) fails the run with status 2 and a message naming the
// file, leaves the old set whole and removes the temporaries. Before the
// output set, the files that fitted were renamed over the old ones.
func TestFullDiskLeavesTheOldSet(t *testing.T) {
	j := newSetJob(t, setBinary(t), 20)
	code, stderr := j.run(t, nil)
	require.Equal(t, exitFlagged, code, stderr)
	oldSet := snapshot(t, j.out)
	require.Greater(t, len(oldSet["reduced.csv"]), 200_000)

	// dash's ulimit -f counts 512-byte blocks: 128 kB, more than every
	// file but reduced.csv.
	cmd := exec.Command("sh", "-c", `ulimit -f 256 && exec "$0" "$@"`, j.bin, "reduce", "-config", j.job, "-quiet", "-k", "0.2")
	var errb bytes.Buffer
	cmd.Stderr = &errb
	err := cmd.Run()
	var ee *exec.ExitError
	require.ErrorAs(t, err, &ee, errb.String())
	assert.Equal(t, exitFailed, ee.ExitCode(), errb.String())
	assert.Regexp(t, "^"+replacesNotice(j.out)+"geored reduce: writing reduced.csv in "+j.out+": file too large; "+j.out+" is as it was before this run\n$", errb.String())
	assert.Equal(t, oldSet, snapshot(t, j.out))
	assert.Empty(t, j.temporaries(t))
}

// mountTmpfs mounts a tmpfs of size bytes on a fresh folder and returns
// it; the test is skipped where mounting is not allowed (not root).
func mountTmpfs(t *testing.T, size int) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "disk")
	require.NoError(t, os.Mkdir(dir, 0o755))
	if out, err := exec.Command("mount", "-t", "tmpfs", "-o", fmt.Sprintf("size=%d", size), "tmpfs", dir).CombinedOutput(); err != nil {
		t.Skipf("cannot mount a tmpfs here: %v %s", err, out)
	}
	t.Cleanup(func() { exec.Command("umount", "-l", dir).Run() })
	return dir
}

// A disk that is really full (a 576 kB tmpfs, where root may mount one):
// ENOSPC, status 2, the old set whole, nothing left beside it. A mount
// point as the output folder is refused before the run, since it cannot
// be swapped.
func TestFullTmpfsLeavesTheOldSet(t *testing.T) {
	j := newSetJob(t, setBinary(t), 20)
	disk := mountTmpfs(t, 576<<10)
	out := filepath.Join(disk, "out")
	code, stderr := j.run(t, nil, "-out", out)
	require.Equal(t, exitFlagged, code, stderr)
	oldSet := snapshot(t, out)

	code, stderr = j.run(t, nil, append([]string{"-out", out}, newer...)...)
	assert.Equal(t, exitFailed, code)
	assert.Regexp(t, `^`+replacesNotice(out)+`geored reduce: writing reduced.csv in `+out+`: no space left on device; `+out+` is as it was before this run\n$`, stderr)
	assert.Equal(t, oldSet, snapshot(t, out))
	entries, err := os.ReadDir(disk)
	require.NoError(t, err)
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	assert.ElementsMatch(t, []string{"out", ".out.geored-lock"}, names, "no temporary left on the full disk")

	code, stderr = j.run(t, nil, "-out", disk)
	assert.Equal(t, exitFailed, code)
	assert.Contains(t, stderr, "the output folder "+disk+" is a mount point")
}

// startPaused starts a run that pauses at the stage and returns once it
// says so, with the lines it printed before.
func (j setJob) startPaused(t *testing.T, stage string, args ...string) (*exec.Cmd, *bufio.Reader) {
	t.Helper()
	cmd := j.command([]string{envPauseAt + "=" + stage}, args...)
	pipe, err := cmd.StderrPipe()
	require.NoError(t, err)
	require.NoError(t, cmd.Start())
	r := bufio.NewReader(pipe)
	waitLine(t, r, "geored test hook: paused at "+stage)
	return cmd, r
}

// waitLine reads lines until one is want.
func waitLine(t *testing.T, r *bufio.Reader, want string) {
	t.Helper()
	for {
		line, err := r.ReadString('\n')
		require.NoError(t, err, "waiting for %q", want)
		if strings.HasPrefix(line, want) {
			return
		}
	}
}

// SIGINT and SIGTERM stop a run in the middle of its rows, or with every
// file written just before the swap: it prints one line, exits 130 or
// 143, leaves the old set untouched and removes its temporaries. Before,
// the signal killed the process with no message, leaving its hidden
// temporaries for good.
func TestSignalsStopCleanly(t *testing.T) {
	j := newSetJob(t, setBinary(t), 50)
	code, stderr := j.run(t, nil)
	require.Equal(t, exitFlagged, code, stderr)
	oldSet := snapshot(t, j.out)
	for _, c := range []struct {
		stage string
		sig   syscall.Signal
		code  int
	}{
		{"row", syscall.SIGINT, 130},
		{"row", syscall.SIGTERM, 143},
		{"complete", syscall.SIGINT, 130},
		{"written:lines.csv", syscall.SIGTERM, 143},
	} {
		t.Run(fmt.Sprintf("%s_%s", c.sig, strings.ReplaceAll(c.stage, ":", "_")), func(t *testing.T) {
			cmd, r := j.startPaused(t, c.stage, newer...)
			require.NoError(t, cmd.Process.Signal(c.sig))
			rest, _ := io.ReadAll(r)
			err := cmd.Wait()
			var ee *exec.ExitError
			require.ErrorAs(t, err, &ee, string(rest))
			assert.Equal(t, c.code, ee.ExitCode(), string(rest))
			name := map[syscall.Signal]string{syscall.SIGINT: "SIGINT", syscall.SIGTERM: "SIGTERM"}[c.sig]
			assert.Equal(t, "geored reduce: stopped by "+name+": this run's temporary files are removed and "+j.out+" is as it was before it\n", string(rest), "one line")
			assert.Equal(t, oldSet, snapshot(t, j.out))
			assert.Empty(t, j.temporaries(t))
		})
	}
}

// A second run into a folder in use refuses, naming the first run's PID
// and start; with -wait it says so, waits, and succeeds once the first
// ends. Before the lock, both reported success and one result was lost.
func TestSecondRunRefusesOrWaits(t *testing.T) {
	j := newSetJob(t, setBinary(t), 2)
	first, _ := j.startPaused(t, "row")

	code, stderr := j.run(t, nil, newer...)
	assert.Equal(t, exitFailed, code)
	assert.Contains(t, stderr, fmt.Sprintf("geored reduce: %s is in use by PID %d on ", j.out, first.Process.Pid))
	assert.Contains(t, stderr, ", started 20")
	assert.Contains(t, stderr, "ask to wait (-wait)")

	waiter := j.command(nil, append([]string{"-wait"}, newer...)...)
	pipe, err := waiter.StderrPipe()
	require.NoError(t, err)
	require.NoError(t, waiter.Start())
	r := bufio.NewReader(pipe)
	waitLine(t, r, fmt.Sprintf("geored: waiting for PID %d on ", first.Process.Pid))

	// A waiter stopped while it waits exits as any stopped run.
	quitter := j.command(nil, "-wait")
	qpipe, err := quitter.StderrPipe()
	require.NoError(t, err)
	require.NoError(t, quitter.Start())
	qr := bufio.NewReader(qpipe)
	waitLine(t, qr, "geored: waiting for PID")
	require.NoError(t, quitter.Process.Signal(syscall.SIGINT))
	qrest, _ := io.ReadAll(qr)
	var qe *exec.ExitError
	require.ErrorAs(t, quitter.Wait(), &qe)
	assert.Equal(t, exitInterrupted, qe.ExitCode())
	assert.Equal(t, "geored reduce: stopped by SIGINT: this run's temporary files are removed and "+j.out+" is as it was before it\n", string(qrest))

	require.NoError(t, first.Process.Signal(syscall.SIGTERM))
	err = first.Wait()
	var ee *exec.ExitError
	require.ErrorAs(t, err, &ee)
	assert.Equal(t, exitTerminated, ee.ExitCode())

	rest, _ := io.ReadAll(r)
	err = waiter.Wait()
	require.ErrorAs(t, err, &ee, string(rest))
	assert.Equal(t, exitFlagged, ee.ExitCode(), string(rest))
	assert.NotContains(t, string(rest), "taking over", "the first run released its lock")
	snapshot(t, j.out)
	assert.Empty(t, j.temporaries(t))
}

// A lock file naming a process that is gone is taken over with a message.
func TestStaleLockFileIsTakenOver(t *testing.T) {
	j := newSetJob(t, setBinary(t), 1)
	gone := exec.Command("true")
	require.NoError(t, gone.Run())
	stale := fmt.Sprintf(`{"pid":%d,"host":"survey-server","started":"2026-12-01T23:00:00Z","folder":%q}`, gone.Process.Pid, j.out)
	require.NoError(t, os.WriteFile(filepath.Join(j.dir, ".out.geored-lock"), []byte(stale), 0o644))
	code, stderr := j.run(t, nil)
	assert.Equal(t, exitFlagged, code, stderr)
	assert.Contains(t, stderr, fmt.Sprintf("geored: taking over the lock of %s from PID %d on survey-server, started 2026-12-01T23:00:00Z, which ended without releasing it\n", j.out, gone.Process.Pid))
	snapshot(t, j.out)
}

// An output folder that is, or holds, an input is refused before anything
// is written, and the inputs are unchanged byte for byte. Before,
// `-out clobber clobber/reduced.csv` replaced the observations with the
// outputs.
func TestOutputsNeverOverwriteInputs(t *testing.T) {
	j := newSetJob(t, setBinary(t), 1)
	obs, err := os.ReadFile(filepath.Join(j.dir, "observations.csv"))
	require.NoError(t, err)
	clobber := filepath.Join(j.dir, "clobber")
	require.NoError(t, os.Mkdir(clobber, 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(clobber, "reduced.csv"), obs, 0o644))
	// The observations named on the command line come after the job's.
	flags := []string{"reduce", "-config", j.job, "-quiet"}
	for _, c := range []struct {
		args []string
		want string
	}{
		{append(flags, "-out", "clobber", "clobber/reduced.csv"), "the output folder clobber holds the observations file clobber/reduced.csv, and a run replaces the folder whole"},
		{append(flags, "-out", clobber, "clobber/reduced.csv"), "the output folder " + clobber + " holds the observations file clobber/reduced.csv"},
		{append(flags, "-out", "clobber/reduced.csv", "clobber/reduced.csv"), "the output clobber/reduced.csv is the observations file clobber/reduced.csv"},
		{append(flags, "-out", ".", "clobber/reduced.csv"), "the output folder . holds the job file " + j.job},
		{[]string{"reduce", "-config", j.job, "-out", j.dir}, "the output folder " + j.dir + " holds the job file " + j.job},
		{[]string{"reduce", "-config", j.job, "-out", filepath.Join(j.dir, "x"), "-cpuprofile", filepath.Join(j.dir, "x", "cpu.prof")}, "holds the CPU profile"},
	} {
		cmd := exec.Command(j.bin, c.args...)
		cmd.Dir = j.dir
		var errb bytes.Buffer
		cmd.Stderr = &errb
		err := cmd.Run()
		var ee *exec.ExitError
		require.ErrorAs(t, err, &ee, "%v", c.args)
		assert.Equal(t, exitFailed, ee.ExitCode(), "%v", c.args)
		assert.Contains(t, errb.String(), c.want)
		assert.Equal(t, 1, strings.Count(errb.String(), "\n"), errb.String())
		b, _ := os.ReadFile(filepath.Join(clobber, "reduced.csv"))
		assert.True(t, bytes.Equal(obs, b), "the input is unchanged")
		entries, _ := os.ReadDir(clobber)
		assert.Len(t, entries, 1, "nothing written in clobber")
		assert.Empty(t, j.temporaries(t), "nothing written beside")
		_, err = os.Stat(filepath.Join(j.dir, ".out.geored-lock"))
		assert.True(t, errors.Is(err, os.ErrNotExist), "not even a lock file")
	}
	// sightline's plot is never one of its inputs.
	prof := filepath.Join(t.TempDir(), "profile.svg")
	require.NoError(t, os.WriteFile(prof, []byte("distance,height\n500,1\n"), 0o644))
	code, _, stderr := exitCode(t, j.bin, "sightline", "-distance", "1000", "-eye-height", "2", "-target-height", "2", "-profile", prof, "-plot", prof)
	assert.Equal(t, exitFailed, code)
	assert.Contains(t, stderr, "geored sightline: the output "+prof+" is the profile file "+prof)
	b, _ := os.ReadFile(prof)
	assert.Equal(t, "distance,height\n500,1\n", string(b), "the input is unchanged")
}
