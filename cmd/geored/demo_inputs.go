package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
)

// demoInputFiles are the demo's inputs, written for a user to copy and
// edit: its job file, points, observations and lines.
var demoInputFiles = []string{"job.toml", "points.csv", "observations.csv", "lines.csv"}

// demoInputsDir is where the demo writes its inputs by default: a folder
// beside the output folder, not in it (the output folder is the run's
// alone).
func demoInputsDir(out string) string {
	return filepath.Clean(out) + "-job"
}

// writeDemoInputs writes the demo's input files into dir, its job file
// naming out (relative to dir) as its output folder, so that
// `geored reduce -config DIR/job.toml` reproduces the demo's results. A
// file that exists with other contents, such as one the user has edited,
// is left as it is and named in the returned list.
func writeDemoInputs(dir, out string) (kept []string, err error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	for _, name := range demoInputFiles {
		b, err := demoFiles.ReadFile("demo/" + name)
		if err != nil {
			return nil, err
		}
		if name == "job.toml" {
			if b, err = demoJobFile(b, dir, out); err != nil {
				return nil, err
			}
		}
		path := filepath.Join(dir, name)
		if old, err := os.ReadFile(path); err == nil {
			if !bytes.Equal(old, b) {
				kept = append(kept, path)
			}
			continue
		}
		if err := os.WriteFile(path, b, 0o644); err != nil {
			return kept, err
		}
	}
	return kept, nil
}

// demoJobFile is the embedded job file with its output folder, out, as
// seen from dir.
func demoJobFile(job []byte, dir, out string) ([]byte, error) {
	absDir, err := filepath.Abs(dir)
	if err != nil {
		return nil, err
	}
	absOut, err := filepath.Abs(out)
	if err != nil {
		return nil, err
	}
	rel, err := filepath.Rel(absDir, absOut)
	if err != nil {
		rel = absOut
	}
	var b bytes.Buffer
	fmt.Fprintf(&b, "# Written by geored demo beside its results: `geored reduce -config %s`\n", filepath.Join(dir, "job.toml"))
	fmt.Fprintf(&b, "# reruns the demo job into the demo's output folder; copy this folder and edit\n")
	fmt.Fprintf(&b, "# it to make a job of your own (geored reduce -help describes every setting).\n")
	fmt.Fprintf(&b, "out = %s\n", strconv.Quote(filepath.ToSlash(rel)))
	b.Write(job)
	return b.Bytes(), nil
}

// sayDemoInputs tells where the demo's inputs are.
func sayDemoInputs(w io.Writer, dir string, kept []string) {
	fmt.Fprintf(w, "the demo's input files are in %s (job.toml, points.csv, observations.csv, lines.csv):\n", dir)
	fmt.Fprintf(w, "copy and edit them; geored reduce -config %s reruns the job\n", filepath.Join(dir, "job.toml"))
	for _, k := range kept {
		fmt.Fprintf(w, "  %s differs from the demo's and was left as it is\n", k)
	}
}
