package obsfile

import (
	"bufio"
	"bytes"
	"errors"
	"io"
	"strings"
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
}

// maxChunkFactor bounds a chunk at this many times the size asked for,
// in case a broken quote makes the rest of the file look like one field:
// the chunk's reader then reports the broken quote.
const maxChunkFactor = 64

// NewObsChunker reads the header as NewObsReader does, with its warnings
// and errors.
func NewObsChunker(r io.Reader, file string, opt ObsOptions) (*ObsChunker, []Warning, error) {
	o, warnings, err := NewObsReader(r, file, opt)
	if err != nil {
		return nil, warnings, err
	}
	// The header has been read through its last line break: the next
	// line follows it, and any line breaks quoted inside its names.
	line := o.t.headerLine + 1
	for _, h := range o.t.header {
		line += strings.Count(h, "\n")
	}
	return &ObsChunker{head: o, line: line}, warnings, nil
}

// File is the name the chunker reports in errors.
func (c *ObsChunker) File() string { return c.head.t.file }

// Next reads the next rows, about size bytes of them and always whole
// rows (a line break inside a quoted field does not end a row), into buf,
// which it reuses; firstLine is the file's line number of the chunk's
// first line. At the end it returns io.EOF and no data.
func (c *ObsChunker) Next(buf []byte, size int) (data []byte, firstLine int, err error) {
	data, firstLine = buf[:0], c.line
	if c.eof {
		return data, firstLine, io.EOF
	}
	br := c.head.t.br
	inQuote := false
	for {
		line, err := br.ReadSlice('\n')
		data = append(data, line...)
		if bytes.Count(line, []byte{'"'})%2 == 1 {
			inQuote = !inQuote
		}
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
			continue // a very long line: read on
		default:
			return data, firstLine, c.head.t.csvError(err)
		}
		if len(data) >= size && (!inQuote || len(data) >= maxChunkFactor*size) {
			return data, firstLine, nil
		}
	}
}

// Reader parses one chunk from Next, starting at the file's line
// firstLine; it may run on any goroutine, beside other chunks' readers.
func (c *ObsChunker) Reader(data []byte, firstLine int) *ObsReader {
	t := *c.head.t
	t.br, t.r, t.lineOffset = nil, newCSVReader(bytes.NewReader(data)), firstLine-1
	t.row, t.line = nil, 0
	o := *c.head
	o.t = &t
	return &o
}
