package job

import (
	"testing"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
)

// planJobs are the jobs of the tests' plans, whose observation files the
// tests open with io/obsfile in the job's units (openerOf).
var planJobs = map[*Plan]*jobconfig.Job{}

// openerOf opens observation files for plan as the command does.
func openerOf(t testing.TB, plan *Plan) Opener {
	t.Helper()
	j, ok := planJobs[plan]
	if !ok {
		t.Fatal("a plan not made by planFor")
	}
	opt := j.ObsOptions()
	return func(src Source) (ChunkSource, []obsfile.Warning, error) {
		c, w, err := obsfile.NewObsChunker(src.Reader, src.Name, opt)
		if err != nil {
			return nil, w, err
		}
		return c, w, nil
	}
}

// The command's reader of observation files is the run's source of rows.
var (
	_ ChunkSource = (*obsfile.ObsChunker)(nil)
	_ RowError    = (*obsfile.RowError)(nil)
)
