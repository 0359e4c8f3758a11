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
package obsfile
