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
		n, err := CountRows(strings.NewReader(header+c.body), "obs.csv", Limits{})
		require.NoError(t, err, c.name)
		assert.Equal(t, c.want, n, c.name)
		r, _, err := NewObsReader(strings.NewReader(header+c.body), "obs.csv", ObsOptions{LengthUnit: units.Metre, AngleUnit: units.Degrees})
		require.NoError(t, err, c.name)
		rows := 0
		for {
			_, err := r.Next()
			if errors.Is(err, io.EOF) {
				break
			}
			rows++ // a good row or a bad one: both are rows the run counts
		}
		assert.Equal(t, rows, n, "%s: the reader's rows", c.name)
	}
}
