package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"hash"
	"io"
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
// observation files: CSV or LandXML, "-" standard input through obsIn)
// with the job's settings, read as reduce reads them, and gathers our
// reduction line by line. Every row is counted: reduced, or rejected
// into the summary's rejects with its file, line, raw row and reason.
func reduceRaw(ctx context.Context, j *jobconfig.Job, s *session, obsIn observationInput, sum *report.AuditSummary, warn func(string)) (*job.RawLines, error) {
	if len(j.Profiles) == 0 {
		return nil, errors.New("raw observations need an instrument profile to be reduced: give [instrument.NAME] with wavelength_um, a reference, spec_mm and spec_ppm (or the instrument flags)")
	}
	plan, err := job.NewPlan(j.Settings(), s.crs, s.geod, s.control)
	if err != nil {
		return nil, err
	}
	xml := landxmlSources{}
	var sources []job.Source
	var hashes []hash.Hash
	for _, path := range j.Observations {
		h := sha256.New()
		f, src, err := xml.open(path, obsIn, j, func(r io.Reader) io.Reader { return io.TeeReader(r, h) })
		if err != nil {
			return nil, err
		}
		defer f.Close()
		hashes = append(hashes, h)
		sources = append(sources, src)
	}
	u := report.Units{Length: j.LengthUnit, Angle: j.AngleUnit}
	warnObs := func(w obsfile.Warning) { warn(w.String()) }
	rows := map[string]int{}
	raw := job.NewRawLines()
	err = job.Run(ctx, plan, sources, obsOpener(j), warnObs, func(r *job.Result) error {
		if len(xml) > 0 {
			xml.fix(r, u)
		}
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
	xml.warnings(sources, warnObs)
	if err != nil {
		return nil, plainLandXMLError(err)
	}
	for i, src := range sources {
		sum.Inputs = append(sum.Inputs, report.InputFile{Role: "raw observations", Path: src.Name, SHA256: hex.EncodeToString(hashes[i].Sum(nil)), Rows: rows[src.Name]})
	}
	return raw, nil
}
