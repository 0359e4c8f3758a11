package geodesic

import (
	"bufio"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/stretchr/testify/require"
)

// Tolerances with their units.
const (
	mm        = 1e-3
	arcsecond = s1.Angle(1.0 / 3600 * (3.141592653589793 / 180))
)

// A row of a check-value table in ../testdata/geodesic.
type row struct {
	line   int
	fields []string
}

// readTable reads a whitespace-separated table, skipping blank lines and
// lines that start with '#'.
func readTable(t testing.TB, name string) []row {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "testdata", "geodesic", name))
	require.NoError(t, err)
	defer f.Close()
	var rows []row
	sc := bufio.NewScanner(f)
	for n := 1; sc.Scan(); n++ {
		text := strings.TrimSpace(sc.Text())
		if text == "" || strings.HasPrefix(text, "#") {
			continue
		}
		rows = append(rows, row{line: n, fields: strings.Fields(text)})
	}
	require.NoError(t, sc.Err())
	require.NotEmpty(t, rows, "table %s is empty", name)
	return rows
}

func (r row) float(t testing.TB, i int) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(r.fields[i], 64)
	require.NoError(t, err, "line %d column %d", r.line, i+1)
	return v
}

// dms parses "d:m:s" (a leading '-' negates the whole angle) to degrees.
func (r row) dms(t testing.TB, i int) float64 {
	t.Helper()
	s := r.fields[i]
	sign := 1.0
	if strings.HasPrefix(s, "-") {
		sign, s = -1, s[1:]
	}
	deg := 0.0
	for k, part := range strings.Split(s, ":") {
		v, err := strconv.ParseFloat(part, 64)
		require.NoError(t, err, "line %d column %d", r.line, i+1)
		deg += v / []float64{1, 60, 3600}[k]
	}
	return sign * deg
}

// angleDiff is a − b wrapped to (−180°, 180°], in degrees.
func angleDiff(a, b float64) float64 {
	d := a - b
	for d > 180 {
		d -= 360
	}
	for d <= -180 {
		d += 360
	}
	return d
}
