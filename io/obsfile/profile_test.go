package obsfile

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

// International feet: 0.3048 m (common practice; io/units).
func TestReadProfile(t *testing.T) {
	in := "\uFEFF# ground under the line\r\n" +
		"height,distance,kind\r\n" +
		"5,3000,field\r\n" +
		"\r\n" +
		"-12.5,0,quarry\r\n" +
		"8.5,39370.0787,mast\r\n"
	const length = 12000.0
	pts, warns, err := ReadProfile(strings.NewReader(in), "profile.csv", units.InternationalFoot, length, Comma)
	require.NoError(t, err)
	require.Len(t, warns, 1)
	assert.Equal(t, `profile.csv:2: unknown column "kind" (column 3) is ignored; known columns: distance, height`, warns[0].String())
	require.Len(t, pts, 3)
	assert.Equal(t, 3, pts[0].Line)
	assert.InDelta(t, 3000*0.3048, pts[0].Distance, 1e-9*mm, "distance, m")
	assert.InDelta(t, 5*0.3048, pts[0].Height, 1e-9*mm, "height, m")
	assert.Equal(t, 5, pts[1].Line)
	assert.Equal(t, 0.0, pts[1].Distance)
	assert.InDelta(t, -12.5*0.3048, pts[1].Height, 1e-9*mm, "height, m")
	assert.InDelta(t, 39370.0787*0.3048, pts[2].Distance, 1e-9*mm, "distance, m")
}

// A point written at the far end in feet is on the line: 3 m is
// 9.84251968503937 ft, which times 0.3048 is 3.0000000000000004 m in
// float64; the reader keeps it at 3 m.
func TestReadProfileFarEndStaysOnLine(t *testing.T) {
	pts, _, err := ReadProfile(strings.NewReader("distance,height\n9.84251968503937,1\n"), "profile.csv", units.InternationalFoot, 3, Comma)
	require.NoError(t, err)
	d := 9.84251968503937
	require.Greater(t, d*float64(units.InternationalFoot), 3.0, "precondition: the product in float64 passes the end")
	assert.Equal(t, 3.0, pts[0].Distance)
}

func TestReadProfileErrors(t *testing.T) {
	for _, tc := range []struct {
		name, in string
		length   float64
		want     string
	}{
		{"empty", "", 12000, "profile.csv:1: header: the file is empty: want a header row"},
		{"no columns", "x,y\n1,2\n", 12000, "profile.csv:1: header: missing required column(s) distance, height; found x, y"},
		{"no height", "distance\n1\n", 12000, "profile.csv:1: header: missing required column(s) height; found distance"},
		{"no points", "distance,height\n\n", 12000, "profile.csv:1: header: no profile points after the header"},
		{"beyond the far end", "distance,height\n13000,2\n", 12000,
			`profile.csv:2:1: distance "13000": want a distance from the eye along the line in m, 0..12000.0000 (the line's length)`},
		{"behind the eye", "distance,height\n-1,2\n", 12000, `profile.csv:2:1: distance "-1": want a distance from the eye`},
		{"height text", "distance,height\n4000,abc\n", 12000, `profile.csv:2:2: height "abc": want a height in m within -10000..100000 m`},
		{"height too low", "distance,height\n4000,-10001\n", 12000, `profile.csv:2:2: height "-10001"`},
		{"height NaN", "distance,height\n4000,NaN\n", 12000, `profile.csv:2:2: height "NaN"`},
		{"blank distance", "distance,height\n,4\n", 12000, `profile.csv:2:1: distance ""`},
		{"ragged row", "distance,height\n4000\n", 12000, "profile.csv:2: want 2 fields as in the header, got 1"},
		{"no length", "distance,height\n0,1\n", 0, "profile.csv: the line's length 0 m: want a positive length"},
		{"NaN length", "distance,height\n0,1\n", math.NaN(), "profile.csv: the line's length NaN m"},
	} {
		_, _, err := ReadProfile(strings.NewReader(tc.in), "profile.csv", units.Metre, tc.length, Comma)
		assert.ErrorContainsf(t, err, tc.want, "case %s", tc.name)
	}
	_, _, err := ReadProfile(strings.NewReader("distance,height\n0,1\n"), "profile.csv", 0, 100, Comma)
	assert.ErrorContains(t, err, "profile.csv: length unit not set")
}

// Heights in feet are checked against the limits in metres.
func TestReadProfileHeightLimitInFeet(t *testing.T) {
	_, _, err := ReadProfile(strings.NewReader("distance,height\n0,328084\n"), "profile.csv", units.InternationalFoot, 100, Comma)
	assert.ErrorContains(t, err, `profile.csv:2:2: height "328084": want a height in intl-ft within -10000..100000 m`)
	_, _, err = ReadProfile(strings.NewReader("distance,height\n0,328083\n"), "profile.csv", units.InternationalFoot, 100, Comma)
	assert.NoError(t, err, "328083 ft is 99 999.7 m")
}

func TestReadProfileReportsEveryBadRow(t *testing.T) {
	in := "distance,height\n3000,5\n13000,2\n4000,abc\n"
	pts, _, err := ReadProfile(strings.NewReader(in), "profile.csv", units.Metre, 12000, Comma)
	assert.Nil(t, pts)
	require.Error(t, err)
	assert.Equal(t, `profile.csv:3:1: distance "13000": want a distance from the eye along the line in m, 0..12000.0000 (the line's length)
profile.csv:4:2: height "abc": want a height in m within -10000..100000 m`, err.Error())
	var fe *FieldError
	require.True(t, errors.As(err, &fe))
	assert.Equal(t, "distance", fe.Field)
}
