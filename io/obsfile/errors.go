package obsfile

import (
	"fmt"
	"strconv"

	"github.com/geored/geored/reduce/input"
)

// A FieldError is a bad value in a CSV file.
type FieldError struct {
	File   string
	Line   int    // 1-based line of the file
	Column int    // 1-based column (field number); 0 when the row as a whole is bad
	Field  string // the column's header name
	Value  string // the value as written (Error shows it Clipped)
	Want   string // what was expected
	Err    error  // the underlying cause, if any
}

func (e *FieldError) Error() string {
	where := e.File + ":" + strconv.Itoa(e.Line)
	if e.Column > 0 {
		where += ":" + strconv.Itoa(e.Column)
	}
	if e.Field == "" {
		return fmt.Sprintf("%s: want %s", where, e.Want)
	}
	return fmt.Sprintf("%s: %s %q: want %s", where, Clip(e.Field), Clip(e.Value), e.Want)
}

func (e *FieldError) Unwrap() error { return e.Err }

// A HeaderError is a header that cannot be used: a missing required column,
// a repeated column, or no header at all. It stops the job before any work.
type HeaderError struct {
	File   string
	Line   int
	Reason string
}

func (e *HeaderError) Error() string {
	return fmt.Sprintf("%s:%d: header: %s", e.File, e.Line, e.Reason)
}

// A Warning is something the reader noticed and went on from, such as a
// column it does not know (input.Warning).
type Warning = input.Warning
