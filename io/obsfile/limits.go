package obsfile

import (
	"bytes"
	"errors"
	"fmt"
	"io"

	"github.com/geored/geored/reduce/input"
)

// Limits bound what the readers take from any one file, so that a broken
// or hostile file (no line breaks, /dev/zero, a header of millions of
// columns, an unclosed quote) ends with an error naming the file and the
// line, in bounded memory, rather than exhausting it. A zero field takes
// its default (DefaultLimits); the defaults are far beyond any real
// survey file, whose rows are a few hundred bytes and whose headers
// have a few dozen columns.
type Limits struct {
	// MaxLineBytes bounds a row: a line, or the lines of a row whose
	// quoted field holds line breaks, with its line end.
	MaxLineBytes int
	// MaxFieldBytes bounds one field of a row.
	MaxFieldBytes int
	// MaxColumns bounds the header's columns.
	MaxColumns int
	// MaxPoints bounds the rows of a points file.
	MaxPoints int
}

// DefaultLimits are the limits where a job sets none: a row of 1 MiB,
// a field of 64 KiB, 1,000 columns and 1,000,000 points.
var DefaultLimits = Limits{MaxLineBytes: 1 << 20, MaxFieldBytes: 64 << 10, MaxColumns: 1000, MaxPoints: 1_000_000}

// OrDefault is l with each zero field set to its default.
func (l Limits) OrDefault() Limits {
	d := DefaultLimits
	if l.MaxLineBytes > 0 {
		d.MaxLineBytes = l.MaxLineBytes
	}
	if l.MaxFieldBytes > 0 {
		d.MaxFieldBytes = l.MaxFieldBytes
	}
	if l.MaxColumns > 0 {
		d.MaxColumns = l.MaxColumns
	}
	if l.MaxPoints > 0 {
		d.MaxPoints = l.MaxPoints
	}
	return d
}

// The limits' names: the key in the job file's [limits] and the flag.
const (
	LimitLineKey   = "max_line_bytes"
	LimitFieldKey  = "max_field_bytes"
	LimitColumnKey = "max_columns"
	LimitPointsKey = "max_points"
)

// A LimitError is a file that goes past one of its Limits. It stops the
// file: what follows cannot be trusted to be rows.
type LimitError struct {
	File string
	Line int    // where the row, field or header starts; for points, the row past the limit
	What string // what goes past the limit, in words
	Max  int
	Unit string // of Max: bytes, columns, points
	Key  string // the limit's key (LimitLineKey, …)
}

func (e *LimitError) Error() string {
	return fmt.Sprintf("%s:%d: %s: over the limit %s = %s %s (set in the job's [limits], or -%s); no real file comes near it: is this the right file?",
		e.File, e.Line, e.What, e.Key, groupDigits(e.Max), e.Unit, flagName(e.Key))
}

// flagName is a limit's flag: its key with dashes.
func flagName(key string) string {
	b := []byte(key)
	for i, c := range b {
		if c == '_' {
			b[i] = '-'
		}
	}
	return string(b)
}

// Clip is s as a message may show it (input.Clip): whole up to 200 bytes,
// else cut, with its length said.
func Clip(s string) string { return input.Clip(s) }

func groupDigits(n int) string { return input.GroupDigits(n) }

// A rowLimiter passes a file's bytes through and counts its rows as the
// readers will see them — a row ends at a line break outside quotes,
// quotes pair up, a comment line's (#) do not count — so that a row
// longer than max ends the reading with a *LimitError at the line where
// the row began, before any reader above has buffered it (a quoted field
// never closed is such a row, unless the file ends first: encoding/csv
// then names the row, table.csvError). A carriage return not followed
// by a line feed is an error naming its line: the file mixes line ends
// (a file whose lines all end in CR is read through crLines instead).
//
// Under an ObsChunker, which follows the rows itself (and bounds those
// whose quoted fields hold line breaks), it is switched to lines only
// (fast) once the header is read: it then looks at each read, not each
// line — a count of line feeds, the first and the last, and the carriage
// returns, each one memchr-like pass over 64 KiB — so that the per-row
// path pays nothing measurable for it.
type rowLimiter struct {
	r    io.Reader
	file string
	max  int
	fast bool // lines only (scanFast), not rows

	line      int  // the line being read (1-based)
	lineLen   int  // bytes of it so far
	rowLine   int  // the line where the row being read began
	rowBytes  int  // bytes of the row so far
	inQuote   bool // inside a quoted field
	lineStart bool // the next byte starts a line
	comment   bool // the line being read is a comment
	pendingCR bool // the last byte read was a carriage return
	err       error
}

