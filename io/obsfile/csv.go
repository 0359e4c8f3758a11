package obsfile

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/input"
)

// table reads a CSV file with a header row, mapping column names to field
// positions.
type table struct {
	file string
	br   *bufio.Reader // under r, positioned after the rows read
	// limiter, under br, bounds the file's rows (Limits.MaxLineBytes).
	limiter *rowLimiter
	r       rowReader
	// lineOffset is added to r's line numbers: the line before the first
	// row r reads, when r reads a chunk of the file (ObsChunker).
	lineOffset int
	col        map[string]int // header name → field index
	header     []string
	row        []string
	line       int // line of the current row
	// headerLine is the line of the header row, afterHeader the line
	// after it (further on if quoted names hold line breaks).
	headerLine, afterHeader int
	maxField                int // Limits.MaxFieldBytes

	delim    Delimiter // the file's, never DelimiterAuto
	delimWhy string    // how delim was chosen, for a header's error
	// mark is the file's decimal mark: a point in a comma-delimited
	// file; in a semicolon- or tab-delimited one the first found in a
	// numeric column (numCols), mark 0 until then (next looks for it).
	mark    decimalMark
	numCols []int
}

const bom = "\uFEFF"

// maxUnknownWarnings is how many unknown columns get a warning each; the
// rest are one warning that counts them.
const maxUnknownWarnings = 5

// peekBytes is how much of a file the readers look at first, to find its
// delimiter and its decimal mark: the reading buffer.
const peekBytes = 64 << 10

// openTable reads the header, within lim (already OrDefault). known
// lists the columns the caller understands; each of the first five
// others is one warning, and any more are one warning that counts them.
// format gives the delimiter, or DelimiterAuto to find it from the
// header (FindDelimiter); in a semicolon- or tab-delimited file, the
// decimal mark is the first '.' or ',' in a column of format.numeric, in
// file order (looked for in the first 64 KiB here, and on in next).
func openTable(r io.Reader, file string, known []string, lim Limits, format csvFormat) (*table, []Warning, error) {
	limiter := limitedInput(r, file, lim)
	br := bufio.NewReaderSize(limiter, peekBytes)
	if b, err := br.Peek(len(bom)); err == nil && string(b) == bom {
		br.Discard(len(bom))
	}
	// What Peek returns short of peekBytes is the file's end or an error
	// that the reads below meet again (the rowLimiter keeps its error).
	head, _ := br.Peek(peekBytes)
	delim, why := format.delim, DelimiterBySetting
	if delim == DelimiterAuto {
		var err error
		if delim, why, err = FindDelimiter(head, known); err != nil {
			return nil, nil, &HeaderError{File: file, Line: 1, Reason: err.Error() + "; " + DelimiterAdvice}
		}
	}
	mark := decimalMark{mark: units.DecimalPoint}
	if delim.Decimals() {
		mark = headMark(head, delim, format.numeric) // before the reads below move head's bytes
	}
	cr := newCSVReader(br, delim)
	t := &table{file: file, br: br, limiter: limiter, r: cr, col: map[string]int{}, maxField: lim.MaxFieldBytes,
		delim: delim, delimWhy: why, mark: mark}
	// The header row is at most MaxLineBytes (the rowLimiter), so
	// encoding/csv holds at most that and a string per column of it.
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		reason := "the file is empty: want a header row"
		if limiter.line > 1 || limiter.lineLen > 0 {
			reason = "the file holds only comment lines (#) and blank lines: want a header row"
		}
		return nil, nil, &HeaderError{File: file, Line: 1, Reason: reason}
	}
	if err != nil {
		return nil, nil, t.csvError(err)
	}
	t.line, _ = cr.FieldPos(0)
	if len(header) > lim.MaxColumns {
		return nil, nil, &LimitError{File: file, Line: t.line, What: fmt.Sprintf("the header's %s columns", groupDigits(len(header))), Max: lim.MaxColumns, Unit: "columns", Key: LimitColumnKey}
	}
	t.headerLine, t.afterHeader = t.line, t.line+1
	for i, h := range header {
		t.afterHeader += strings.Count(h, "\n")
		if len(h) > lim.MaxFieldBytes {
			return nil, nil, &LimitError{File: file, Line: t.line, What: fmt.Sprintf("the name of column %d (%s bytes)", i+1, groupDigits(len(h))), Max: lim.MaxFieldBytes, Unit: "bytes", Key: LimitFieldKey}
		}
	}
	t.header = slices.Clone(header)
	var warnings []Warning
	var unknown []int // columns past the first warnings
	for i, h := range t.header {
		name := strings.ToLower(strings.TrimSpace(h))
		t.header[i] = name
		if name == "" {
			return nil, nil, &HeaderError{File: file, Line: t.line, Reason: fmt.Sprintf("column %d has no name", i+1)}
		}
		if j, dup := t.col[name]; dup {
			return nil, nil, &HeaderError{File: file, Line: t.line, Reason: fmt.Sprintf("column %q appears twice (columns %d and %d)", Clip(name), j+1, i+1)}
		}
		t.col[name] = i
		if slices.Contains(known, name) {
			continue
		}
		if len(warnings) < maxUnknownWarnings {
			warnings = append(warnings, Warning{File: file, Line: t.line, Text: fmt.Sprintf("unknown column %q (column %d) is ignored; known columns: %s", Clip(name), i+1, strings.Join(known, ", "))})
		} else {
			unknown = append(unknown, i+1)
		}
	}
	if n := len(unknown); n > 0 {
		warnings = append(warnings, Warning{File: file, Line: t.line, Text: fmt.Sprintf("%s more unknown columns (columns %d to %d) are ignored", groupDigits(n), unknown[0], unknown[n-1])})
	}
	if delim.Decimals() {
		for _, name := range format.numeric {
			if i, ok := t.col[name]; ok {
				t.numCols = append(t.numCols, i)
			}
		}
		slices.Sort(t.numCols)
	}
	return t, warnings, nil
}

