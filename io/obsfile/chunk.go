package obsfile

import (
	"bufio"
	"bytes"
	"errors"
	"io"
	"strings"
	"sync/atomic"
	"unsafe"

	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/input"
)

// An ObsChunker splits an observation file, after its header, into chunks
// of whole rows, so that rows can be parsed in parallel: each chunk has
// its own ObsReader (Reader), which reports the file's line numbers. It
// reads the file once, a line at a time, and holds only the chunk being
// filled.
type ObsChunker struct {
	head *ObsReader // the header: file, columns and options
	line int        // the file's line number of the next byte
	eof  bool
	// mark is the file's decimal mark where the header's look at the
	// first rows found none (a semicolon- or tab-delimited file whose
	// first 64 KiB hold no decimal mark): Next looks on, and the first
	// it finds, in file order, is every later chunk's.
	mark atomic.Pointer[decimalMark]
}

// maxChunk bounds a chunk, in case a broken quote makes the rest of the
// file look like one field: the chunk's reader then reports the broken
// quote. The rowLimiter under the chunker stops a row long before, at
// Limits.MaxLineBytes, unless that is set higher.
const maxChunk = 64 << 20

// NewObsChunker reads the header as NewObsReader does, with its warnings
// and errors.
func NewObsChunker(r io.Reader, file string, opt ObsOptions) (*ObsChunker, []Warning, error) {
	o, warnings, err := NewObsReader(r, file, opt)
	if err != nil {
		return nil, warnings, err
	}
	// The header has been read through its last line break. The rows
	// are followed here: the limiter under them need follow only lines.
	o.t.limiter.fast = true
	return &ObsChunker{head: o, line: o.t.afterHeader}, warnings, nil
}

// Next reads the next rows, about size bytes of them and always whole
// rows (a line break inside a quoted field does not end a row), into buf,
// which it reuses; firstLine is the file's line number of the chunk's
// first line. At the end it returns io.EOF and no data.
func (c *ObsChunker) Next(buf []byte, size int) (data []byte, firstLine int, err error) {
	data, firstLine = buf[:0], c.line
	if c.eof {
		return data, firstLine, io.EOF
	}
	br, max := c.head.t.br, c.head.t.limiter.max
	if h := c.head.t; h.mark.mark == 0 && len(h.numCols) > 0 && c.mark.Load() == nil {
		// The chunk starts a row: its rows, as far as peekBytes go.
		peek, _ := br.Peek(peekBytes)
		if m := findMark(newCSVReader(bytes.NewReader(peek), h.delim), h.numCols, c.line-1); m.mark != 0 {
			c.mark.Store(&m)
		}
	}
	inQuote := false // inside a quoted field
	lineStart := true
	comment := false // the line being read is a comment
	rowStart, rowLine := 0, c.line
	for {
		line, err := br.ReadSlice('\n')
		data = append(data, line...)
		// A row ends at a line break outside quotes; quotes pair up
		// (a doubled one inside a quoted field counts twice), and a
		// comment line's quotes do not count.
		if lineStart {
			comment = !inQuote && len(line) > 0 && line[0] == '#'
			if !inQuote {
				rowStart, rowLine = len(data)-len(line), c.line
			}
		}
		if !comment && bytes.Count(line, []byte{'"'})%2 == 1 {
			inQuote = !inQuote
		}
		if inQuote && len(data)-rowStart > max {
			// One line is bounded by the limiter; rows of many, here.
			return data, firstLine, rowTooLong(c.head.t.file, rowLine, c.line, max)
		}
		lineStart = err == nil
		switch {
		case err == nil:
			c.line++
		case errors.Is(err, io.EOF):
			c.eof = true
			if len(data) == 0 {
				return data, firstLine, io.EOF
			}
			return data, firstLine, nil
		case errors.Is(err, bufio.ErrBufferFull):
			continue // a long line: read on (the rowLimiter bounds it)
		default:
			return data, firstLine, c.head.t.csvError(err)
		}
		if len(data) >= size && (!inQuote || len(data) >= maxChunk) {
			return data, firstLine, nil
		}
	}
}

// Reader parses one chunk from Next, starting at the file's line
// firstLine; it may run on any goroutine, beside other chunks' readers.
// A chunk without quotes, the common case, is split by plainRows, whose
// fields share data's memory, not copied: the observations' strings
// (Observation.From, To, Fields, …) are good only while data is left as
// it is. One with quotes is read by encoding/csv, which copies.
func (c *ObsChunker) Reader(data []byte, firstLine int) *ObsReader {
	t := *c.head.t
	if bytes.IndexByte(data, '"') < 0 {
		t.r = &plainRows{s: unsafe.String(unsafe.SliceData(data), len(data)), comma: byte(t.delim)}
	} else {
		t.r = newCSVReader(bytes.NewReader(data), t.delim)
	}
	if m := c.mark.Load(); t.mark.mark == 0 && m != nil {
		t.mark = *m
	}
	t.br, t.lineOffset = nil, firstLine-1
	t.row, t.line = nil, 0
	o := *c.head
	o.t = &t
	return &o
}

// Dialect is the file's field delimiter and its decimal mark, as far as
// the rows read so far show one: 0 where a semicolon- or tab-delimited
// file has shown none yet (a comma-delimited file's is the point).
func (c *ObsChunker) Dialect() (Delimiter, units.DecimalMark) {
	t := c.head.t
	m := t.mark.mark
	if p := c.mark.Load(); m == 0 && p != nil {
		m = p.mark
	}
	return t.delim, m
}

// Rows is Reader for the pipeline (reduce/job.ChunkSource).
func (c *ObsChunker) Rows(data []byte, firstLine int) input.RowReader {
	return c.Reader(data, firstLine)
}

// plainRows splits text without quotes into rows at line breaks and into
// fields at its delimiter, as encoding/csv does such text (newCSVReader): a
// trailing carriage return is dropped from each line, and empty lines and
// lines starting with # are skipped. Its fields are parts of one string
// for the whole chunk, so a row allocates nothing. FuzzObsChunker checks
// it against encoding/csv.
type plainRows struct {
	s       string // what is left to read
	line    int    // lines read
	rowLine int    // line of the row last returned
	lastLen int    // length of its line (table.checkFields)
	rec     []string
	comma   byte // the delimiter
}

func (p *plainRows) Read() ([]string, error) {
	for len(p.s) > 0 {
		var ln string
		if i := strings.IndexByte(p.s, '\n'); i >= 0 {
			ln, p.s = p.s[:i], p.s[i+1:]
		} else {
			ln, p.s = p.s, ""
		}
		p.line++
		if n := len(ln); n > 0 && ln[n-1] == '\r' {
			ln = ln[:n-1]
		}
		if ln == "" || ln[0] == '#' {
			continue
		}
		p.rowLine, p.lastLen = p.line, len(ln)
		p.rec = p.rec[:0]
		for {
			i := strings.IndexByte(ln, p.comma)
			if i < 0 {
				p.rec = append(p.rec, ln)
				return p.rec, nil
			}
			p.rec = append(p.rec, ln[:i])
			ln = ln[i+1:]
		}
	}
	return nil, io.EOF
}

// FieldPos is the line and the 1-based byte column of field i of the row
// last returned, as encoding/csv counts them.
func (p *plainRows) FieldPos(field int) (line, column int) {
	column = 1
	for _, f := range p.rec[:field] {
		column += len(f) + 1
	}
	return p.rowLine, column
}
