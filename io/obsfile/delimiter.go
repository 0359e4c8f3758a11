package obsfile

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"slices"
	"strings"

	"github.com/geored/geored/io/units"
)

// A Delimiter is what separates the fields of a CSV file: a comma, a
// semicolon or a tab. The zero value, DelimiterAuto, has the reader find
// it from the file's header (FindDelimiter).
type Delimiter byte

// The delimiters.
const (
	DelimiterAuto Delimiter = 0
	Comma         Delimiter = ','
	Semicolon     Delimiter = ';'
	Tab           Delimiter = '\t'
)

// DelimiterKey is the delimiter's setting in the job file; the flag is
// -delimiter.
const DelimiterKey = "delimiter"

// delimiters are the candidates, in the order a tie between them is told.
var delimiters = []Delimiter{Comma, Semicolon, Tab}

// ParseDelimiter reads a delimiter as the job file and the flag give it:
// "auto" (or ""), ",", ";" or "tab" (a tab character itself too; case
// and surrounding space ignored).
func ParseDelimiter(s string) (Delimiter, error) {
	if s == "\t" {
		return Tab, nil
	}
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "auto":
		return DelimiterAuto, nil
	case ",", "comma":
		return Comma, nil
	case ";", "semicolon":
		return Semicolon, nil
	case "tab", `\t`:
		return Tab, nil
	}
	return 0, fmt.Errorf("%q: want \"auto\" (found from each file's header), \",\", \";\" or \"tab\"", s)
}

// String is the delimiter as ParseDelimiter reads it: auto, ",", ";" or
// tab.
func (d Delimiter) String() string {
	switch d {
	case DelimiterAuto:
		return "auto"
	case Tab:
		return "tab"
	}
	return string(rune(d))
}

// quoted is the delimiter for a message: ',' ';' or tab.
func (d Delimiter) quoted() string {
	if d == Tab {
		return "tab"
	}
	return "'" + d.String() + "'"
}

// Decimals reports whether a number in a file with this delimiter may
// write its decimal mark as a comma: in a semicolon- or tab-delimited
// file only. In a comma-delimited file the mark is the point.
func (d Delimiter) Decimals() bool { return d == Semicolon || d == Tab }

// A csvFormat says how a table's fields are delimited and which of its
// columns hold numbers (where the file's decimal mark is found).
type csvFormat struct {
	delim   Delimiter // DelimiterAuto: found from the header
	numeric []string
}

// FindDelimiter is how an automatic delimiter is chosen from the header
// line: the candidate (',', ';', tab) that splits it into the most known
// column names. Where two or more split it into the same most, the one
// of them that splits it at all is taken (a one-column header is read
// with commas); where two do, the header is ambiguous and refused. Where
// none gives a known name, ',' is assumed and the header's error says
// so.
//
// It returns the delimiter and why it was taken, in words for a
// message, or an error reason when the header is ambiguous.
func FindDelimiter(header []byte, known []string) (Delimiter, string, error) {
	counts := make([]int, len(delimiters))
	splits := make([]bool, len(delimiters))
	best := 0
	for i, d := range delimiters {
		fields := firstRecord(header, d)
		splits[i] = len(fields) > 1
		seen := map[string]bool{}
		for _, f := range fields {
			name := strings.ToLower(strings.TrimSpace(f))
			if slices.Contains(known, name) && !seen[name] {
				seen[name] = true
				counts[i]++
			}
		}
		best = max(best, counts[i])
	}
	tally := func() string {
		var parts []string
		for i, d := range delimiters {
			parts = append(parts, fmt.Sprintf("%s into %d", d.quoted(), counts[i]))
		}
		return strings.Join(parts, ", ")
	}
	if best == 0 {
		return Comma, "assumed, since no delimiter splits the header into known column names (" + tally() + ")", nil
	}
	var top []Delimiter
	for i, d := range delimiters {
		if counts[i] == best && splits[i] {
			top = append(top, d)
		}
	}
	switch len(top) {
	case 0: // none splits it: the header is one column
		return Comma, "taken, since the header has one column", nil
	case 1:
		return top[0], fmt.Sprintf("found from the header, which it splits into the most known column names (%s)", tally()), nil
	}
	names := make([]string, len(top))
	for i, d := range top {
		names[i] = d.quoted()
	}
	return 0, "", fmt.Errorf("the delimiter is ambiguous: %s each split the header into the most known column names, %d (%s), so none is assumed", strings.Join(names, " and "), best, tally())
}