// DelimiterAdvice says how to give the delimiter.
const DelimiterAdvice = "set " + DelimiterKey + ` = ",", ";" or "tab" in the job (or -` + DelimiterKey + `) to say which`

// headerError is a header's error that comes from its columns: it says
// which delimiter they were split at, and why.
func (t *table) headerError(line int, reason string) *HeaderError {
	return &HeaderError{File: t.file, Line: line, Reason: reason + " " + DelimiterNote(t.delim, t.delimWhy)}
}

// A rowReader gives a table its rows: encoding/csv's Reader, or
// plainRows for a chunk without quotes.
type rowReader interface {
	Read() ([]string, error)
	FieldPos(field int) (line, column int)
}

// newCSVReader reads the files' CSV, delimited by d: # comments, rows
// checked against the header by the caller, one record reused.
func newCSVReader(r io.Reader, d Delimiter) *csv.Reader {
	cr := csv.NewReader(r)
	cr.Comma = rune(d)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	return cr
}

// fieldPos is the line and column of field i of the current row in the
// file.
func (t *table) fieldPos(i int) (line, column int) {
	line, column = t.r.FieldPos(i)
	return line + t.lineOffset, column
}

// require checks that every name is a column.
func (t *table) require(names ...string) error {
	var missing []string
	for _, n := range names {
		if _, ok := t.col[n]; !ok {
			missing = append(missing, n)
		}
	}
	if len(missing) > 0 {
		return t.headerError(t.line, fmt.Sprintf("missing required column(s) %s; found %s", strings.Join(missing, ", "), Clip(strings.Join(t.header, ", "))))
	}
	return nil
}

func (t *table) has(name string) bool { _, ok := t.col[name]; return ok }

// together checks that the columns named are all in the header or none
// of them is.
func (t *table) together(names ...string) error {
	n := 0
	for _, name := range names {
		if t.has(name) {
			n++
		}
	}
	if n == 0 || n == len(names) {
		return nil
	}
	return &HeaderError{File: t.file, Line: t.headerLine, Reason: strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1] + " go together"}
}

// eachRow calls parse on every row after the header. It reports every bad
// row (a *FieldError from reading or from parse), up to maxErrors, in one
// joined error; any other error ends the file and is returned alone. A file
// with no rows is a *HeaderError: "no <what> after the header".
func (t *table) eachRow(what string, parse func() error) error {
	var errs []error
	rows := 0
	for {
		err := t.next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err == nil {
			rows++
			err = parse()
		}
		if err != nil {
			var fe *FieldError
			if !errors.As(err, &fe) {
				return err
			}
			if errs = append(errs, err); len(errs) == maxErrors {
				errs = append(errs, fmt.Errorf("%s: stopped after %d errors", t.file, maxErrors))
				break
			}
		}
	}
	if len(errs) > 0 {
		return errors.Join(errs...)
	}
	if rows == 0 {
		return &HeaderError{File: t.file, Line: t.headerLine, Reason: "no " + what + " after the header"}
	}
	return nil
}

