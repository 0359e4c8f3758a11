package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"hash"
	"io"
	"os"
	"strings"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/reduce/job"
)

// fileList is a flag that may be given more than once, each a file.
type fileList []string

func (f *fileList) String() string { return strings.Join(*f, ",") }

func (f *fileList) Set(v string) error {
	if v == "" {
		return errors.New("want a file name")
	}
	*f = append(*f, v)
	return nil
}

// reduceRaw reduces the subcontractor's raw observations (the job's
// observation files) with the job's settings, as reduce does, and
// gathers our reduction line by line. Every row is counted: reduced, or
// rejected into the summary's rejects with its file, line, raw row and
// reason.
func reduceRaw(ctx context.Context, j *jobconfig.Job, s *session, sum *report.AuditSummary, warn func(string)) (*job.RawLines, error) {
	if len(j.Profiles) == 0 {
		return nil, errors.New("raw observations need an instrument profile to be reduced: give [instrument.NAME] with wavelength_um, a reference, spec_mm and spec_ppm (or the instrument flags)")
	}
	plan, err := job.NewPlan(j, s.crs, s.geod, s.control)
	if err != nil {
		return nil, err
	}
	var sources []job.Source
	var files []*os.File
	var hashes []hashedFile
	defer func() {
		for _, f := range files {
			f.Close()
		}
	}()
	for _, path := range j.Observations {
		f, err := os.Open(path)
		if err != nil {
			return nil, err
		}
		files = append(files, f)
		h := sha256.New()
		hf := hashedFile{path: path, h: h}
		hashes = append(hashes, hf)
		sources = append(sources, job.Source{Name: path, Reader: io.TeeReader(f, h)})
	}
	rows := map[string]int{}
	raw := job.NewRawLines()
	err = job.Run(ctx, plan, sources, func(w obsfile.Warning) { warn(w.String()) }, func(r *job.Result) error {
		sum.Counts.ObsRead++
		if r.Rejected {
			sum.Counts.ObsRejected++
			rows[strings.Clone(r.File)]++
			sum.Rejects = append(sum.Rejects, report.AuditReject{File: strings.Clone(r.File), Line: r.LineNo,
				Raw: strings.Clone(r.Raw), Reason: strings.Clone(r.Reason)})
			return nil
		}
		sum.Counts.ObsReduced++
		rows[r.Obs.File]++
		raw.Add(r)
		return nil
	})
	if err != nil {
		return nil, err
	}
	for _, hf := range hashes {
		sum.Inputs = append(sum.Inputs, report.InputFile{Role: "raw observations", Path: hf.path, SHA256: hex.EncodeToString(hf.h.Sum(nil)), Rows: rows[hf.path]})
	}
	return raw, nil
}

type hashedFile struct {
	path string
	h    hash.Hash
}