// firstRecord is the first row of text read with delimiter d as the
// readers read it (comment lines skipped), or nil where it is not
// well-formed CSV.
func firstRecord(text []byte, d Delimiter) []string {
	cr := newCSVReader(bytes.NewReader(text), d)
	cr.ReuseRecord = false
	rec, err := cr.Read()
	if err != nil {
		return nil
	}
	return rec
}

// A decimalMark is a file's decimal mark and the line where it was first
// found; mark 0 while no number has shown one.
type decimalMark struct {
	mark units.DecimalMark
	line int
}

// headMark is the decimal mark of the rows in head, the start of a file
// delimited by d, as far as they go (findMark); numeric names the
// columns that hold numbers.
func headMark(head []byte, d Delimiter, numeric []string) decimalMark {
	rows := newCSVReader(bytes.NewReader(head), d)
	header, err := rows.Read()
	if err != nil {
		return decimalMark{}
	}
	var cols []int
	for i, h := range header {
		if slices.Contains(numeric, strings.ToLower(strings.TrimSpace(h))) {
			cols = append(cols, i)
		}
	}
	return findMark(rows, cols, 0)
}

// findMark is the decimal mark of the rows that cr reads (with
// lineOffset added to its lines): the first '.' or ',' in a numeric
// column (cols, the columns' indexes), in file order, row by row and left
// to right. It stops at the end of cr's text or at broken CSV, without a
// mark (decimalMark{}) where none is found.
func findMark(cr *csv.Reader, cols []int, lineOffset int) decimalMark {
	for {
		rec, err := cr.Read()
		if err != nil {
			return decimalMark{}
		}
		if m, i := markIn(rec, cols); m != 0 {
			line, _ := cr.FieldPos(i)
			return decimalMark{mark: m, line: line + lineOffset}
		}
	}
}

// markIn is the first '.' or ',' in the fields cols of rec, and the
// field it is in.
func markIn(rec []string, cols []int) (units.DecimalMark, int) {
	for _, i := range cols {
		if i >= len(rec) {
			continue
		}
		if j := strings.IndexAny(rec[i], ".,"); j >= 0 {
			return units.DecimalMark(rec[i][j]), i
		}
	}
	return 0, 0
}

// markText explains, for the error of a number s that could not be read,
// what its decimal mark has to do with it: "" where nothing.
func (t *table) markText(s string) string { return MarkNote(t.delim, t.mark.mark, t.mark.line, s) }

// MarkNote explains, for the error of a number s that could not be read
// in a file delimited by d whose decimal mark is mark (first on line),
// what its decimal mark has to do with it, as "; …" to append to what
// was expected; "" where nothing.
func MarkNote(d Delimiter, mark units.DecimalMark, line int, s string) string {
	switch {
	case !d.Decimals():
		if strings.Contains(s, ",") {
			return "; a decimal comma is read only in a semicolon- or tab-delimited file (this one is delimited by " + d.quoted() + ")"
		}
	case strings.Contains(s, ".") && strings.Contains(s, ","):
		return "; a number has one decimal mark, '.' or ',', and no separator of thousands"
	case mark == units.DecimalComma && strings.Contains(s, "."):
		return fmt.Sprintf("; the file writes its decimal mark as ',' (first on line %d), so '.' is not read (a separator of thousands is not taken)", line)
	case mark == units.DecimalPoint && strings.Contains(s, ","):
		return fmt.Sprintf("; the file writes its decimal mark as '.' (first on line %d), so ',' is not read (a separator of thousands is not taken)", line)
	}
	return ""
}

// DelimiterNote says, for a header's error, at which delimiter its
// columns were split and why (as FindDelimiter says it, or the job's
// setting), and how to give it.
func DelimiterNote(d Delimiter, why string) string {
	return fmt.Sprintf("(the columns split at %s, %s; %s)", d.quoted(), why, DelimiterAdvice)
}

// DelimiterBySetting is why a delimiter that the job gives was taken.
const DelimiterBySetting = "as the job's " + DelimiterKey + " setting says"

// markOf is the decimal mark to read s with: the file's, or, while the
// file has shown none, a point (s then has no mark, or it would have
// been found in its row: table.next).
func (t *table) markOf() units.DecimalMark {
	if m := t.mark.mark; m != 0 {
		return m
	}
	return units.DecimalPoint
}