func newRowLimiter(r io.Reader, file string, max int) *rowLimiter {
	return &rowLimiter{r: r, file: file, max: max, line: 1, rowLine: 1, lineStart: true}
}

func (l *rowLimiter) Read(p []byte) (int, error) {
	if l.err != nil {
		return 0, l.err
	}
	if l.fast && len(p) > l.max {
		p = p[:l.max] // so that no line lies wholly inside one read
	}
	n, err := l.r.Read(p)
	scan := l.scan
	if l.fast {
		scan = l.scanFast
	}
	if scanErr := scan(p[:n]); scanErr != nil {
		l.err = scanErr
		// What came before the bad byte is the file's: the reader above
		// sees it, then the error.
		return n, nil
	}
	if errors.Is(err, io.EOF) && l.pendingCR {
		err = l.loneCR()
	}
	if err != nil {
		l.err = err
	}
	return n, err
}

// scanFast follows b's lines, not its rows: b is at most max bytes, so
// only a line that runs into it from before or on past it can be too
// long.
func (l *rowLimiter) scanFast(b []byte) error {
	if len(b) == 0 {
		return nil
	}
	if l.pendingCR {
		if b[0] != '\n' {
			return l.loneCR()
		}
		l.pendingCR = false
	}
	for off := 0; ; {
		i := bytes.IndexByte(b[off:], '\r')
		if i < 0 {
			break
		}
		if j := off + i; j == len(b)-1 {
			l.pendingCR = true
			break
		} else if b[j+1] != '\n' {
			l.line += bytes.Count(b[:j], newline)
			return l.loneCR()
		}
		off += i + 2
	}
	first := bytes.IndexByte(b, '\n')
	if first < 0 {
		first = len(b)
	}
	if l.lineLen+first > l.max {
		l.rowLine, l.inQuote = l.line, false // lines only
		return l.tooLong()
	}
	if first == len(b) {
		l.lineLen += len(b)
		return nil
	}
	l.line += bytes.Count(b, newline)
	l.lineLen = len(b) - 1 - bytes.LastIndexByte(b, '\n')
	return nil
}

func (l *rowLimiter) tooLong() error {
	if l.rowLine != l.line || l.inQuote {
		return rowTooLong(l.file, l.rowLine, l.line, l.max)
	}
	return &LimitError{File: l.file, Line: l.line, What: "this line", Max: l.max, Unit: "bytes", Key: LimitLineKey}
}

// rowTooLong is the error for a row from line from to line to, still in
// a quoted field, longer than max bytes.
func rowTooLong(file string, from, to, max int) *LimitError {
	return &LimitError{File: file, Line: from, What: fmt.Sprintf("the row from line %d to line %d (a quoted field not closed?)", from, to), Max: max, Unit: "bytes", Key: LimitLineKey}
}

func (l *rowLimiter) loneCR() error {
	return &LineEndError{File: l.file, Line: l.line}
}

// A LineEndError is a carriage return (CR) alone in a file whose lines
// end in LF or CRLF: the file mixes line ends, and its rows cannot be
// told apart for sure from there on. It stops the file.
type LineEndError struct {
	File string
	Line int
}

func (e *LineEndError) Error() string {
	return fmt.Sprintf("%s:%d: a carriage return (CR) not followed by a line feed (LF): want the line ends of the file's first line (LF or CRLF) throughout; the file mixes line ends", e.File, e.Line)
}

