package main

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"
)

// memBench measures what geored reduce holds per control point and per
// distinct line, by the project's count: the peak resident size of a run
// (the kernel's rusage, so every byte the process touched: Go's heap and
// its slack, PROJ's heap, the stacks) less what geored takes at start-up.
//
//   - bytes a point: (peak of a job of -points points, 1,000 lines and
//     1,000 observations − peak of geored version) / points;
//   - bytes a line: (peak of a job of 90,000 points and -lines lines,
//     each observed once − peak of the same points with 1,000 lines) /
//     the difference in lines (summary.json's counts.lines), so that the
//     points, PROJ and the start-up cancel out.
//
// Each job is made by gen under -dir when missing; each figure is the
// median over -repeat runs.
func memBench(args []string) error {
	fs := flag.NewFlagSet("mem", flag.ContinueOnError)
	dir := fs.String("dir", "", "folder for the jobs (made by gen when missing)")
	geored := fs.String("geored", "bin/geored", "geored binary")
	points := fs.Int("points", 1000000, "points of the points job (a square)")
	lines := fs.Int("lines", 2000000, "distinct lines of the lines job")
	repeat := fs.Int("repeat", 3, "runs of each job; the median is reported")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if *dir == "" {
		return errors.New("mem: -dir is required")
	}
	const linePoints, fewLines = 90000, 1000
	type memJob struct {
		name                string
		points, lines, obs  int
		peaks               []int64 // KiB
		countedLines, found int     // summary.json's counts.lines
	}
	jobs := []*memJob{
		{name: "points", points: *points, lines: fewLines, obs: fewLines},
		{name: "lines-base", points: linePoints, lines: fewLines, obs: fewLines},
		{name: "lines", points: linePoints, lines: *lines, obs: *lines},
	}
	for _, j := range jobs {
		d := filepath.Join(*dir, fmt.Sprintf("mem-%s-%d-%d", j.name, j.points, j.lines))
		if err := ensureJob(d, j.points, j.lines, j.obs); err != nil {
			return err
		}
		j.name = d
	}
	var start []int64
	for range *repeat {
		_, _, r, err := timeCommand([]string{*geored, "version"}, "")
		if err != nil {
			return err
		}
		start = append(start, r)
		for _, j := range jobs {
			out := filepath.Join(j.name, "out-mem")
			_, r, err := reducePeak(*geored, j.name, out)
			if err != nil {
				return err
			}
			j.peaks = append(j.peaks, r)
			if j.countedLines, err = summaryLines(filepath.Join(out, "summary.json")); err != nil {
				return err
			}
		}
	}
	startKB := median(start)
	if err := checkOwnPeak(startKB); err != nil {
		return err
	}
	pt, base, ln := jobs[0], jobs[1], jobs[2]
	perPoint := float64(median(pt.peaks)-startKB) * 1024 / float64(pt.points)
	perLine := float64(median(ln.peaks)-median(base.peaks)) * 1024 / float64(ln.countedLines-base.countedLines)
	fmt.Printf("peak RSS, median of %d runs (KiB): start-up (geored version) %d\n", *repeat, startKB)
	for _, j := range jobs {
		fmt.Printf("  %-40s %9d  (%d points, %d lines)\n", filepath.Base(j.name), median(j.peaks), j.points, j.countedLines)
	}
	fmt.Printf("bytes/point %.0f\nbytes/line %.0f\n", perPoint, perLine)
	return nil
}

// reducePeak runs geored reduce on the job in dir into the folder out
// (removed first) and returns its wall time and peak RSS in KiB.
func reducePeak(geored, dir, out string) (time.Duration, int64, error) {
	if err := os.RemoveAll(out); err != nil {
		return 0, 0, err
	}
	wall, _, rss, err := timeCommand([]string{geored, "reduce", "-config", filepath.Join(dir, "job.toml"), "-quiet", "-out", out}, "")
	if err != nil {
		return 0, 0, fmt.Errorf("%s: %w", dir, err)
	}
	return wall, rss, nil
}

// ensureJob makes the synthetic job in dir with gen unless it is there,
// in a process of its own: a child's peak RSS, as the kernel reports it,
// is at least that of the process that started it (Linux carries the
// parent's high-water mark over the exec of a child that shared its
// memory), so georedbench must stay small while it measures, and gen on
// millions of lines is not.
func ensureJob(dir string, points, lines, obs int) error {
	if _, err := os.Stat(filepath.Join(dir, "observations.csv")); err == nil {
		return nil
	}
	self, err := os.Executable()
	if err != nil {
		return err
	}
	cmd := exec.Command(self, "gen", "-dir", dir, "-points", strconv.Itoa(points), "-lines", strconv.Itoa(lines), "-obs", strconv.Itoa(obs))
	cmd.Stdout, cmd.Stderr = os.Stdout, os.Stderr
	return cmd.Run()
}

// checkOwnPeak refuses figures that georedbench's own peak RSS could have
// raised (see genProcess): it must stay under the smallest peak measured.
func checkOwnPeak(smallestKB int64) error {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return err
	}
	for _, l := range strings.Split(string(b), "\n") {
		if v, ok := strings.CutPrefix(l, "VmHWM:"); ok {
			kb, err := strconv.ParseInt(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(v), "kB")), 10, 64)
			if err != nil {
				return fmt.Errorf("/proc/self/status: VmHWM %q: %w", v, err)
			}
			if kb >= smallestKB {
				return fmt.Errorf("georedbench's own peak RSS (%d KiB) is not below the smallest measured (%d KiB): the figures would include it", kb, smallestKB)
			}
			return nil
		}
	}
	return errors.New("/proc/self/status has no VmHWM")
}

// summaryLines reads counts.lines from a summary.json.
func summaryLines(path string) (int, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return 0, err
	}
	var s struct {
		Counts struct {
			Lines int `json:"lines"`
		} `json:"counts"`
	}
	if err := json.Unmarshal(b, &s); err != nil {
		return 0, fmt.Errorf("%s: %w", path, err)
	}
	return s.Counts.Lines, nil
}

func median(v []int64) int64 {
	s := slices.Clone(v)
	slices.Sort(s)
	return s[len(s)/2]
}
