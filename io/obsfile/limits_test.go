package obsfile

import (
	"errors"
	"fmt"
	"io"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// endless repeats its bytes for ever, as /dev/zero does its zeros; reads
// counts the bytes taken, so a test can see how far a reader went.
type endless struct {
	b     []byte
	at    int
	reads int
}

func (e *endless) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = e.b[e.at]
		e.at = (e.at + 1) % len(e.b)
	}
	e.reads += len(p)
	return len(p), nil
}

// prefixed is head, then endless src.
func prefixed(head string, src *endless) io.Reader {
	return io.MultiReader(strings.NewReader(head), src)
}

// drainObs reads every row through an ObsChunker, as a run does, and
// returns the error that ends the file.
func drainObs(t *testing.T, r io.Reader, lim Limits) error {
	t.Helper()
	c, _, err := NewObsChunker(r, "obs.csv", ObsOptions{LengthUnit: metresGon.LengthUnit, AngleUnit: metresGon.AngleUnit, Limits: lim})
	if err != nil {
		return err
	}
	var buf []byte
	for {
		data, first, err := c.Next(buf, 16<<10)
		if errors.Is(err, io.EOF) {
			return nil
		}
		if err != nil {
			return err
		}
		buf = data
		r := c.Reader(data, first)
		for {
			_, err := r.Next()
			if errors.Is(err, io.EOF) {
				break
			}
			var re *RowError
			if err != nil && !errors.As(err, &re) {
				return err
			}
		}
	}
}

const obsHeader = "from,to,slope_distance,zenith_angle\n"

// /dev/zero as observations, as points or as the rows to count, and a
// file that is one endless row: each ends at the first line that goes
// past max_line_bytes, having read little more than it (the issue's
// probe grew to 1.9 GB before the runtime died).
func TestEndlessInputsStop(t *testing.T) {
	lim := Limits{MaxLineBytes: 1 << 20}.OrDefault()
	bound := 4 << 20 // what a reader may take before it stops: the limit and its buffers
	for _, c := range []struct {
		name string
		head string
		src  []byte
		line int
	}{
		{"zeros", "", []byte{0}, 1},
		{"zeros after the header", obsHeader + "A,B,100,99\n", []byte{0}, 3},
		{"one endless row", obsHeader, []byte("A,B,100,99,"), 2},
		{"an unclosed quote", obsHeader + "A,B,100,99\n\"A,B,100,99\n", []byte("A,B,100,99\n"), 3},
	} {
		for _, read := range []struct {
			name string
			fn   func(io.Reader) error
		}{
			{"chunker", func(r io.Reader) error { return drainObs(t, r, lim) }},
			{"points", func(r io.Reader) error {
				_, _, err := ReadPoints(r, "obs.csv", PointOptions{GridUnit: metres.GridUnit, HeightUnit: metres.HeightUnit, Limits: lim})
				return err
			}},
			{"count", func(r io.Reader) error { _, err := CountRows(r, "obs.csv", lim); return err }},
		} {
			src := &endless{b: c.src}
			head := c.head
			if read.name == "points" {
				head = strings.Replace(head, obsHeader, "id,easting,northing\n", 1)
			}
			err := read.fn(prefixed(head, src))
			var le *LimitError
			require.ErrorAs(t, err, &le, "%s, %s", c.name, read.name)
			assert.Equal(t, c.line, le.Line, "%s, %s: %v", c.name, read.name, err)
			assert.Equal(t, LimitLineKey, le.Key, "%s, %s", c.name, read.name)
			assert.Less(t, src.reads, bound, "%s, %s: read on past the limit", c.name, read.name)
			assert.Less(t, len(err.Error()), 400, "%s, %s: the message echoes the row", c.name, read.name)
		}
	}
	err := drainObs(t, prefixed(obsHeader, &endless{b: []byte{'x'}}), lim)
	assert.EqualError(t, err, "obs.csv:2: this line: over the limit max_line_bytes = 1,048,576 bytes (set in the job's [limits], or -max-line-bytes); no real file comes near it: is this the right file?")
}

// A header of 10,000,000 columns stops at max_line_bytes, before
// encoding/csv holds it; one within the line limit but over max_columns
// stops before its names are kept.
func TestWideHeaderRefused(t *testing.T) {
	src := &endless{b: []byte("c,")}
	_, _, err := NewObsReader(io.LimitReader(src, 20_000_000), "wide.csv", metresGon)
	var le *LimitError
	require.ErrorAs(t, err, &le)
	assert.Equal(t, LimitLineKey, le.Key)
	assert.Less(t, src.reads, 4<<20)

	cols := make([]string, 2000)
	for i := range cols {
		cols[i] = fmt.Sprintf("c%d", i)
	}
	_, _, err = NewObsReader(strings.NewReader(obsHeader[:len(obsHeader)-1]+","+strings.Join(cols, ",")+"\n"), "wide.csv", metresGon)
	require.ErrorAs(t, err, &le)
	assert.Equal(t, LimitColumnKey, le.Key)
	assert.EqualError(t, err, "wide.csv:1: the header's 2,004 columns: over the limit max_columns = 1,000 columns (set in the job's [limits], or -max-columns); no real file comes near it: is this the right file?")
}