// next reads the next row, skipping rows whose fields are all blank. It
// returns io.EOF at the end.
func (t *table) next() error {
	for {
		row, err := t.r.Read()
		if err != nil {
			if errors.Is(err, io.EOF) {
				return io.EOF
			}
			return t.csvError(err)
		}
		t.line, _ = t.fieldPos(0)
		if err := t.checkFields(row); err != nil {
			return err
		}
		blank := true
		for _, f := range row {
			if strings.TrimSpace(f) != "" {
				blank = false
				break
			}
		}
		if blank {
			continue
		}
		t.row = row
		if t.mark.mark == 0 && t.numCols != nil {
			if m, i := markIn(row, t.numCols); m != 0 {
				line, _ := t.fieldPos(i)
				t.mark = decimalMark{mark: m, line: line}
			}
		}
		if len(row) != len(t.header) {
			return &FieldError{File: t.file, Line: t.line, Want: fmt.Sprintf("%d fields as in the header, got %d", len(t.header), len(row))}
		}
		return nil
	}
}

// checkFields refuses a row with a field longer than maxField. A row
// split by plainRows is looked at only when its line is longer.
func (t *table) checkFields(row []string) error {
	if p, ok := t.r.(*plainRows); ok && p.lastLen <= t.maxField {
		return nil
	}
	for i, f := range row {
		if len(f) > t.maxField {
			line, _ := t.fieldPos(i)
			return &LimitError{File: t.file, Line: line, What: fmt.Sprintf("field %d (%s bytes)", i+1, groupDigits(len(f))), Max: t.maxField, Unit: "bytes", Key: LimitFieldKey}
		}
	}
	return nil
}

// stopsFile reports whether err is the rowLimiter's (a *LimitError or a
// *LineEndError), which names the file and the line already.
func stopsFile(err error) bool {
	var le *LimitError
	var ee *LineEndError
	return errors.As(err, &le) || errors.As(err, &ee)
}

// get returns the trimmed value of a column in the current row ("" when the
// file has no such column).
func (t *table) get(name string) string {
	i, ok := t.col[name]
	if !ok {
		return ""
	}
	return strings.TrimSpace(t.row[i])
}

// number parses a finite decimal number in column name and checks it lies
// in [lo, hi]; want says what was expected. A blank is a bad value.
func (t *table) number(name, want string, lo, hi float64) (float64, error) {
	s := t.get(name)
	v, err := units.ParseFloatMark(s, t.markOf())
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v < lo || v > hi {
		return 0, t.fieldError(name, want+t.markText(s), err)
	}
	return v, nil
}

// optionalNumber is number for a column that may be absent or blank; the
// bool says whether a value was given.
func (t *table) optionalNumber(name, want string, lo, hi float64) (float64, bool, error) {
	if t.get(name) == "" {
		return 0, false, nil
	}
	v, err := t.number(name, want, lo, hi)
	return v, err == nil, err
}

// fieldError builds the error for a bad value of column name in the
// current row.
func (t *table) fieldError(name, want string, cause error) *FieldError {
	i := t.col[name]
	line, _ := t.fieldPos(i)
	return &FieldError{File: t.file, Line: line, Column: i + 1, Field: name, Value: t.row[i], Want: want, Err: cause}
}

// raw is the current row as written, re-joined with the file's delimiter.
func (t *table) raw() string { return JoinRow(t.row, t.delim) }

// JoinRow writes fields as one CSV row delimited by d (a comma where d is
// DelimiterAuto), without its line end: a row as written, for a rejects
// file.
func JoinRow(fields []string, d Delimiter) string { return input.JoinRow(fields, byte(d)) }

// csvError is a reading error as the file's: encoding/csv's with the
// file's line (the line where the row began, for a quoted field never
// closed: where the quote opened, not the end of the file), and the
// rowLimiter's as they are.
func (t *table) csvError(err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		if errors.Is(pe.Err, csv.ErrQuote) && pe.StartLine != pe.Line {
			start := pe.StartLine + t.lineOffset
			return &FieldError{File: t.file, Line: start, Want: fmt.Sprintf("well-formed CSV: a quoted field opened in the row that begins on line %d is never closed, or text follows its closing quote (read on to line %d, column %d: %v)", start, pe.Line+t.lineOffset, pe.Column, pe.Err), Err: err}
		}
		return &FieldError{File: t.file, Line: pe.Line + t.lineOffset, Column: pe.Column, Want: "well-formed CSV: " + pe.Err.Error(), Err: err}
	}
	if stopsFile(err) {
		return err
	}
	return fmt.Errorf("%s: %w", t.file, err)
}
