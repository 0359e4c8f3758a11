package main

import (
	"flag"
	"fmt"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
)

// limitFlags are the job file's [limits] as flags, one a limit, named as
// the keys with dashes (-max-line-bytes, …).
type limitFlags struct {
	lineBytes, fieldBytes, columns, points int
}

func (l *limitFlags) register(fs *flag.FlagSet) {
	d := obsfile.DefaultLimits
	fs.IntVar(&l.lineBytes, "max-line-bytes", 0, fmt.Sprintf("longest row of an input file, bytes, its quoted line breaks included (config: [limits] max_line_bytes; default %d)", d.MaxLineBytes))
	fs.IntVar(&l.fieldBytes, "max-field-bytes", 0, fmt.Sprintf("longest field of an input file, bytes (config: [limits] max_field_bytes; default %d)", d.MaxFieldBytes))
	fs.IntVar(&l.columns, "max-columns", 0, fmt.Sprintf("most columns of an input file's header (config: [limits] max_columns; default %d)", d.MaxColumns))
	fs.IntVar(&l.points, "max-points", 0, fmt.Sprintf("most rows of the points file (config: [limits] max_points; default %d)", d.MaxPoints))
}

// apply lays the limits set as flags over the job file's.
func (l *limitFlags) apply(set map[string]bool, jf *jobconfig.File) {
	for _, f := range []struct {
		name string
		v    int
		dst  **int
	}{
		{"max-line-bytes", l.lineBytes, &jf.Limits.MaxLineBytes},
		{"max-field-bytes", l.fieldBytes, &jf.Limits.MaxFieldBytes},
		{"max-columns", l.columns, &jf.Limits.MaxColumns},
		{"max-points", l.points, &jf.Limits.MaxPoints},
	} {
		if set[f.name] {
			v := f.v
			*f.dst = &v
		}
	}
}
