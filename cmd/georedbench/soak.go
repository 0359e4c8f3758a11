package main

import (
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
)

// soak checks that geored reduce's memory does not grow with the
// observations: the synthetic job (gen's 10,000 points and 200,000
// lines) with -base-obs and with -obs observations, each reduced once,
// their peak RSS compared. It fails when the larger run's peak exceeds the
// smaller's by more than -max-growth MiB. The jobs are made under -dir
// when missing, and the runs' outputs removed after them.
func soak(args []string) error {
	fs := flag.NewFlagSet("soak", flag.ContinueOnError)
	dir := fs.String("dir", "", "folder for the jobs (made by gen when missing)")
	geored := fs.String("geored", "bin/geored", "geored binary")
	obs := fs.Int("obs", 10000000, "observations of the long run")
	baseObs := fs.Int("base-obs", 1000000, "observations of the short run")
	maxGrowth := fs.Float64("max-growth", 16, "most the long run's peak RSS may exceed the short one's, MiB")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if *dir == "" {
		return errors.New("soak: -dir is required")
	}
	const points, lines = 10000, 200000
	var peaks []int64 // KiB
	for _, n := range []int{*baseObs, *obs} {
		d := filepath.Join(*dir, fmt.Sprintf("soak-%d", n))
		if err := ensureJob(d, points, lines, n); err != nil {
			return err
		}
		out := filepath.Join(d, "out-soak")
		wall, rss, err := reducePeak(*geored, d, out)
		if err != nil {
			return err
		}
		if err := os.RemoveAll(out); err != nil {
			return err
		}
		fmt.Printf("%10d observations: peak RSS %7.1f MiB (%.1f s)\n", n, float64(rss)/1024, wall.Seconds())
		peaks = append(peaks, rss)
	}
	if err := checkOwnPeak(min(peaks[0], peaks[1])); err != nil {
		return err
	}
	growth := float64(peaks[1]-peaks[0]) / 1024
	fmt.Printf("growth %.1f MiB (at most %.0f MiB)\n", growth, *maxGrowth)
	if growth > *maxGrowth {
		return fmt.Errorf("soak: the peak RSS grew by %.1f MiB from %d to %d observations, more than %.0f MiB: memory grows with the observations", growth, *baseObs, *obs, *maxGrowth)
	}
	return nil
}
