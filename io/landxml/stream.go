package landxml

import "strings"

// csvStream is the CSV text a reader writes, served through Read: filled
// about 4 KB at a time, each row on the line its element starts on.
type csvStream struct {
	buf  []byte
	off  int   // read position in buf
	err  error // what ends the stream, once buf is read
	line int   // lines written
	rows int
	fill func(size int) error
}

// Read reads the CSV stream.
func (c *csvStream) Read(p []byte) (int, error) {
	for c.off == len(c.buf) {
		if c.err != nil {
			return 0, c.err
		}
		c.buf, c.off = c.buf[:0], 0
		c.err = c.fill(4 << 10)
	}
	n := copy(p, c.buf[c.off:])
	c.off += n
	return n, nil
}

// Rows is the number of rows written so far, besides the header.
func (c *csvStream) Rows() int { return c.rows }

// startRow pads the stream so that the next row is on line, or on the
// next free line if a row already took that one (several elements on one
// line), and returns the row's line.
func (c *csvStream) startRow(line int) int {
	next := c.line + 1
	if line > next {
		c.buf = append(c.buf, strings.Repeat("\n", line-next)...)
		next = line
	}
	c.line = next
	c.rows++
	return next
}
