package main

import (
	"bytes"
	"embed"
	"flag"
	"fmt"
	"io"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/reduce/job"
)

// The demo job: an invented river-crossing control network in ETRS89 /
// UTM zone 32N and observations simulated from it (demo_sim_test.go), with
// three deliberate blunders and two unreadable rows.
//
//go:embed demo/points.csv demo/lines.csv demo/job.toml demo/observations.csv
var demoFiles embed.FS

const (
	defaultDemoOut = "geored-demo"
	demoCRS        = "EPSG:25832"
)

func runDemo(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	out := fs.String("out", defaultDemoOut, "output folder")
	workers := fs.Int("workers", 0, "worker goroutines; 0 uses every core")
	quiet := fs.Bool("quiet", false, "print nothing but errors")
	wait := fs.Bool("wait", false, "if another run is writing into the output folder, wait for it to end instead of refusing")
	inputs := fs.String("inputs", "", "folder to write the demo's input files into (default: beside -out, named OUT-job)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "Usage: geored demo [-out DIR] [-inputs DIR]\n\nReduces the embedded demo job — an invented river-crossing control network in")
		fmt.Fprintln(stderr, "ETRS89 / UTM zone 32N with simulated observations and three deliberate blunders —")
		fmt.Fprintln(stderr, "into DIR and names its report. It exits with the status reduce would give the")
		fmt.Fprintln(stderr, "job, the one its report shows: 1, since its blunders are flagged by design; 130 or")
		fmt.Fprintln(stderr, "143 when SIGINT or SIGTERM stops it (DIR is then as it was). DIR is written as one")
		fmt.Fprintln(stderr, "set with a manifest.json, as reduce writes its output folder.")
		fmt.Fprintln(stderr, "\nIts input files (job.toml, points.csv, observations.csv, lines.csv) are written")
		fmt.Fprintln(stderr, "beside the output folder, in DIR-job (or -inputs), to copy and edit: `geored")
		fmt.Fprintln(stderr, "reduce -config DIR-job/job.toml` reruns the job as the demo did. A file there")
		fmt.Fprintln(stderr, "that differs from the demo's (one you edited) is left as it is.\n\nFlags:")
		fs.PrintDefaults()
	}
	if ok, code := parseFlags(fs, args, stderr); !ok {
		return code
	}
	j, err := demoJob(*out, *workers)
	if err != nil {
		return fail(stderr, "demo", err)
	}
	if *inputs == "" {
		*inputs = demoInputsDir(*out)
	}
	kept, err := writeDemoInputs(*inputs, *out)
	if err != nil {
		return fail(stderr, "demo", err)
	}
	points, _ := demoFiles.ReadFile("demo/points.csv")
	obs, _ := demoFiles.ReadFile("demo/observations.csv")
	opt := reduceOptions{
		points:     bytes.NewReader(points),
		pointsName: "demo/points.csv",
		inputs:     []job.Source{{Name: "demo/observations.csv", Reader: bytes.NewReader(obs)}},
	}
	if !*quiet {
		opt.warn = stderr
	}
	ctx, stop := stopOnSignals()
	defer stop()
	opt.set = setOptions(ctx, stderr, nil, *wait)
	sum, err := reduceJob(ctx, j, opt)
	if code, ok := stopped(stderr, "demo", j.Out, err); ok {
		return code
	}
	if err != nil {
		return fail(stderr, "demo", err)
	}
	if !*quiet {
		fmt.Fprintln(stdout, "geored demo: an invented river-crossing network, reduced from simulated observations")
		fmt.Fprintln(stdout, "with three deliberate blunders (a booking slip, a wrong prism, a wrong target id)")
		fmt.Fprintln(stdout, "and two rows that cannot be reduced.")
		fmt.Fprintln(stdout)
		printVerdict(stdout, sum, j.Out)
		sayDemoInputs(stdout, *inputs, kept)
	}
	return sum.ExitStatus
}

// demoJob is the embedded job, writing to out.
func demoJob(out string, workers int) (*jobconfig.Job, error) {
	text, err := demoFiles.ReadFile("demo/job.toml")
	if err != nil {
		return nil, err
	}
	f, err := jobconfig.Parse(text, "demo/job.toml")
	if err != nil {
		return nil, err
	}
	f.Out, f.Workers = out, workers
	j, err := jobconfig.Resolve(f, "demo/job.toml")
	if err != nil {
		return nil, err
	}
	j.Points, j.Observations = "", nil // read from the binary
	return j, nil
}
