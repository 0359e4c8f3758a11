package baselines

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/audit"
)

const mm = 1e-3

func TestReadKinds(t *testing.T) {
	in := `# delivered by the subcontractor
id,from,to,kind,distance,sigma,dx,dy,dz,sigma_x,sigma_y,sigma_z,applied_ppm,applied_prism_constant_mm
d1,K1,K2,grid,1234.5678,0.003,,,,,,,12.5,-30
d2,K1,K3,Ellipsoid,2000,0.004,,,,,,,,
d3,K2,K3,ground,1500.25,0.002,,,,,,,,
d4,K3,K4,sea-level,800,0.002,,,,,,,,
v1,K1,K4,vector,,,-412.3456,1020.5,377.125,0.002,0.003,0.004,,
`
	res, err := Read(strings.NewReader(in), "b.csv", units.Metre)
	require.NoError(t, err)
	require.Empty(t, res.Rejects)
	require.Len(t, res.Baselines, 5)
	assert.Equal(t, 5, res.Read)
	b := res.Baselines
	assert.Equal(t, audit.Grid, b[0].Distance.Kind)
	assert.Equal(t, 3, b[0].Line, "line of d1 after the comment and the header")
	assert.Equal(t, "d1,K1,K2,grid,1234.5678,0.003,,,,,,,12.5,-30", b[0].Raw, "the row as written")
	assert.Equal(t, 1234.5678, b[0].Distance.Value)
	assert.True(t, b[0].Distance.HasAppliedPPM)
	assert.Equal(t, 12.5, b[0].Distance.AppliedPPM)
	assert.InDelta(t, -30*mm, b[0].Distance.PrismConstant, 1e-15)
	assert.Equal(t, audit.Ellipsoid, b[1].Distance.Kind, "kind is read without regard to case")
	assert.False(t, b[1].Distance.HasAppliedPPM)
	assert.Equal(t, audit.Ground, b[2].Distance.Kind)
	assert.Equal(t, audit.SeaLevel, b[3].Distance.Kind)
	v := b[4]
	require.True(t, v.IsVector)
	assert.Equal(t, -412.3456, v.Vector.Delta.X)
	assert.InDelta(t, 0.004*0.004, v.Vector.Cov[2][2], 1e-18)
	assert.Equal(t, 0.0, v.Vector.Cov[0][1])
}

// TestReadUSFeet: lengths and covariances convert from the job's unit at
// the edge (US survey foot 1200/3937 m, NIST SP 811).
func TestReadUSFeet(t *testing.T) {
	in := "from,to,kind,distance,sigma,dx,dy,dz,cov_xx,cov_xy,cov_xz,cov_yy,cov_yz,cov_zz\n" +
		"A,B,grid,3937,0.01,,,,,,,,,\n" +
		"A,C,vector,,,3937,0,-3937,0.0001,0,0,0.0001,0.00005,0.0004\n"
	res, err := Read(strings.NewReader(in), "ft.csv", units.USSurveyFoot)
	require.NoError(t, err)
	require.Empty(t, res.Rejects)
	assert.InDelta(t, 1200, res.Baselines[0].Distance.Value, 1e-9)
	assert.InDelta(t, 0.01*1200/3937, res.Baselines[0].Distance.Sigma, 1e-15)
	v := res.Baselines[1].Vector
	assert.InDelta(t, -1200, v.Delta.Z, 1e-9)
	f := 1200.0 / 3937
	assert.InDelta(t, 0.00005*f*f, v.Cov[1][2], 1e-18)
	assert.Equal(t, v.Cov[1][2], v.Cov[2][1])
}

