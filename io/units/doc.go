// Package units converts lengths and angles between the units surveyors
// write in files and the units geored computes in.
//
// Inside geored every length is a float64 in metres and every angle an
// s1.Angle (radians). This package sits at the edges: it parses the metre,
// the US survey foot and the international foot, and angles written in
// decimal degrees, packed degrees-minutes-seconds (DDD.MMSS), gon or
// radians, and it formats them back. Nothing here guesses a unit: a bare
// "ft" is refused because it could be either foot.
//
// Every error is typed (*SyntaxError for text that is not a value of the
// unit, *RangeError for a value outside what the quantity allows) and is
// matchable with errors.As; messages are lowercase and say what was got and
// what was wanted.
package units
