package obsfile

import (
	"bufio"
	"bytes"
	"errors"
	"io"
)

// CountRows counts the data rows of an observation file without parsing
// them: the rows after the header, as the readers see them — a line break
// inside a quoted field does not end a row, comment lines (#) and empty
// or blank rows (nothing but commas and spaces) are not rows. It reads at
// the speed of the disk and holds one buffer. A file the readers would
// refuse (broken quoting) is counted as far as it goes: the count serves
// to size a job-wide test before the run, which reads and checks every
// row.
func CountRows(r io.Reader) (int, error) {
	br := bufio.NewReaderSize(r, 64<<10)
	if b, err := br.Peek(len(bom)); err == nil && string(b) == bom {
		br.Discard(len(bom))
	}
	records := 0
	inQuote := false // inside a quoted field
	lineStart := true
	comment := false // the line being read is a comment
	blank := true    // the row so far holds nothing but separators
	for {
		line, err := br.ReadSlice('\n')
		if lineStart {
			comment = !inQuote && len(line) > 0 && line[0] == '#'
		}
		if !comment {
			if bytes.Count(line, []byte{'"'})%2 == 1 {
				inQuote = !inQuote
			}
			if blank && len(bytes.Trim(line, ", \t\r\n")) > 0 {
				blank = false
			}
		}
		lineStart = err == nil
		ended := (err == nil && !inQuote) || (errors.Is(err, io.EOF) && len(line) > 0)
		if ended && !comment && !blank {
			records++
		}
		if ended {
			blank = true
		}
		switch {
		case err == nil:
		case errors.Is(err, io.EOF):
			return max(records-1, 0), nil // less the header
		case errors.Is(err, bufio.ErrBufferFull):
			lineStart = false
		default:
			return 0, err
		}
	}
}
