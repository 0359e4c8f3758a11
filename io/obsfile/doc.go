// Package obsfile reads the job's CSV inputs: the points file (control
// coordinates), the observation files (streamed row by row), the pairs
// file of predict and the ground profile of sightline. It validates every
// value at the edge, converts lengths to metres and angles to s1.Angle, and
// reports each bad value with file, line, column, the value and what was
// expected (a *FieldError), so nothing is dropped silently.
//
// Files have a header row; columns come in any order; '#' starts a comment
// line; blank lines, a UTF-8 byte-order mark, CRLF line ends and quoted
// fields are accepted; point ids may be any UTF-8 text.
//
// The points and observation files may be delimited by commas,
// semicolons or tabs: the job says which, or the reader finds it from the
// header (FindDelimiter). In a semicolon- or tab-delimited file a number
// may write its decimal mark as a comma: one mark a file, the first '.'
// or ',' in a numeric column in file order, and a number with the other,
// or with both (a separator of thousands), is a bad value naming where
// the file's mark was set. In a comma-delimited file the mark is the
// point.
package obsfile
