package obsfile

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
)

// CountRows counts the data rows of an observation file without parsing
// them: the rows after the header, as the readers see them — a line break
// inside a quoted field does not end a row, comment lines (#) and empty
// or blank rows (nothing but delimiters and spaces; the delimiter found
// from the header, FindDelimiter) are not rows. It reads at
// the speed of the disk and holds one buffer; a row past lim (zero
// fields: DefaultLimits) ends it with the readers' *LimitError, and a
// lone carriage return with their error. A file the readers would
// refuse (broken quoting) is counted as far as it goes: the count serves
// to size a job-wide test before the run, which reads and checks every
// row.
func CountRows(r io.Reader, file string, lim Limits) (int, error) {
	lim = lim.OrDefault()
	limiter := limitedInput(r, file, lim)
	limiter.fast = true // lines; the rows are followed here
	br := bufio.NewReaderSize(limiter, 64<<10)
	if b, err := br.Peek(len(bom)); err == nil && string(b) == bom {
		br.Discard(len(bom))
	}
	head, _ := br.Peek(peekBytes)
	delim, _, err := FindDelimiter(head, obsColumns)
	if err != nil {
		delim = Comma // the reader refuses the header; the count is not used
	}
	blanks := string(delim) + " \t\r\n"
	records := 0
	inQuote := false // inside a quoted field
	lineStart := true
	comment := false // the line being read is a comment
	blank := true    // the row so far holds nothing but separators
	lineNo, rowLine, rowBytes := 1, 1, 0
	for {
		line, err := br.ReadSlice('\n')
		if lineStart {
			comment = !inQuote && len(line) > 0 && line[0] == '#'
			if !inQuote {
				rowLine, rowBytes = lineNo, 0
			}
		}
		rowBytes += len(line)
		if !comment {
			if bytes.Count(line, []byte{'"'})%2 == 1 {
				inQuote = !inQuote
			}
			if inQuote && rowBytes > lim.MaxLineBytes {
				return 0, rowTooLong(file, rowLine, lineNo, lim.MaxLineBytes)
			}
			if blank && len(bytes.Trim(line, blanks)) > 0 {
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
			lineNo++
		case errors.Is(err, io.EOF):
			return max(records-1, 0), nil // less the header
		case errors.Is(err, bufio.ErrBufferFull):
			lineStart = false
		default:
			if stopsFile(err) {
				return 0, err // it names the file
			}
			return 0, fmt.Errorf("%s: %w", file, err)
		}
	}
}
