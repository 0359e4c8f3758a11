package obsfile

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/units"
)

var metresDMS = ObsOptions{LengthUnit: units.Metre, AngleUnit: units.PackedDMS}

// obsComma is an observation file written with commas and decimal
// points; asWritten rewrites it with another delimiter and mark.
const obsComma = "# a set\n" +
	"obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm,instrument\n" +
	"1,NB 1,SB.2,662.6729,90.13254,1.569,1.600,8.5,1007.9,77,-30,ts\n" +
	"2,SB.2,NB 1,662.6770,89.46450,1.604,1.6,8.5,1008.6,72,,ts\n" +
	"3,NB 1,SB.2,-662.6770,89.46450,1.604,1.6,8.5,1008.6,72,,ts\n"

// asWritten is text with its commas replaced by delim and, where comma,
// each decimal point of a number by a comma (ids keep theirs).
func asWritten(text string, delim byte, comma bool) string {
	var b strings.Builder
	for _, line := range strings.SplitAfter(text, "\n") {
		if strings.HasPrefix(line, "#") {
			b.WriteString(line)
			continue
		}
		fields := strings.Split(line, ",")
		for i, f := range fields {
			if _, err := units.ParseFloat(strings.TrimSpace(f)); err == nil && comma {
				fields[i] = strings.Replace(f, ".", ",", 1)
			}
		}
		b.WriteString(strings.Join(fields, string(delim)))
	}
	return b.String()
}

// A semicolon or tab file, with decimal commas or points, reads as the
// comma file does: the same values, rejects at the same lines and
// columns; its raw rows keep their delimiter.
func TestObservationsAnyDelimiter(t *testing.T) {
	want, wantRejects, _, err := readAll(t, obsComma, metresDMS)
	require.NoError(t, err)
	require.Len(t, want, 2)
	require.Len(t, wantRejects, 1)
	for _, c := range []struct {
		delim byte
		comma bool
	}{{';', true}, {';', false}, {'\t', true}, {'\t', false}} {
		name := fmt.Sprintf("%q comma=%v", c.delim, c.comma)
		in := asWritten(obsComma, c.delim, c.comma)
		for _, d := range []Delimiter{DelimiterAuto, Delimiter(c.delim)} {
			opt := metresDMS
			opt.Delimiter = d
			got, rejects, _, err := readAll(t, in, opt)
			require.NoError(t, err, name)
			require.Len(t, got, len(want), name)
			for i := range got {
				assert.Equal(t, byte(c.delim), got[i].Delimiter)
				got[i].Fields, want[i].Fields, got[i].Delimiter, want[i].Delimiter = nil, nil, 0, 0
				assert.Equal(t, want[i], got[i], name) // exact: the same digits
			}
			require.Len(t, rejects, 1, name)
			assert.Equal(t, wantRejects[0].Err.Line, rejects[0].Err.Line, name)
			assert.Equal(t, wantRejects[0].Err.Column, rejects[0].Err.Column, name)
			assert.Equal(t, strings.Split(strings.TrimSpace(in), "\n")[4], rejects[0].Raw, name)
		}
	}
}

// In a comma file a decimal comma (quoted, or it would split the field)
// is refused at its line and column, and the error says where a decimal
// comma is read.
func TestDecimalCommaInCommaFileRefused(t *testing.T) {
	in := "from,to,slope_distance,zenith_angle\nA,B,\"662,6729\",90.1325\n"
	_, rejects, _, err := readAll(t, in, metresDMS)
	require.NoError(t, err)
	require.Len(t, rejects, 1)
	e := rejects[0].Err
	assert.Equal(t, 2, e.Line)
	assert.Equal(t, 3, e.Column)
	assert.Contains(t, e.Error(), "obs.csv:2:3: slope_distance \"662,6729\"")
	assert.Contains(t, e.Error(), "a decimal comma is read only in a semicolon- or tab-delimited file (this one is delimited by ',')")
	pts := "id;easting;northing\nA;1000,5;2000,25\n"
	_, _, err = ReadPoints(strings.NewReader(pts), "p.csv", PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre, Delimiter: Comma})
	require.Error(t, err)
}

