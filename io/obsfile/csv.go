package obsfile

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"
)

// table reads a CSV file with a header row, mapping column names to field
// positions.
type table struct {
	file   string
	r      *csv.Reader
	col    map[string]int // header name → field index
	header []string
	row    []string
	line   int // line of the current row
}

const bom = "\uFEFF"

// openTable reads the header. known lists the columns the caller
// understands; any other column is one warning.
func openTable(r io.Reader, file string, known []string) (*table, []Warning, error) {
	br := bufio.NewReaderSize(r, 64<<10)
	if b, err := br.Peek(len(bom)); err == nil && string(b) == bom {
		br.Discard(len(bom))
	}
	cr := csv.NewReader(br)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	t := &table{file: file, r: cr, col: map[string]int{}}
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, nil, &HeaderError{File: file, Line: 1, Reason: "the file is empty: want a header row"}
	}
	if err != nil {
		return nil, nil, t.csvError(err)
	}
	t.line, _ = cr.FieldPos(0)
	t.header = slices.Clone(header)
	var warnings []Warning
	for i, h := range t.header {
		name := strings.ToLower(strings.TrimSpace(h))
		t.header[i] = name
		if name == "" {
			return nil, nil, &HeaderError{File: file, Line: t.line, Reason: fmt.Sprintf("column %d has no name", i+1)}
		}
		if j, dup := t.col[name]; dup {
			return nil, nil, &HeaderError{File: file, Line: t.line, Reason: fmt.Sprintf("column %q appears twice (columns %d and %d)", name, j+1, i+1)}
		}
		t.col[name] = i
		if !slices.Contains(known, name) {
			warnings = append(warnings, Warning{File: file, Line: t.line, Text: fmt.Sprintf("unknown column %q (column %d) is ignored; known columns: %s", name, i+1, strings.Join(known, ", "))})
		}
	}
	return t, warnings, nil
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
		return &HeaderError{File: t.file, Line: t.line, Reason: fmt.Sprintf("missing required column(s) %s; found %s", strings.Join(missing, ", "), strings.Join(t.header, ", "))}
	}
	return nil
}

func (t *table) has(name string) bool { _, ok := t.col[name]; return ok }

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
		t.line, _ = t.r.FieldPos(0)
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
		if len(row) != len(t.header) {
			return &FieldError{File: t.file, Line: t.line, Want: fmt.Sprintf("%d fields as in the header, got %d", len(t.header), len(row))}
		}
		return nil
	}
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

// fieldError builds the error for a bad value of column name in the
// current row.
func (t *table) fieldError(name, want string, cause error) *FieldError {
	i := t.col[name]
	line, _ := t.r.FieldPos(i)
	return &FieldError{File: t.file, Line: line, Column: i + 1, Field: name, Value: t.row[i], Want: want, Err: cause}
}

// raw is the current row as written, re-joined with commas.
func (t *table) raw() string { return joinCSV(t.row) }

// joinCSV writes fields as one CSV row without its line end.
func joinCSV(fields []string) string {
	var b strings.Builder
	w := csv.NewWriter(&b)
	w.Write(fields)
	w.Flush()
	return strings.TrimRight(b.String(), "\n")
}

func (t *table) csvError(err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &FieldError{File: t.file, Line: pe.Line, Column: pe.Column, Want: "well-formed CSV: " + pe.Err.Error(), Err: err}
	}
	return fmt.Errorf("%s: %w", t.file, err)
}