// Unknown columns past the fifth are one warning with their count, so
// that a header of a million unknown columns is not a million warnings.
func TestUnknownColumnsFolded(t *testing.T) {
	cols := make([]string, 1000)
	for i := range cols {
		cols[i] = fmt.Sprintf("c%d", i)
	}
	in := obsHeader[:len(obsHeader)-1] + "," + strings.Join(cols, ",") + "\n"
	_, warns, err := NewObsReader(strings.NewReader(in), "obs.csv", ObsOptions{LengthUnit: metresGon.LengthUnit, AngleUnit: metresGon.AngleUnit, Limits: Limits{MaxColumns: 2000}})
	require.NoError(t, err)
	require.Len(t, warns, 6)
	assert.Contains(t, warns[0].Text, `unknown column "c0" (column 5)`)
	assert.Equal(t, "obs.csv:1: 995 more unknown columns (columns 10 to 1004) are ignored", warns[5].String())
}

// A field over max_field_bytes stops the file at its line, whether the
// chunk is split by plainRows or, with quotes, by encoding/csv; a long
// line of short fields is not refused for it.
func TestLongFieldRefused(t *testing.T) {
	lim := Limits{MaxFieldBytes: 100}
	long := strings.Repeat("x", 101)
	for _, row := range []string{"A," + long + ",100,99\n", "A,\"" + long + "\",100,99\n"} {
		err := drainObs(t, strings.NewReader(obsHeader+"A,B,100,99\n"+row), lim)
		var le *LimitError
		require.ErrorAs(t, err, &le, row)
		assert.Equal(t, LimitFieldKey, le.Key)
		assert.Equal(t, 3, le.Line)
		assert.Contains(t, err.Error(), "field 2 (101 bytes)")
	}
	short := strings.Repeat("x,", 60)
	_, _, err := NewObsReader(strings.NewReader("from,to,slope_distance,zenith_angle,note\nA,B,100,99,\""+short+"\"\n"), "obs.csv", ObsOptions{LengthUnit: metresGon.LengthUnit, AngleUnit: metresGon.AngleUnit, Limits: lim})
	require.NoError(t, err)
	require.NoError(t, drainObs(t, strings.NewReader(obsHeader+"A,B,100,99,"+strings.Repeat("1,", 100)+"\n"), lim))
}

// A points file of more rows than max_points stops at the first one past.
func TestMaxPoints(t *testing.T) {
	in := "id,easting,northing\nA,1,2\nB,1,2\nC,1,2\n"
	_, _, err := ReadPoints(strings.NewReader(in), "p.csv", PointOptions{GridUnit: metres.GridUnit, HeightUnit: metres.HeightUnit, Limits: Limits{MaxPoints: 2}})
	var le *LimitError
	require.ErrorAs(t, err, &le)
	assert.Equal(t, 4, le.Line)
	assert.Equal(t, LimitPointsKey, le.Key)
	pts, _, err := ReadPoints(strings.NewReader(in), "p.csv", PointOptions{GridUnit: metres.GridUnit, HeightUnit: metres.HeightUnit, Limits: Limits{MaxPoints: 3}})
	require.NoError(t, err)
	assert.Len(t, pts, 3)
}

// A 100 MB value is shown as its first 200 bytes and its length, once:
// the probe printed it twice, 200 MB on stderr.
func TestLongValueClipped(t *testing.T) {
	huge := strings.Repeat("9", 100<<20) + "x"
	lim := Limits{MaxLineBytes: 200 << 20, MaxFieldBytes: 200 << 20}
	c, _, err := NewObsChunker(strings.NewReader(obsHeader+"A,B,"+huge+",99\n"), "obs.csv", ObsOptions{LengthUnit: metresGon.LengthUnit, AngleUnit: metresGon.AngleUnit, Limits: lim})
	require.NoError(t, err)
	data, first, err := c.Next(nil, 16<<10)
	require.NoError(t, err)
	_, err = c.Reader(data, first).Next()
	var re *RowError
	require.ErrorAs(t, err, &re)
	msg := err.Error()
	assert.Less(t, len(msg), 400)
	assert.Contains(t, msg, `obs.csv:2:3: slope_distance "`+strings.Repeat("9", 200)+`… (104,857,601 bytes)": want`)

	assert.Equal(t, "short", Clip("short"))
	// A cut never splits a character: 199 bytes of x, then é (2 bytes).
	s := strings.Repeat("x", 199) + "é" + strings.Repeat("y", 10)
	assert.Equal(t, strings.Repeat("x", 199)+"… (211 bytes)", Clip(s))
}

