package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"slices"
	"strings"

	"github.com/geored/geored/io/units"
)

// stdinArg is the observation file name that reads standard input, and
// stdinName the name its rows are recorded under.
const (
	stdinArg  = "-"
	stdinName = "stdin"
)

// parseArgs parses flags given anywhere among the arguments, as a shell
// user expects (`geored reduce obs.csv -quiet`), and returns the others
// in their order. "--" ends the flags: every argument after it is a file,
// even one whose name starts with a dash. A lone "-" is an argument
// (standard input).
//
// Go's flag package stops at the first argument that is not a flag; this
// parses, takes that argument, and parses the rest again, until none is
// left.
func parseArgs(fs *flag.FlagSet, args []string) ([]string, error) {
	if err := decimalFlags(fs, args); err != nil {
		fmt.Fprintf(fs.Output(), "geored %s: %v (see geored %s -help)\n", fs.Name(), err, fs.Name())
		return nil, err
	}
	var positional []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		rest := fs.Args()
		if len(rest) == 0 {
			return positional, nil
		}
		if at := len(args) - len(rest); at > 0 && args[at-1] == "--" && !takesValue(fs, args, at-2) {
			return append(positional, rest...), nil
		}
		positional = append(positional, rest[0])
		args = rest[1:]
	}
}

// decimalFlags checks the value of every number flag among args as the
// files' numbers are checked (units.ParseFloat): decimal syntax only, so
// that "-k 0x1p-3" or "-critical 3_29" is an error, not 0.125 or 329 as
// Go's flag package reads them.
func decimalFlags(fs *flag.FlagSet, args []string) error {
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == "--" {
			return nil
		}
		name, ok := strings.CutPrefix(a, "-")
		if !ok || name == "" {
			continue
		}
		name = strings.TrimPrefix(name, "-")
		name, value, inline := strings.Cut(name, "=")
		fl := fs.Lookup(name)
		if fl == nil {
			continue
		}
		if !inline {
			if !takesValue(fs, args, i) || i+1 >= len(args) {
				continue
			}
			i++
			value = args[i]
		}
		g, ok := fl.Value.(flag.Getter)
		if !ok {
			continue
		}
		if _, isFloat := g.Get().(float64); !isFloat {
			continue
		}
		if _, err := units.ParseFloat(value); err != nil {
			return fmt.Errorf("-%s %q: want a decimal number (digits with an optional point and exponent; not hexadecimal, underscores, Inf or NaN)", name, value)
		}
	}
	return nil
}

// takesValue reports whether args[i] is a flag that takes the next
// argument as its value ("-out DIR", not "-out=DIR" nor a boolean).
func takesValue(fs *flag.FlagSet, args []string, i int) bool {
	if i < 0 {
		return false
	}
	name, ok := strings.CutPrefix(args[i], "-")
	if !ok || strings.Contains(name, "=") {
		return false
	}
	name = strings.TrimPrefix(name, "-")
	fl := fs.Lookup(name)
	if fl == nil {
		return false
	}
	b, isBool := fl.Value.(interface{ IsBoolFlag() bool })
	return !isBool || !b.IsBoolFlag()
}

// parseCommand parses a command's flags given anywhere; it reports
// whether to go on and, if not, the exit code (0 for -help).
func parseCommand(fs *flag.FlagSet, args []string, stderr io.Writer) ([]string, bool, int) {
	fs.SetOutput(stderr)
	rest, err := parseArgs(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil, false, exitOK
		}
		return nil, false, exitFailed
	}
	return rest, true, exitOK
}

// observationArgs checks the observation files named on the command line:
// "-" (standard input) at most once.
func observationArgs(args []string) error {
	if n := slices.Index(args, stdinArg); n >= 0 && slices.Index(args[n+1:], stdinArg) >= 0 {
		return errors.New(`standard input ("-") can be read once: name it once`)
	}
	return nil
}

// observationInput is where an observation file's rows come from: the
// file, or standard input for "-".
type observationInput struct {
	stdin *os.File // what "-" reads: os.Stdin, or a copy of it on disk
}

// open opens an observation file, or returns standard input for "-"; it
// returns the name the rows are recorded under.
func (o observationInput) open(path string) (*os.File, string, error) {
	if path != stdinArg {
		f, err := os.Open(path)
		return f, path, err
	}
	if o.stdin == nil {
		return nil, "", errors.New("standard input is not available")
	}
	return o.stdin, stdinName, nil
}

// bufferStdin copies standard input to a temporary file that can be read
// twice (job_alpha counts the rows before the run); the returned function
// removes it.
func bufferStdin(stdin *os.File) (*os.File, func(), error) {
	f, err := os.CreateTemp("", "geored-stdin-*.csv")
	if err != nil {
		return nil, nil, fmt.Errorf("job_alpha counts the rows before the run, and standard input cannot be read twice: copying it to a temporary file: %w", err)
	}
	done := func() { f.Close(); os.Remove(f.Name()) }
	if _, err := io.Copy(f, stdin); err != nil {
		done()
		return nil, nil, fmt.Errorf("reading standard input: %w", err)
	}
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		done()
		return nil, nil, err
	}
	return f, done, nil
}