func TestReadRejects(t *testing.T) {
	in := `from,to,kind,distance,sigma,dx,dy,dz,sigma_x,sigma_y,sigma_z,cov_xx,cov_xy,cov_xz,cov_yy,cov_yz,cov_zz,extra
A,B,grid,12x,0.003,,,,,,,,,,,,,
A,A,grid,100,0.003,,,,,,,,,,,,,
A,B,slope,100,0.003,,,,,,,,,,,,,
A,B,grid,100,,,,,,,,,,,,,,
A,B,grid,100,0.003,1,,,,,,,,,,,,
A,B,vector,,,1,2,3,,,,,,,,,,
A,B,vector,,,1,2,3,0.01,0.01,0.01,0.0001,0,0,0.0001,0,0.0001,
A,B,vector,,,1,2,3,,,,0.0001,0.0002,0,0.0001,0,0.0001,
A,B,grid,100
A,B,grid,-5,0.003,,,,,,,,,,,,,
A,B,vector,,,10,20,30,0.01,0.01,0.01,,,,,,,
`
	res, err := Read(strings.NewReader(in), "bad.csv", units.Metre)
	require.NoError(t, err)
	require.Len(t, res.Warnings, 1)
	assert.Contains(t, res.Warnings[0].String(), `unknown column "extra"`)
	assert.Equal(t, 11, res.Read)
	assert.Len(t, res.Baselines, 1, "only the last row is good")
	require.Len(t, res.Rejects, 10)
	want := []string{
		`bad.csv:2:4: distance "12x": want a distance in m`,
		`bad.csv:3:2: to "A": want a mark other than the start mark "A"`,
		`bad.csv:4:3: kind "slope": want grid, ellipsoid, ground, sea-level or vector`,
		`bad.csv:5:5: sigma "": want the distance's stated σ`,
		`bad.csv:6:6: dx "1": want blank on a grid distance`,
		`bad.csv:7: want the vector's σ`,
		`bad.csv:8: want either sigma_x`,
		`bad.csv:9: want a positive definite covariance`,
		`bad.csv:10:`,
		`bad.csv:11:4: distance "-5"`,
	}
	for i, w := range want {
		assert.Contains(t, res.Rejects[i].Reason, w, "reject %d", i)
		assert.Equal(t, i+2, res.Rejects[i].Line, "reject %d", i)
	}
	assert.Contains(t, res.Rejects[8].Reason, "wrong number of fields")
	assert.Equal(t, "A,B,grid,12x,0.003,,,,,,,,,,,,,", res.Rejects[0].Raw, "the raw row keeps every column")
}

func TestReadHeader(t *testing.T) {
	_, err := Read(strings.NewReader(""), "e.csv", units.Metre)
	var he *obsfile.HeaderError
	require.ErrorAs(t, err, &he)
	assert.Contains(t, err.Error(), "empty")
	_, err = Read(strings.NewReader("from,kind,distance\nA,grid,1\n"), "h.csv", units.Metre)
	require.ErrorAs(t, err, &he)
	assert.Contains(t, err.Error(), "h.csv:1: header: missing required column(s) to")
	_, err = Read(strings.NewReader("from,to,kind,From\n"), "d.csv", units.Metre)
	require.ErrorAs(t, err, &he)
	assert.Contains(t, err.Error(), `column "from" appears twice`)
}

// The same baselines written with semicolons and decimal commas, or with
// tabs, read as the comma file does; in a file with decimal commas a
// point is refused at its line and column, and a missing column names
// the delimiter.
func TestReadSemicolonAndTab(t *testing.T) {
	in := "id,from,to,kind,distance,sigma,dx,dy,dz,sigma_x,sigma_y,sigma_z,applied_ppm,applied_prism_constant_mm\n" +
		"d1,K1,K2,grid,1234.5678,0.003,,,,,,,12.5,-30\n" +
		"v1,K1,K4,vector,,,-412.3456,1020.5,377.125,0.002,0.003,0.004,,\n"
	want, err := Read(strings.NewReader(in), "b.csv", units.Metre)
	require.NoError(t, err)
	require.Len(t, want.Baselines, 2)
	semi := strings.NewReplacer(",", ";", ".", ",").Replace(in)
	tab := strings.ReplaceAll(in, ",", "\t")
	for _, text := range []string{semi, tab} {
		got, err := Read(strings.NewReader(text), "b.csv", units.Metre)
		require.NoError(t, err, text)
		require.Empty(t, got.Rejects, text)
		require.Len(t, got.Baselines, len(want.Baselines))
		for i := range got.Baselines {
			assert.Equal(t, strings.Split(text, "\n")[i+1], got.Baselines[i].Raw) // as written
			got.Baselines[i].Raw = want.Baselines[i].Raw
		}
		assert.Equal(t, want.Baselines, got.Baselines, text) // exact: the same digits
	}
	got, err := ReadDelimited(strings.NewReader(semi+"d2;K1;K3;grid;2000.5;0,004;;;;;;;;\n"), "b.csv", units.Metre, obsfile.Semicolon)
	require.NoError(t, err)
	require.Len(t, got.Rejects, 1)
	assert.Contains(t, got.Rejects[0].Reason, `b.csv:4:5: distance "2000.5": want a distance in m, above 0 and at most 1000 km; the file writes its decimal mark as ',' (first on line 2)`)
	_, err = ReadDelimited(strings.NewReader(semi), "b.csv", units.Metre, obsfile.Comma)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "missing required column(s) from, to, kind; found id;from;to;kind;")
	assert.Contains(t, err.Error(), "(the columns split at ',', as the job's delimiter setting says; set delimiter")
}
