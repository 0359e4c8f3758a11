package jobconfig

import (
	"github.com/geored/geored/io/obsfile"
)

// Limits is the job file's [limits]: what the readers take from any one
// input file at most (obsfile.Limits). A key not given keeps its
// default, far beyond any real file.
type Limits struct {
	MaxLineBytes  *int `toml:"max_line_bytes"`  // a row, bytes (default 1,048,576)
	MaxFieldBytes *int `toml:"max_field_bytes"` // a field, bytes (default 65,536)
	MaxColumns    *int `toml:"max_columns"`     // a header's columns (default 1,000)
	MaxPoints     *int `toml:"max_points"`      // a points file's rows (default 1,000,000)
}

// resolveLimits sets j.Limits from l: each given value must be positive.
func (j *Job) resolveLimits(l Limits, pr *problems) {
	j.Limits = obsfile.DefaultLimits
	for _, k := range []struct {
		key string
		v   *int
		dst *int
	}{
		{obsfile.LimitLineKey, l.MaxLineBytes, &j.Limits.MaxLineBytes},
		{obsfile.LimitFieldKey, l.MaxFieldBytes, &j.Limits.MaxFieldBytes},
		{obsfile.LimitColumnKey, l.MaxColumns, &j.Limits.MaxColumns},
		{obsfile.LimitPointsKey, l.MaxPoints, &j.Limits.MaxPoints},
	} {
		if k.v == nil {
			continue
		}
		if *k.v <= 0 {
			pr.bad("limits."+k.key, "%d: want a positive count", *k.v)
			continue
		}
		*k.dst = *k.v
	}
}