// An unclosed quote is reported at the line of the row where it opened,
// not at the end of the file, by both readers and in chunks of any size.
func TestUnclosedQuoteNamesItsLine(t *testing.T) {
	in := obsHeader + "A,B,100,99\nA,\"B,100,99\nA,B,100,99\nA,B,100,99\n"
	_, _, whole := readWhole(t, in)
	require.Error(t, whole)
	assert.Contains(t, whole.Error(), "obs.csv:3: want well-formed CSV: a quoted field opened in the row that begins on line 3 is never closed")
	for _, size := range []int{1, 16, 1 << 10} {
		_, _, err := readChunked(t, in, size)
		assert.Equal(t, whole.Error(), fmt.Sprint(err), "chunks of %d bytes", size)
	}
	_, _, err := ReadPoints(strings.NewReader("id,easting,northing\nA,1,2\n\"B,1,2\nC,1,2\n"), "p.csv", metres)
	assert.ErrorContains(t, err, "p.csv:3: want well-formed CSV: a quoted field opened in the row that begins on line 3")
}

// Line ends: a file whose lines end in CR alone (classic Mac OS, Excel
// for Mac's "CSV (Macintosh)") reads as the same file with LF or CRLF,
// with the same line numbers; a lone CR in a file of LF or CRLF lines
// stops the file at its line.
func TestLineEnds(t *testing.T) {
	lf := "# set 1\nobs_id,from,to,slope_distance,zenith_angle\n1,A,B,100,99\n\n2,A,B,abc,99\n3,\"A\nB\",B,100,99\n4,B,A,300,101.2"
	want, _, err := readWhole(t, lf)
	require.NoError(t, err)
	require.Len(t, want, 4)
	assert.Contains(t, want[1], "obs.csv:5:4")
	for name, in := range map[string]string{
		"CRLF":       strings.ReplaceAll(lf, "\n", "\r\n"),
		"CR":         strings.ReplaceAll(lf, "\n", "\r"),
		"CR, a CRLF": strings.Replace(strings.ReplaceAll(lf, "\n", "\r"), "1,A,B,100,99\r", "1,A,B,100,99\r\n", 1),
		"BOM, CR":    bom + strings.ReplaceAll(lf, "\n", "\r"),
	} {
		got, _, err := readWhole(t, in)
		require.NoError(t, err, name)
		for i := range got {
			got[i] = strings.ReplaceAll(got[i], "\r\n", "\n")
		}
		assert.Equal(t, want, got, name)
		for _, size := range []int{1, 7, 1 << 10} {
			gotc, _, err := readChunked(t, in, size)
			require.NoError(t, err, name)
			for i := range gotc {
				gotc[i] = strings.ReplaceAll(gotc[i], "\r\n", "\n")
			}
			assert.Equal(t, want, gotc, "%s, chunks of %d bytes", name, size)
		}
	}
	mixed := obsHeader + "A,B,100,99\nA,B,100,99\rA,B,100,99\n"
	for _, in := range []string{mixed, strings.ReplaceAll(mixed, "\n", "\r\n")} {
		_, _, err := readWhole(t, in)
		var ee *LineEndError
		require.ErrorAs(t, err, &ee)
		assert.Equal(t, 3, ee.Line)
		err = drainObs(t, strings.NewReader(in), Limits{})
		require.ErrorAs(t, err, &ee)
		assert.Equal(t, 3, ee.Line)
		_, err = CountRows(strings.NewReader(in), "obs.csv", Limits{})
		require.ErrorAs(t, err, &ee)
	}
	// The CR of a CRLF split between two reads is no lone CR.
	r := newRowLimiter(io.MultiReader(strings.NewReader("a,b\r"), strings.NewReader("\nc,d\r\n")), "x.csv", 100)
	b, err := io.ReadAll(r)
	require.NoError(t, err)
	assert.Equal(t, "a,b\r\nc,d\r\n", string(b))
	_, err = io.ReadAll(newRowLimiter(strings.NewReader("a,b\r"), "x.csv", 100))
	var ee *LineEndError
	assert.ErrorAs(t, err, &ee, "a file ending in a lone CR after LF lines")
	assert.True(t, crEnded([]byte("a,b\r")), "one line ending in CR")
	assert.False(t, crEnded([]byte("a\nb\r")))
}
