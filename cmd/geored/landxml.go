package main

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/landxml"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/reduce/job"
)

// An observation file is read as LandXML when its name ends in .xml or
// its first byte other than a blank (after a UTF-8 byte-order mark) is
// '<'; as the observation CSV otherwise.
func isLandXML(name string, head []byte) bool {
	if strings.HasSuffix(strings.ToLower(name), ".xml") {
		return true
	}
	head = bytes.TrimPrefix(head, []byte("\xef\xbb\xbf"))
	head = bytes.TrimLeft(head, " \t\r\n")
	return len(head) > 0 && head[0] == '<'
}

// sniff wraps r so that its first bytes can be looked at, and says
// whether it is LandXML.
func sniff(r io.Reader, name string) (io.Reader, bool) {
	br := bufio.NewReaderSize(r, 64<<10)
	head, _ := br.Peek(512)
	return br, isLandXML(name, head)
}

func landxmlOptions(j *jobconfig.Job) landxml.Options {
	return landxml.Options{LengthUnit: j.LengthUnit, AngleUnit: j.AngleUnit, Limits: j.Limits, Instruments: j.Serials}
}

// landxmlPoints is the observation file whose CgPoints are the job's
// control points, when the job names no points file: its one LandXML
// observation file ("" if it has none).
func landxmlPoints(j *jobconfig.Job) (string, error) {
	var found []string
	for _, path := range j.Observations {
		ok, err := isLandXMLFile(path)
		if err != nil {
			return "", err
		}
		if ok {
			found = append(found, path)
		}
	}
	if len(found) > 1 {
		return "", fmt.Errorf("no points file, and %d LandXML observation files (%s, …): give the points file in the config or -points", len(found), found[0])
	}
	if len(found) == 0 {
		return "", nil
	}
	return found[0], nil
}

// anyLandXML reports whether any of the observation files is LandXML.
func anyLandXML(paths []string) bool {
	for _, path := range paths {
		if ok, _ := isLandXMLFile(path); ok { // an error: the run reports it
			return true
		}
	}
	return false
}

// isLandXMLFile reports whether the observation file at path is LandXML
// (isLandXML); standard input ("-") is not looked at, and is not.
func isLandXMLFile(path string) (bool, error) {
	if path == stdinArg {
		return false, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return false, err
	}
	defer f.Close()
	_, ok := sniff(f, path)
	return ok, nil
}

// landxmlSources are the run's LandXML observation streams, by the name
// their rows carry.
type landxmlSources map[string]*landxml.Observations

// open opens an observation file as every command reads one: the file,
// or standard input for "-" (obsIn); its bytes through wrap (to hash or
// count them, or as they are), then read as LandXML (isLandXML, its stream
// kept in x for fix and warnings) or as the observation CSV. The caller
// closes the file.
func (x landxmlSources) open(path string, obsIn observationInput, j *jobconfig.Job, wrap func(io.Reader) io.Reader) (*os.File, job.Source, error) {
	f, name, err := obsIn.open(path)
	if err != nil {
		return nil, job.Source{}, err
	}
	in, isXML := sniff(wrap(f), name)
	if isXML {
		lx := landxml.NewObservations(in, name, landxmlOptions(j))
		x[name], in = lx, lx
	}
	return f, job.Source{Name: name, Reader: in}, nil
}

// warnings hands warn what the LandXML streams among sources said, once
// the run has read them.
func (x landxmlSources) warnings(sources []job.Source, warn func(obsfile.Warning)) {
	for _, src := range sources {
		if lx := x[src.Name]; lx != nil {
			for _, w := range lx.Warnings() {
				warn(w)
			}
		}
	}
}

// fix puts into r what the CSV stream of its LandXML file could not say:
// the reason an observation was refused and its element, or its element's
// line where several share one. It runs in the sink, before the result is
// counted or written.
func (x landxmlSources) fix(r *job.Result, u report.Units) {
	file, line := r.Obs.File, r.Obs.Line
	if r.Rejected {
		file, line = r.File, r.LineNo
	}
	lx := x[file]
	if lx == nil {
		return
	}
	f, ok := lx.Take(line)
	if !ok {
		return
	}
	if f.Reason != "" {
		r.Reason, r.Raw, r.LineNo = f.Reason, f.Raw, f.Line
		r.Row = report.AppendRejectRow(r.Row[:0], r)
		return
	}
	if r.Rejected {
		old, now := file+":"+strconv.Itoa(line)+":", file+":"+strconv.Itoa(f.Line)+":"
		r.Reason, r.LineNo = strings.Replace(r.Reason, old, now, 1), f.Line
		r.Row = report.AppendRejectRow(r.Row[:0], r)
		return
	}
	r.Obs.Line = f.Line
	r.Row = report.AppendReducedRow(r.Row[:0], r, u)
}

// plainLandXMLError is the LandXML reader's own error where the CSV
// reader under it put the file's name before it a second time.
func plainLandXMLError(err error) error {
	var le *landxml.Error
	if errors.As(err, &le) {
		return le
	}
	return err
}

// countObsRows counts the observation rows of r, CSV or LandXML.
func countObsRows(r io.Reader, name string, j *jobconfig.Job) (int, error) {
	r, isXML := sniff(r, name)
	if isXML {
		r = landxml.NewObservations(r, name, landxmlOptions(j))
	}
	n, err := obsfile.CountRows(r, name, j.Limits)
	return n, plainLandXMLError(err)
}