// scan follows b's rows; an error means the file must stop.
func (l *rowLimiter) scan(b []byte) error {
	if l.pendingCR && len(b) > 0 {
		if b[0] != '\n' {
			return l.loneCR()
		}
		l.pendingCR = false
	}
	for len(b) > 0 {
		seg, rest, ended := b, []byte(nil), false
		if i := bytes.IndexByte(b, '\n'); i >= 0 {
			seg, rest, ended = b[:i+1], b[i+1:], true
		}
		if l.lineStart {
			first := seg
			if l.line == 1 {
				first = bytes.TrimPrefix(seg, []byte(bom))
			}
			l.comment = !l.inQuote && len(first) > 0 && first[0] == '#'
			l.lineStart = false
		}
		if !l.comment && bytes.Count(seg, quote)%2 == 1 {
			l.inQuote = !l.inQuote
		}
		if i := bytes.IndexByte(seg, '\r'); i >= 0 {
			switch {
			case ended && i == len(seg)-2: // CRLF
			case !ended && i == len(seg)-1: // the LF may come in the next read
				l.pendingCR = true
			default:
				return l.loneCR()
			}
		}
		l.rowBytes += len(seg)
		l.lineLen += len(seg)
		if l.rowBytes > l.max {
			return l.tooLong()
		}
		if ended {
			l.line++
			l.lineStart, l.lineLen = true, 0
			if !l.inQuote {
				l.rowLine, l.rowBytes = l.line, 0
			}
		}
		b = rest
	}
	return nil
}

var quote, newline = []byte{'"'}, []byte{'\n'}

// crLines reads a file whose lines end in a carriage return alone (as
// classic Mac OS wrote them, and Excel for Mac's "CSV (Macintosh)" still
// does) as if they ended in line feeds: each CR becomes LF, and an LF
// right after a CR is dropped, so a CRLF among them is one line end too.
type crLines struct {
	r      io.Reader
	lastCR bool
}

func (c *crLines) Read(p []byte) (int, error) {
	for {
		n, err := c.r.Read(p)
		w := 0
		for _, b := range p[:n] {
			switch {
			case b == '\r':
				p[w] = '\n'
				w++
				c.lastCR = true
				continue
			case b == '\n' && c.lastCR:
			default:
				p[w] = b
				w++
			}
			c.lastCR = false
		}
		if w > 0 || err != nil {
			return w, err
		}
	}
}

// crEnded reports whether head, a file's first bytes, ends its first line
// with a carriage return alone.
//
// A CR that is head's last byte counts as one alone: crLines drops the
// LF if one follows.
func crEnded(head []byte) bool {
	i := bytes.IndexByte(head, '\r')
	if i < 0 {
		return false
	}
	if j := bytes.IndexByte(head, '\n'); j >= 0 && j < i {
		return false
	}
	return i == len(head)-1 || head[i+1] != '\n'
}

// limitedInput is what the readers read of a file: its lines through a
// rowLimiter, and through crLines first when its lines end in a carriage
// return alone. It peeks at the first 64 KiB to tell.
func limitedInput(r io.Reader, file string, lim Limits) *rowLimiter {
	head := make([]byte, 64<<10)
	n, err := io.ReadFull(r, head)
	head = head[:n]
	var in io.Reader
	if err != nil { // the whole file is in head
		in = &errAfter{b: head, err: err}
	} else {
		in = io.MultiReader(bytes.NewReader(head), r)
	}
	if crEnded(head) {
		in = &crLines{r: in}
	}
	return newRowLimiter(in, file, lim.MaxLineBytes)
}

// errAfter reads b, then gives err (io.EOF for io.ErrUnexpectedEOF,
// which only says the file was shorter than the peek).
type errAfter struct {
	b   []byte
	err error
}

func (e *errAfter) Read(p []byte) (int, error) {
	if len(e.b) > 0 {
		n := copy(p, e.b)
		e.b = e.b[n:]
		return n, nil
	}
	if errors.Is(e.err, io.ErrUnexpectedEOF) {
		return 0, io.EOF
	}
	return 0, e.err
}
