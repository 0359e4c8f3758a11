package main

import (
	"context"
	"encoding/csv"
	"errors"
	"flag"
	"fmt"
	"io"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/geored/geored/io/history"
)

// runHistory prints a line's, an instrument's or a mark's series from the
// history as CSV on stdout.
func runHistory(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("history", flag.ContinueOnError)
	config := fs.String("config", "", "the job file; the history and the job's name default to its folder's, as geored nightly's")
	hist := fs.String("history", "", "the history: a SQLite file (default: history.db beside the job file) or a PostgreSQL connection string")
	jobName := fs.String("job", "", "the job's name in the history (default: the job folder's name)")
	line := fs.String("line", "", "a line's residual over the nights: FROM,TO (either direction)")
	inst := fs.String("instrument", "", "an instrument's nightly fit of its additive constant and scale")
	mark := fs.String("mark", "", "every line that meets at the mark, night by night")
	fs.Usage = func() {
		fmt.Fprint(stderr, `Usage: geored history -config JOBFOLDER/job.toml (-line A,B | -instrument NAME | -mark M) [-history DSN]

Prints a series from the nightly history as CSV on stdout, by night:
  -line A,B       night, instrument, from, to, n, geodesic_m, residual_mm, sigma_mm, flagged
  -instrument N   night, instrument, lines, constant_mm, constant_sigma_mm, scale_ppm, scale_sigma_ppm, evidence
  -mark M         as -line, for every line with an end at M

Lengths in metres, residuals and σ in millimetres, scales in ppm.
Exit status 0 printed (an empty series prints the header alone), 2 could not run.

Flags:
`)
		fs.PrintDefaults()
	}
	if ok, code := parseFlags(fs, args, stderr); !ok {
		return code
	}
	n := 0
	for _, v := range []string{*line, *inst, *mark} {
		if v != "" {
			n++
		}
	}
	if n != 1 {
		return fail(stderr, "history", errors.New("give one of -line FROM,TO, -instrument NAME or -mark M"))
	}
	if *hist == "" || *jobName == "" {
		if *config == "" {
			return fail(stderr, "history", errors.New("give the job file (-config JOBFOLDER/job.toml), or -history and -job"))
		}
		if _, err := historyDefaults(*config, hist, jobName); err != nil {
			return fail(stderr, "history", err)
		}
	}
	ctx := context.Background()
	store, err := history.Open(ctx, *hist)
	if err != nil {
		return fail(stderr, "history", err)
	}
	defer store.Close()
	w := csv.NewWriter(stdout)
	g := func(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) }
	lineRows := func(ps []history.LinePoint) {
		w.Write([]string{"night", "instrument", "from", "to", "n", "geodesic_m", "residual_mm", "sigma_mm", "flagged"})
		for _, p := range ps {
			w.Write([]string{p.Night, p.Instrument, p.From, p.To, strconv.Itoa(p.N), g(p.Geodesic), g(p.ResidualMM), g(p.SigmaMM), strconv.Itoa(p.Flagged)})
		}
	}
	switch {
	case *line != "":
		ab := strings.Split(*line, ",")
		if len(ab) != 2 || ab[0] == "" || ab[1] == "" {
			return fail(stderr, "history", fmt.Errorf("-line %q: want FROM,TO", *line))
		}
		ps, err := store.LineSeries(ctx, *jobName, ab[0], ab[1])
		if err != nil {
			return fail(stderr, "history", err)
		}
		lineRows(ps)
	case *mark != "":
		ps, err := store.MarkSeries(ctx, *jobName, *mark)
		if err != nil {
			return fail(stderr, "history", err)
		}
		lineRows(ps)
	default:
		ps, err := store.InstrumentSeries(ctx, *jobName, *inst)
		if err != nil {
			return fail(stderr, "history", err)
		}
		w.Write([]string{"night", "instrument", "lines", "constant_mm", "constant_sigma_mm", "scale_ppm", "scale_sigma_ppm", "evidence"})
		for _, p := range ps {
			w.Write([]string{p.Night, p.Instrument, strconv.Itoa(p.N), g(p.ConstantMM), g(p.ConstantSigmaMM), g(p.ScalePPM), g(p.ScaleSigmaPPM), p.Evidence})
		}
	}
	w.Flush()
	if err := w.Error(); err != nil {
		return fail(stderr, "history", err)
	}
	return exitOK
}

// historyDefaults sets what -history and -job leave unsaid from the job
// file's folder, the same for geored nightly, which writes the history,
// and geored history, which reads it: history.db in the folder, and the
// folder's name. It returns the folder.
func historyDefaults(config string, hist, jobName *string) (string, error) {
	dir, err := filepath.Abs(filepath.Dir(config))
	if err != nil {
		return "", err
	}
	if *hist == "" {
		*hist = filepath.Join(dir, "history.db")
	}
	if *jobName == "" {
		*jobName = filepath.Base(dir)
	}
	return dir, nil
}