// One file, one decimal mark: the first found in a numeric column sets
// it; a number with the other one, or with both (a separator of
// thousands), is refused and names the line where the mark was set.
func TestOneDecimalMarkPerFile(t *testing.T) {
	in := "from;to;slope_distance;zenith_angle;instrument_height\n" +
		"A.1;B;662,6729;90;1\n" + // ids do not set the mark
		"A.1;B;1.662,6729;90;1\n" +
		"A.1;B;662.6729;90;1\n" +
		"A.1;B;662;90,1325;1.5\n"
	got, rejects, _, err := readAll(t, in, metresDMS)
	require.NoError(t, err)
	require.Len(t, got, 1)
	assert.Equal(t, 662.6729, got[0].SlopeDistance)
	require.Len(t, rejects, 3)
	assert.Contains(t, rejects[0].Error(), `obs.csv:3:3: slope_distance "1.662,6729": want a slope distance in m; a number has one decimal mark, '.' or ',', and no separator of thousands`)
	assert.Contains(t, rejects[1].Error(), `obs.csv:4:3: slope_distance "662.6729": want a slope distance in m; the file writes its decimal mark as ',' (first on line 2)`)
	assert.Contains(t, rejects[2].Error(), `obs.csv:5:5: instrument_height "1.5"`)
	// A file whose first number with a mark uses a point holds to it.
	in = "from\tto\tslope_distance\tzenith_angle\nA\tB\t662\t90.1325\nA\tB\t662,5\t90\n"
	got, rejects, _, err = readAll(t, in, metresDMS)
	require.NoError(t, err)
	require.Len(t, got, 1)
	require.Len(t, rejects, 1)
	assert.Contains(t, rejects[0].Error(), `obs.csv:3:3: slope_distance "662,5": want a slope distance in m; the file writes its decimal mark as '.' (first on line 2)`)
	// Points too.
	pts := "id;easting;northing;elevation\nA;1000,5;2000;10\nB;1000.5;2000;10\n"
	_, _, err = ReadPoints(strings.NewReader(pts), "p.csv", metres)
	require.Error(t, err)
	assert.Contains(t, err.Error(), `p.csv:3:2: easting "1000.5": want a length in m; the file writes its decimal mark as ',' (first on line 2)`)
}

// Past the first 64 KiB (where the readers look first) the mark is still
// the file's first: read whole and in chunks, rows of integers and then
// one with each mark reject the second.
func TestDecimalMarkAfterTheFirstRows(t *testing.T) {
	var b strings.Builder
	b.WriteString("from;to;slope_distance;zenith_angle\n")
	n := 0
	for b.Len() < 3*peekBytes {
		b.WriteString("A;B;662;90\n")
		n++
	}
	b.WriteString("A;B;662,5;90\n")
	m := 0 // rows between the two marks, so that they are in other chunks
	for ; m < 4000; m++ {
		b.WriteString("A;B;662;90\n")
	}
	b.WriteString("A;B;662.5;90\n")
	in := b.String()
	bad := n + m + 3 // the line of the row with a point
	got, rejects, _, err := readAll(t, in, metresDMS)
	require.NoError(t, err)
	require.Len(t, got, n+m+1)
	require.Len(t, rejects, 1)
	assert.Equal(t, bad, rejects[0].Err.Line)
	assert.Contains(t, rejects[0].Error(), fmt.Sprintf("first on line %d", n+2))

	c, _, err := NewObsChunker(strings.NewReader(in), "obs.csv", metresDMS)
	require.NoError(t, err)
	var buf []byte
	var lines []int
	reduced := 0
	for {
		data, first, err := c.Next(buf[:0], 16<<10)
		if errors.Is(err, io.EOF) {
			break
		}
		require.NoError(t, err)
		buf = data
		r := c.Reader(bytes.Clone(data), first)
		for {
			_, err := r.Next()
			if errors.Is(err, io.EOF) {
				break
			}
			var re *RowError
			if errors.As(err, &re) {
				lines = append(lines, re.Err.Line)
				continue
			}
			require.NoError(t, err)
			reduced++
		}
	}
	assert.Equal(t, n+m+1, reduced)
	assert.Equal(t, []int{bad}, lines)
}

