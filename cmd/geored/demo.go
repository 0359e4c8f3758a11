package main

import (
	"bytes"
	"embed"
	"flag"
	"fmt"
	"io"

	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/job"
)

// The demo job: an invented river-crossing control network.
//
//go:embed demo/points.csv demo/lines.csv
var demoFiles embed.FS

const demoCRS = "EPSG:25832"

func runDemo(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	fs.Usage = func() {
		fmt.Fprintln(stderr, "Usage: geored demo\n\nRuns geored on its embedded demo job: an invented river-crossing control")
		fmt.Fprintln(stderr, "network in ETRS89 / UTM zone 32N.")
	}
	if ok, code := parseFlags(fs, args, stderr); !ok {
		return code
	}
	s, err := openSession(demoCRS, "", units.Metre)
	if err != nil {
		return fail(stderr, "demo", err)
	}
	defer s.close()
	points, _ := demoFiles.ReadFile("demo/points.csv")
	if err := s.loadPoints(bytes.NewReader(points), "demo/points.csv", stderr); err != nil {
		return fail(stderr, "demo", err)
	}
	linesCSV, _ := demoFiles.ReadFile("demo/lines.csv")
	pairs, err := readLinePairs(bytes.NewReader(linesCSV), "demo/lines.csv")
	if err != nil {
		return fail(stderr, "demo", err)
	}
	var lines []job.InverseLine
	for _, pr := range pairs {
		a, err := s.point(pr[0])
		if err != nil {
			return fail(stderr, "demo", err)
		}
		b, err := s.point(pr[1])
		if err != nil {
			return fail(stderr, "demo", err)
		}
		l, err := job.Inverse(a, b, s.geod, s.proj)
		if err != nil {
			return fail(stderr, "demo", err)
		}
		lines = append(lines, l)
	}
	fmt.Fprintf(stdout, "geored demo: inverse of the %d lines of an invented river-crossing network\n", len(lines))
	fmt.Fprintf(stdout, "(control heights h = H + N, N from the EGM96 geoid grid %s)\n\n", s.geoid.Grid())
	if err := writeInverseTable(stdout, s, lines, units.Metre); err != nil {
		return fail(stderr, "demo", err)
	}
	return exitOK
}
