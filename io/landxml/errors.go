package landxml

import (
	"fmt"
	"strconv"

	"github.com/geored/geored/io/obsfile"
)

// An Error is a bad element or attribute of a LandXML file: where it is,
// what was found and what was expected.
type Error struct {
	File         string
	Line, Column int    // of the element's start tag, 1-based
	Element      string // the element's name
	Attr         string // the attribute, if one is at fault
	Value        string // the value as written (Error shows it clipped)
	Want         string // what was expected
	Err          error  // the underlying cause, if any
}

func (e *Error) Error() string {
	where := e.File + ":" + strconv.Itoa(e.Line) + ":" + strconv.Itoa(e.Column)
	switch {
	case e.Element == "":
		return fmt.Sprintf("%s: want %s", where, e.Want)
	case e.Attr == "":
		return fmt.Sprintf("%s: %s: want %s", where, e.Element, e.Want)
	}
	return fmt.Sprintf("%s: %s %s %q: want %s", where, e.Element, e.Attr, obsfile.Clip(e.Value), e.Want)
}

func (e *Error) Unwrap() error { return e.Err }