func TestFindDelimiter(t *testing.T) {
	known := obsColumns
	for _, c := range []struct {
		header string
		want   Delimiter
		why    string
	}{
		{"from,to,slope_distance,zenith_angle\n", Comma, "found from the header"},
		{"from;to;slope_distance;zenith_angle\n", Semicolon, "(',' into 0, ';' into 4, tab into 0)"},
		{"from\tto\tslope_distance\tzenith_angle\n", Tab, "found from the header"},
		{"# notes; with, every\tdelimiter\n\"from\";\"to\";slope_distance\n", Semicolon, "found"},
		{"from;to,a;zenith_angle;slope_distance\n", Semicolon, "(',' into 0, ';' into 3, tab into 0)"}, // ',' splits it into "from;to" and "a;…"
		{"from;to;slope_distance;zenith_angle;x,y\n", Semicolon, "(',' into 0, ';' into 4, tab into 0)"},
		{"from\n", Comma, "taken, since the header has one column"},
		{"a;b;c\n", Comma, "assumed, since no delimiter splits the header into known column names (',' into 0, ';' into 0, tab into 0)"},
		{"", Comma, "assumed"},
	} {
		got, why, err := FindDelimiter([]byte(c.header), known)
		require.NoError(t, err, c.header)
		assert.Equal(t, c.want, got, c.header)
		assert.Contains(t, why, c.why, c.header)
	}
	_, _, err := FindDelimiter([]byte("from;zenith_angle,to\n"), known)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "the delimiter is ambiguous: ',' and ';' each split the header into the most known column names, 1 (',' into 1, ';' into 1, tab into 0)")
}

// A header that does not give the columns says which delimiter it was
// split at and why, and how to set it; an ambiguous one is refused.
func TestHeaderErrorNamesTheDelimiter(t *testing.T) {
	_, _, err := ReadPoints(strings.NewReader("id;easting;northing;elevation\nA;1;2;3\n"), "p.csv", PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre, Delimiter: Comma})
	require.Error(t, err)
	assert.Contains(t, err.Error(), `p.csv:1: header: missing required column(s) id; found id;easting;northing;elevation (the columns split at ',', as the job's delimiter setting says; set delimiter = ",", ";" or "tab" in the job (or -delimiter) to say which)`)
	_, _, err = NewObsReader(strings.NewReader("von;nach;schraegstrecke\n"), "obs.csv", metresDMS)
	require.Error(t, err)
	assert.Contains(t, err.Error(), `missing required column(s) from, to, slope_distance, zenith_angle; found von;nach;schraegstrecke (the columns split at ',', assumed, since no delimiter splits the header into known column names`)
	_, _, err = ReadPoints(strings.NewReader("id;easting,northing\nA;1,2\n"), "p.csv", metres)
	require.Error(t, err)
	var he *HeaderError
	require.ErrorAs(t, err, &he)
	assert.Contains(t, err.Error(), `p.csv:1: header: the delimiter is ambiguous: ',' and ';' each split the header into the most known column names, 1`)
	assert.Contains(t, err.Error(), `so none is assumed; set delimiter`)
	_, _, err = ReadPoints(strings.NewReader("id\teasting\tnorthing\n"), "p.csv", PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre, Delimiter: Semicolon})
	require.Error(t, err)
	assert.Contains(t, err.Error(), `the columns split at ';', as the job's delimiter setting says`)
}

func TestParseDelimiter(t *testing.T) {
	for s, want := range map[string]Delimiter{"": DelimiterAuto, "auto": DelimiterAuto, ",": Comma, ";": Semicolon, "tab": Tab, "\t": Tab, " TAB ": Tab, "semicolon": Semicolon} {
		got, err := ParseDelimiter(s)
		require.NoError(t, err, s)
		assert.Equal(t, want, got, s)
		if s == want.String() {
			continue
		}
		back, err := ParseDelimiter(want.String())
		require.NoError(t, err)
		assert.Equal(t, want, back)
	}
	for _, s := range []string{"|", "comma;", ";;"} {
		_, err := ParseDelimiter(s)
		require.Error(t, err, s)
	}
}

// BenchmarkObsReaderSemicolon is BenchmarkObsReader on the same file
// written with semicolons and decimal commas.
func BenchmarkObsReaderSemicolon(b *testing.B) {
	benchReader(b, []byte(asWritten(string(benchObservations()), ';', true)))
}
