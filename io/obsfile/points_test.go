package obsfile

import (
	"errors"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

var metres = PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre}

func TestReadPointsFormats(t *testing.T) {
	in := "\uFEFF# control for the test\r\n" +
		"id,lat,lon,ellipsoid_height,colour\r\n" +
		"\r\n" +
		"\"Pfeiler Nord, alt\",51.5,9.25,212.5,red\r\n" +
		"Ø-Süd,-33.5,151.0,,blue\r\n"
	pts, warns, err := ReadPoints(strings.NewReader(in), "pts.csv", metres)
	require.NoError(t, err)
	require.Len(t, pts, 2)
	assert.Equal(t, "Pfeiler Nord, alt", pts[0].ID)
	assert.Equal(t, 4, pts[0].Line)
	assert.InDelta(t, 51.5, pts[0].LatLng.Lat.Degrees(), 1e-12)
	assert.True(t, pts[0].HasEllipsoidHeight)
	assert.Equal(t, 212.5, pts[0].EllipsoidHeight)
	assert.Equal(t, "Ø-Süd", pts[1].ID)
	assert.False(t, pts[1].HasEllipsoidHeight, "blank height is unknown, not zero")
	require.Len(t, warns, 1)
	assert.Contains(t, warns[0].String(), `pts.csv:2: unknown column "colour"`)
}

// The US survey foot is 1200/3937 m (common practice; io/units).
func TestReadPointsGridInFeet(t *testing.T) {
	in := "id,easting,northing,elevation,geoid_separation\nA1,1000,2000,100,-30\n"
	pts, _, err := ReadPoints(strings.NewReader(in), "p.csv", PointOptions{GridUnit: units.USSurveyFoot, HeightUnit: units.InternationalFoot})
	require.NoError(t, err)
	assert.InDelta(t, 1000*1200.0/3937, pts[0].Easting, 1e-9)
	assert.InDelta(t, 2000*1200.0/3937, pts[0].Northing, 1e-9)
	assert.InDelta(t, 30.48, pts[0].Elevation, 1e-12)
	assert.InDelta(t, -9.144, pts[0].GeoidSeparation, 1e-12)
	assert.True(t, pts[0].HasGrid)
	assert.False(t, pts[0].HasLatLng)
}

func TestReadPointsErrors(t *testing.T) {
	for _, tc := range []struct{ name, in, want string }{
		{"empty", "", "pts.csv:1: header: the file is empty"},
		{"comments only", "# a\n\n# b", "pts.csv:1: header: the file holds only comment lines (#) and blank lines: want a header row"},
		{"no id", "lat,lon\n1,2\n", "missing required column(s) id"},
		{"no position", "id,elevation\nA,1\n", "want columns lat and lon, or easting and northing"},
		{"dup column", "id,lat,lat\n", `column "lat" appears twice`},
		{"lat range", "id,lat,lon\nA,95.2,10\n", `pts.csv:2:2: lat "95.2": want a value in -90..90 degrees`},
		{"lon text", "id,lat,lon\nA,45,east\n", `pts.csv:2:3: lon "east": want an angle in deg`},
		{"no id value", "id,lat,lon\n,45,10\n", `pts.csv:2:1: id "": want a point id`},
		{"duplicate id", "id,lat,lon\nA,45,10\nB,45,11\nA,46,10\n", `pts.csv:4:1: id "A": want a unique id; "A" is already on line 2`},
		{"field count", "id,lat,lon\nA,45\n", "pts.csv:2: want 3 fields as in the header, got 2"},
		{"bad quote", "id,lat,lon\n\"A,45,10\n", "pts.csv:2"},
		{"nan height", "id,lat,lon,ellipsoid_height\nA,45,10,NaN\n", `pts.csv:2:4: ellipsoid_height "NaN"`},
		{"no rows", "id,lat,lon\n# nothing\n", "no points after the header"},
		{"neither", "id,lat,lon,easting,northing\nA,,,,\n", `point "A": lat and lon, or easting and northing`},
	} {
		_, _, err := ReadPoints(strings.NewReader(tc.in), "pts.csv", metres)
		assert.ErrorContainsf(t, err, tc.want, "case %s", tc.name)
	}
}

func TestReadPointsReportsEveryBadRow(t *testing.T) {
	in := "id,lat,lon\nA,95,10\nB,45,10\nC,45,999\n"
	_, _, err := ReadPoints(strings.NewReader(in), "pts.csv", metres)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "pts.csv:2:2")
	assert.Contains(t, err.Error(), "pts.csv:4:3")
	var fe *FieldError
	require.True(t, errors.As(err, &fe))
	assert.Equal(t, "lat", fe.Field)
}
