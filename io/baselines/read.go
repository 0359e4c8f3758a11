package baselines

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"

	"github.com/gocarina/gocsv"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/audit"
)

// row is one CSV row as gocsv maps it: every field as written, checked
// and converted by parse.
type row struct {
	ID         string `csv:"id"`
	From       string `csv:"from"`
	To         string `csv:"to"`
	Kind       string `csv:"kind"`
	Distance   string `csv:"distance"`
	Sigma      string `csv:"sigma"`
	DX         string `csv:"dx"`
	DY         string `csv:"dy"`
	DZ         string `csv:"dz"`
	SigmaX     string `csv:"sigma_x"`
	SigmaY     string `csv:"sigma_y"`
	SigmaZ     string `csv:"sigma_z"`
	CovXX      string `csv:"cov_xx"`
	CovXY      string `csv:"cov_xy"`
	CovXZ      string `csv:"cov_xz"`
	CovYY      string `csv:"cov_yy"`
	CovYZ      string `csv:"cov_yz"`
	CovZZ      string `csv:"cov_zz"`
	AppliedPPM string `csv:"applied_ppm"`
	PrismMM    string `csv:"applied_prism_constant_mm"`
}

// Columns are the file's known columns.
var Columns = []string{"id", "from", "to", "kind", "distance", "sigma", "dx", "dy", "dz",
	"sigma_x", "sigma_y", "sigma_z", "cov_xx", "cov_xy", "cov_xz", "cov_yy", "cov_yz", "cov_zz",
	"applied_ppm", "applied_prism_constant_mm"}

// A Reject is a row that could not be read, and why.
type Reject struct {
	File   string
	Line   int
	Raw    string // the row as read, its fields joined by the file's delimiter
	Reason string // the error, with file, line, column, value and what was expected
}

// Result is what a baselines file held.
type Result struct {
	Baselines []audit.Baseline
	Rejects   []Reject
	Warnings  []obsfile.Warning
	Read      int // data rows read: len(Baselines) + len(Rejects)
}

// Limits of a delivered value, metres: a baseline of more than 1000 km or
// a σ of more than 10 m is a slip of the unit or the column.
const (
	maxLength = 1e6
	maxSigma  = 10
)

// Read reads a baselines file; lengths are in unit u (the job's length
// unit). A header that cannot be used is an error (*obsfile.HeaderError);
// a bad row is a Reject and reading goes on. Its delimiter is found from
// its header (obsfile.FindDelimiter).
func Read(r io.Reader, file string, u units.LengthUnit) (*Result, error) {
	return ReadDelimited(r, file, u, obsfile.DelimiterAuto)
}

// numeric are the columns that hold numbers.
var numeric = Columns[4:]

// ReadDelimited is Read of a file delimited by d (obsfile.DelimiterAuto:
// found from its header). In a semicolon- or tab-delimited file a number
// may write its decimal mark as a comma, as in the observation files: one
// mark a file, the first '.' or ',' in a numeric column in file order,
// and no separator of thousands.
func ReadDelimited(r io.Reader, file string, u units.LengthUnit, d obsfile.Delimiter) (*Result, error) {
	br := bufio.NewReaderSize(r, 64<<10)
	why := obsfile.DelimiterBySetting
	if d == obsfile.DelimiterAuto {
		head, _ := br.Peek(64 << 10)
		var err error
		if d, why, err = obsfile.FindDelimiter(bytes.TrimPrefix(head, []byte("\uFEFF")), Columns); err != nil {
			return nil, &obsfile.HeaderError{File: file, Line: 1, Reason: err.Error() + "; " + obsfile.DelimiterAdvice}
		}
	}
	cr := csv.NewReader(br)
	cr.Comma = rune(d)
	cr.Comment = '#'
	cr.FieldsPerRecord = 0 // every row as many fields as the header
	// The parser trims every value; encoding/csv's trimming would take
	// a tab file's empty fields with the blanks.
	cr.TrimLeadingSpace = d != obsfile.Tab
	um, err := gocsv.NewUnmarshaller(cr, row{})
	if errors.Is(err, io.EOF) {
		return nil, &obsfile.HeaderError{File: file, Line: 1, Reason: "the file is empty: want a header row"}
	}
	if err != nil {
		return nil, &obsfile.HeaderError{File: file, Line: 1, Reason: err.Error()}
	}
	headerLine, _ := cr.FieldPos(0)
	header := make([]string, len(um.Headers))
	for i, h := range um.Headers {
		header[i] = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\uFEFF")))
	}
	if err := um.RenormalizeHeaders(func([]string) []string { return header }); err != nil {
		return nil, &obsfile.HeaderError{File: file, Line: headerLine, Reason: err.Error()}
	}
	res := &Result{}
	col := map[string]int{}
	for i, h := range header {
		if j, dup := col[h]; dup {
			return nil, &obsfile.HeaderError{File: file, Line: headerLine, Reason: fmt.Sprintf("column %q appears twice (columns %d and %d)", h, j+1, i+1)}
		}
		col[h] = i
		if !slices.Contains(Columns, h) {
			res.Warnings = append(res.Warnings, obsfile.Warning{File: file, Line: headerLine,
				Text: fmt.Sprintf("unknown column %q (column %d) is ignored; known columns: %s", h, i+1, strings.Join(Columns, ", "))})
		}
	}
	var missing []string
	for _, c := range []string{"from", "to", "kind"} {
		if _, ok := col[c]; !ok {
			missing = append(missing, c)
		}
	}
	if len(missing) > 0 {
		return nil, &obsfile.HeaderError{File: file, Line: headerLine, Reason: fmt.Sprintf("missing required column(s) %s; found %s %s", strings.Join(missing, ", "), strings.Join(header, ", "), obsfile.DelimiterNote(d, why))}
	}
	mark := units.DecimalPoint // the file's decimal mark; 0 until found in a ';' or tab file
	markLine := 0
	var numCols []string // the numeric columns in the header's order
	if d.Decimals() {
		mark = 0
		for _, h := range header {
			if slices.Contains(numeric, h) {
				numCols = append(numCols, h)
			}
		}
	}
	for {
		v, err := um.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			res.Read++
			res.Rejects = append(res.Rejects, Reject{File: file, Line: pe.StartLine, Reason: fmt.Sprintf("%s:%d:%d: %v", file, pe.Line, pe.Column, pe.Err)})
			if pe.Err != csv.ErrFieldCount {
				// The reader cannot find the next row after a broken
				// quote: what follows is unread, which the error says.
				return res, fmt.Errorf("%s:%d: the rows after a broken quote cannot be read: %w", file, pe.Line, pe.Err)
			}
			continue
		}
		if err != nil {
			return res, fmt.Errorf("%s: %w", file, err)
		}
		res.Read++
		p := parser{file: file, col: col, cr: cr, unit: u, delim: d}
		p.line, _ = cr.FieldPos(0)
		rw := v.(row)
		if mark == 0 {
			for _, c := range numCols {
				if i := strings.IndexAny(rw.get(c), ".,"); i >= 0 {
					mark, markLine = units.DecimalMark(rw.get(c)[i]), p.line
					break
				}
			}
		}
		p.mark, p.markLine = mark, markLine
		b, err := p.parse(rw)
		b.Raw = rw.raw(header, d)
		if err != nil {
			res.Rejects = append(res.Rejects, Reject{File: file, Line: p.line, Raw: b.Raw, Reason: err.Error()})
			continue
		}
		res.Baselines = append(res.Baselines, b)
	}
	return res, nil
}
