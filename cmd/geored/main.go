// Command geored reduces observed distances to the ellipsoid and the map
// grid, and compares them with the inverse between control coordinates.
//
// Exit status: 0 success, 1 results flagged, 2 could not run (bad
// invocation, bad settings, unreadable input, a full disk, an output
// folder in use), 130 and 143 stopped by SIGINT and SIGTERM.
package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"runtime/debug"
)

// Exit codes.
const (
	exitOK      = 0
	exitFlagged = 1
	exitFailed  = 2
)

type command struct {
	name, summary string
	run           func(args []string, stdout, stderr io.Writer) int
}

func commands() []command {
	return []command{
		{"reduce", "reduce observation files and compare with control", runReduce},
		{"audit", "accept or reject delivered distances and GNSS vectors, line by line, and say why", runAudit},
		{"nightly", "the unattended run: reduce what arrived in a job folder's inbox, once, into a history", runNightly},
		{"history", "print a line's, an instrument's or a mark's series from the nightly history as CSV", runHistory},
		{"inverse", "geodesic and grid inverse between control points", runInverse},
		{"predict", "expected slope distance, zenith angle and horizontal distance from control", runPredict},
		{"sightline", "whether a line of sight clears the curved Earth, with refraction", runSightline},
		{"init", "write a commented starter job for a CRS and units, that runs as written", runInit},
		{"demo", "run geored on the embedded demo job and write its input files to copy", runDemo},
		{"version", "print geored's and PROJ's versions", runVersion},
	}
}

func main() {
	// A reduction's live heap is the per-line records, in pointer-free
	// chunks that cost the collector almost nothing to mark, and it makes
	// little garbage; collecting when the heap has grown by a tenth
	// rather than doubled keeps the peak memory near the live data
	// (GOGC=100 costs 20 to 30 MB more peak on the synthetic job of make
	// bench, in the same time). GOGC, if set, still rules.
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(10)
	}
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		usage(stderr)
		return exitFailed
	}
	switch args[0] {
	case "-h", "-help", "--help":
		usage(stdout)
		return exitOK
	case "help":
		if len(args) > 1 {
			// geored help reduce: the command's own help
			return run([]string{args[1], "-help"}, stdout, stderr)
		}
		usage(stdout)
		return exitOK
	case "-version", "--version":
		return runVersion(nil, stdout, stderr)
	}
	for _, c := range commands() {
		if c.name == args[0] {
			return c.run(args[1:], stdout, stderr)
		}
	}
	fmt.Fprintf(stderr, "geored: unknown command %q\n\n", args[0])
	usage(stderr)
	return exitFailed
}

func usage(w io.Writer) {
	fmt.Fprintln(w, "geored reduces observed distances to the ellipsoid and the map grid.")
	fmt.Fprintln(w, "\nUsage: geored <command> [flags]\n\nCommands:")
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-9s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w, "\nRun 'geored <command> -help' (or 'geored help <command>') for the command's flags;")
	fmt.Fprintln(w, "flags may come before or after file names. 'geored --version' prints the versions.")
	fmt.Fprintln(w, "New job: 'geored init -crs EPSG:nnnn -dir myjob' writes a commented job file that runs as written.")
	fmt.Fprintln(w, "\n"+cautionText)
}

// cautionText is printed under every table and every usage text.
const cautionText = "Results support, and do not replace, the judgement of a licensed surveyor;\nlocal regulations and standards govern."

// parseFlags parses a subcommand's flags, given anywhere among its
// arguments, for a command that takes no other arguments; it reports
// whether to go on and, if not, the exit code.
func parseFlags(fs *flag.FlagSet, args []string, stderr io.Writer) (bool, int) {
	rest, ok, code := parseCommand(fs, args, stderr)
	if !ok {
		return false, code
	}
	if len(rest) > 0 {
		fmt.Fprintf(stderr, "geored %s: unexpected argument %q (this command takes flags only; see geored %s -help)\n", fs.Name(), rest[0], fs.Name())
		return false, exitFailed
	}
	return true, exitOK
}

// fail prints an error for a run that could not be done.
func fail(stderr io.Writer, cmd string, err error) int {
	fmt.Fprintf(stderr, "geored %s: %v\n", cmd, err)
	return exitFailed
}
