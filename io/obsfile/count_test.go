package obsfile

import (
	"errors"
	"io"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

// TestCountRows counts as the reader reads: every file here is also read
// row by row, and the two counts must agree.
func TestCountRows(t *testing.T) {
	const header = "from,to,slope_distance,zenith_angle\n"
	for _, c := range []struct {
		name, body string
		want       int
	}{
		{"header only", "", 0},
		{"two rows", "A,B,100,90\nB,A,100,90\n", 2},
		{"no final line break", "A,B,100,90\nB,A,100,90", 2},
		{"CRLF", "A,B,100,90\r\nB,A,100,90\r\n", 2},
		{"comments and blank rows", "# set 1\nA,B,100,90\n\n,,,\n# set 2\nB,A,100,90\n", 2},
		{"quoted line break", "\"A\nx\",B,100,90\nB,A,100,90\n", 2},
		{"quoted comma and quotes", "\"A,\"\"1\"\"\",B,100,90\n", 1},
		{"long row", "A,B,100,90" + strings.Repeat(" ", 200<<10) + "\nB,A,100,90\n", 2},
	} {
		for _, d := range []string{",", ";", "\t"} {
			text := strings.ReplaceAll(header+c.body, ",", d)
			countsAsRead(t, c.name+" delimited by "+d, text, c.want)
		}
	}
	// Semicolons in a comma file are not delimiters: a row, not a blank.
	countsAsRead(t, "semicolons in a comma file", header+";;;\n", 1)
}

// countsAsRead checks that CountRows counts text's rows as want, and as
// the reader reads them.
func countsAsRead(t *testing.T, name, text string, want int) {
	t.Helper()
	n, err := CountRows(strings.NewReader(text), "obs.csv", Limits{})
	require.NoError(t, err, name)
	assert.Equal(t, want, n, name)
	r, _, err := NewObsReader(strings.NewReader(text), "obs.csv", ObsOptions{LengthUnit: units.Metre, AngleUnit: units.Degrees})
	require.NoError(t, err, name)
	rows := 0
	for {
		_, err := r.Next()
		if errors.Is(err, io.EOF) {
			break
		}
		rows++ // a good row or a bad one: both are rows the run counts
	}
	assert.Equal(t, rows, n, "%s: the reader's rows", name)
}
