package main

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"syscall"
	"text/tabwriter"
	"time"
)

// measurement is the median wall time and CPU time (user + system) and
// the largest peak RSS of repeated runs of one command.
type measurement struct {
	name  string
	wall  time.Duration
	cpu   time.Duration
	rssKB int64
}

// runBench times the parse floor, geod -I and geored reduce on one core,
// on 1 worker and on all cores over a job made by gen, in -repeat rounds
// of all of them, and prints medians, rates and ratios.
func runBench(args []string) error {
	fs := flag.NewFlagSet("run", flag.ContinueOnError)
	dir := fs.String("dir", "", "folder made by georedbench gen")
	geored := fs.String("geored", "bin/geored", "geored binary")
	geod := fs.String("geod", "geod", "PROJ's geod (empty to skip)")
	repeat := fs.Int("repeat", 3, "runs of each command; the median is reported")
	profile := fs.String("cpuprofile", "", "also write a CPU profile of one all-cores geored run here")
	baseline := fs.String("baseline", "", "another geored binary (an earlier build) to time in the same rounds, on one core and on all cores")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if *dir == "" {
		return fmt.Errorf("run: -dir is required")
	}
	obsFile := filepath.Join(*dir, "observations.csv")
	rows, err := countRows(obsFile)
	if err != nil {
		return err
	}
	self, err := os.Executable()
	if err != nil {
		return err
	}
	job := filepath.Join(*dir, "job.toml")
	type command struct {
		name  string
		argv  []string
		stdin string
		out   string // output folder, removed before each run (untimed)
	}
	cmds := []command{
		{"parse floor (encoding/csv + strconv)", []string{self, "floor", obsFile}, "", ""},
		{"geod -I (inverses only)", []string{*geod, "+ellps=GRS80", "-I", "-f", "%.4f"}, filepath.Join(*dir, "geod.txt"), ""},
	}
	_, tasksetErr := exec.LookPath("taskset")
	// reduces are a geored binary's runs: on one core (where taskset is),
	// on 1 worker if asked, and on all cores, into folders named from out.
	reduces := func(name, bin, out string, oneWorker bool) {
		cmd := func(label, workers, sub string, prefix ...string) command {
			folder := filepath.Join(*dir, sub)
			argv := append(prefix, bin, "reduce", "-config", job, "-quiet", "-workers", workers, "-out", folder)
			return command{name + ", " + label, argv, "", folder}
		}
		if tasksetErr == nil {
			cmds = append(cmds, cmd("one core (taskset -c 0)", "1", out+"0", "taskset", "-c", "0"))
		}
		if oneWorker {
			cmds = append(cmds, cmd("1 worker", "1", out+"1"))
		}
		cmds = append(cmds, cmd(fmt.Sprintf("all cores (%d)", runtime.NumCPU()), "0", out+"N"))
	}
	reduces("geored reduce", *geored, "out", true)
	if *baseline != "" {
		// The baseline build in the same rounds: on this kind of machine
		// only runs side by side compare.
		reduces("baseline "+filepath.Base(*baseline), *baseline, "outB", false)
	}
	// Rounds of every command in turn, so that the machine's slow and
	// fast spells fall on all of them alike; each command's median.
	var run []command
	for _, c := range cmds {
		if c.argv[0] == "" {
			continue
		}
		if _, err := exec.LookPath(c.argv[0]); err != nil {
			fmt.Fprintf(os.Stderr, "skipping %s: %v\n", c.name, err)
			continue
		}
		run = append(run, c)
	}
	walls := make([][]time.Duration, len(run))
	cpus := make([][]time.Duration, len(run))
	rss := make([]int64, len(run))
	for range *repeat {
		for i, c := range run {
			if c.out != "" {
				if err := os.RemoveAll(c.out); err != nil {
					return err
				}
			}
			w, cpu, r, err := timeCommand(c.argv, c.stdin)
			if err != nil {
				return fmt.Errorf("%s: %w", c.name, err)
			}
			walls[i] = append(walls[i], w)
			cpus[i] = append(cpus[i], cpu)
			rss[i] = max(rss[i], r)
		}
	}
	var ms []measurement
	for i, c := range run {
		slices.Sort(walls[i])
		slices.Sort(cpus[i])
		ms = append(ms, measurement{c.name, walls[i][len(walls[i])/2], cpus[i][len(cpus[i])/2], rss[i]})
	}
	if *profile != "" {
		argv := []string{*geored, "reduce", "-config", job, "-quiet", "-out", filepath.Join(*dir, "outP"), "-cpuprofile", *profile}
		if _, _, _, err := timeCommand(argv, ""); err != nil {
			return fmt.Errorf("profile run: %w", err)
		}
	}
	report(os.Stdout, ms, rows, *repeat)
	// What geored's peak holds before any work: the binary and the
	// libraries it maps (PROJ's and theirs), and the runtime.
	_, _, startRSS, err := timeCommand([]string{*geored, "version"}, "")
	if err != nil {
		return fmt.Errorf("geored version: %w", err)
	}
	fmt.Printf("\ngeored version (start-up only): peak RSS %.1f MB\n", float64(startRSS)/1024)
	return nil
}

func report(w io.Writer, ms []measurement, rows int64, repeat int) {
	var floor, geod time.Duration
	for _, m := range ms {
		switch {
		case m.name[:5] == "parse":
			floor = m.wall
		case m.name[:4] == "geod":
			geod = m.wall
		}
	}
	fmt.Fprintf(w, "%d observations; median of %d runs; %s, %d cores\n\n", rows, repeat, runtime.GOOS+"/"+runtime.GOARCH, runtime.NumCPU())
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "command\twall s\tcpu s\tobs/s\t× parse floor\t× geod -I\tpeak RSS MB\t")
	for _, m := range ms {
		ratio := func(base time.Duration) string {
			if base == 0 {
				return "—"
			}
			return fmt.Sprintf("%.2f", m.wall.Seconds()/base.Seconds())
		}
		fmt.Fprintf(tw, "%s\t%.2f\t%.2f\t%.0f\t%s\t%s\t%.1f\t\n", m.name, m.wall.Seconds(), m.cpu.Seconds(), float64(rows)/m.wall.Seconds(), ratio(floor), ratio(geod), float64(m.rssKB)/1024)
	}
	tw.Flush()
}

// timeCommand runs argv (stdin from a file if given, stdout discarded)
// and returns its wall time, its CPU time (user and system, which the
// machine's other load disturbs less than the wall time) and its peak
// resident set size in KiB.
func timeCommand(argv []string, stdin string) (wall, cpu time.Duration, rssKB int64, err error) {
	cmd := exec.Command(argv[0], argv[1:]...)
	cmd.Stderr = os.Stderr
	if stdin != "" {
		f, err := os.Open(stdin)
		if err != nil {
			return 0, 0, 0, err
		}
		defer f.Close()
		cmd.Stdin = f
	}
	start := time.Now()
	err = cmd.Run()
	wall = time.Since(start)
	if err != nil {
		if ee, ok := err.(*exec.ExitError); !ok || ee.ExitCode() > 1 { // geored exits 1 for flagged results
			return 0, 0, 0, err
		}
	}
	cpu = cmd.ProcessState.UserTime() + cmd.ProcessState.SystemTime()
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
		rssKB = ru.Maxrss
	}
	return wall, cpu, rssKB, nil
}

func countRows(path string) (int64, error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, err
	}
	defer f.Close()
	var n int64
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for sc.Scan() {
		n++
	}
	return n - 1, sc.Err()
}
