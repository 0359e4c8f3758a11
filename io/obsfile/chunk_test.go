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

// readChunked reads a file as a run does: split by an ObsChunker into
// chunks of about size bytes, each parsed by its own reader. Every row
// gives its observation's text or its error's.
func readChunked(t *testing.T, in string, size int) ([]string, []Warning, error) {
	t.Helper()
	c, warns, err := NewObsChunker(strings.NewReader(in), "obs.csv", metresGon)
	if err != nil {
		return nil, warns, err
	}
	var out []string
	var buf []byte
	for {
		data, first, err := c.Next(buf, size)
		if errors.Is(err, io.EOF) {
			return out, warns, nil
		}
		if err != nil {
			return out, warns, err
		}
		buf = data
		if out, err = rowTexts(c.Reader(data, first), out); err != nil {
			return out, warns, err
		}
	}
}

// readWhole is readChunked's rows from one ObsReader over the whole file.
func readWhole(t *testing.T, in string) ([]string, []Warning, error) {
	t.Helper()
	r, warns, err := NewObsReader(strings.NewReader(in), "obs.csv", metresGon)
	if err != nil {
		return nil, warns, err
	}
	out, err := rowTexts(r, nil)
	return out, warns, err
}

// rowTexts appends the text of each row r reads, an observation or a
// reject, until the end or an error that ends the file.
func rowTexts(r *ObsReader, out []string) ([]string, error) {
	for {
		o, err := r.Next()
		if errors.Is(err, io.EOF) {
			return out, nil
		}
		var re *RowError
		switch {
		case errors.As(err, &re):
			out = append(out, "reject "+re.Error()+" raw "+re.Raw)
		case err != nil:
			return out, err
		default:
			out = append(out, fmt.Sprintf("%+v raw %s", o, o.Raw()))
		}
	}
}

// Chunks of any size give the rows, line numbers, rejects and errors of
// one reader over the whole file: comments, blank lines, CRLF, quoted
// commas and line breaks (in the header too), a bad row, a last line
// without a line break.
func TestObsChunkerMatchesReader(t *testing.T) {
	in := "\uFEFF# a comment\r\n\r\nobs_id,from,to,\"slope_distance\",zenith_angle,note\r\n" +
		"1,A,B,100.5,99.9,plain\r\n" +
		"# set 2\n" +
		"2,\"St,1\",B,200.25,100.1,\"two\nlines\"\n" +
		",,,,,\n" +
		"3,A,B,abc,100,\"x\"\"y\"\n" +
		"4,B,A,300,101.2,\"a\n\nb\"\n" +
		"5,B,\"A\",400,99,last"
	want, wantWarns, err := readWhole(t, in)
	require.NoError(t, err)
	require.Len(t, want, 5)
	assert.Contains(t, want[2], "reject obs.csv:9:4: slope_distance \"abc\"")
	for _, size := range []int{1, 5, 20, 40, 64 << 10} {
		got, warns, err := readChunked(t, in, size)
		require.NoError(t, err, "chunks of %d bytes", size)
		assert.Equal(t, want, got, "chunks of %d bytes", size)
		assert.Equal(t, wantWarns, warns, "chunks of %d bytes", size)
	}
}

// A broken quote ends the file with the same error, whatever the chunks.
func TestObsChunkerBrokenQuote(t *testing.T) {
	in := "from,to,slope_distance,zenith_angle\nA,B,100,99\nA,B\"x,100,99\nA,B,100,99\n"
	_, _, want := readWhole(t, in)
	require.Error(t, want)
	for _, size := range []int{1, 16, 1 << 10} {
		_, _, err := readChunked(t, in, size)
		assert.Equal(t, want.Error(), fmt.Sprint(err), "chunks of %d bytes", size)
	}
	_, _, err := NewObsChunker(strings.NewReader("from,to\nA,B\n"), "obs.csv", metresGon)
	assert.ErrorContains(t, err, "missing required column(s) slope_distance, zenith_angle")
}
