package job_test

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/report"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/job"
)

// fuzzHeader is the header of the rows FuzzReduceRow reduces: every
// column an observation file may have.
const fuzzHeader = "obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,temperature_c_to,pressure_hpa_to,humidity_pct_to,prism_constant_mm,field_prism_constant_mm,instrument\n"

// fuzzPoints are the demo's marks (invented), with a geoid separation of
// their own, and marks made to be awkward: one on the same spot as
// NB-PILLAR1 (a line of no length), one without a height (a station that
// cannot be reduced from, a target reduced by its zenith angle), one 5 km
// above NB-PILLAR1 and 10 m off (a line almost straight up), and one
// 300 km away.
const fuzzPoints = `id,easting,northing,elevation,geoid_separation
NB-PILLAR1,512340.512,5761205.338,48.217,47.6
NB-PILLAR2,512905.147,5761388.902,47.905,47.6
SB-PILLAR1,512498.730,5760562.114,45.632,47.6
SB-PILLAR2,513071.265,5760702.870,46.118,47.6
HILLTOP,516912.404,5764480.557,132.744,47.6
WATERTOWER,508115.883,5757036.219,61.350,47.6
SAME-SPOT,512340.512,5761205.338,48.217,47.6
NO-HEIGHT,512600.000,5761000.000,,
SKY,512350.512,5761205.338,5048.217,47.6
FAR,812340.512,5761205.338,48.217,47.6
`

// fuzzJob is the demo's instrument and settings, with a second profile
// whose rows' prism constants are the ones applied; angle_unit is added
// per fixture.
const fuzzJob = `
crs = "EPSG:25832"
length_unit = "m"
reduction_datum = "ellipsoid"
refraction_k = 0.13
default_instrument = "ts-red"
[tolerance]
constant_mm = 3
ppm = 3
[default_atmosphere]
temperature_c = 10
pressure_hpa = 1008
humidity_pct = 75
[centring]
instrument_mm = 0.5
target_mm = 0.5
height_mm = 1
[instrument.ts-red]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
additive_constant_mm = 0.3
scale_ppm = 0.8
prism_constant_mm = -30
field_ppm = 0
field_prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5
[instrument.ts-applied]
wavelength_um = 0.850
reference_refractivity = 281.8
prism_constant_mm = 0
field_prism_constant_mm = 0
row_prism_constant = "applied"
spec_mm = 2
spec_ppm = 2
`

// fuzzFixture is one plan and its projector, made once per angle unit:
// PROJ's handles are cgo, too costly to make per input.
type fuzzFixture struct {
	plan    *job.Plan
	job     *jobconfig.Job
	proj    *geodesic.Projector
	units   report.Units
	numeric []bool // reduced.csv's columns that hold numbers
}

var fuzzAngleUnits = []string{"deg", "dms", "gon", "rad"}

func newFuzzFixtures(f *testing.F) []fuzzFixture {
	f.Helper()
	var out []fuzzFixture
	for _, au := range fuzzAngleUnits {
		jf, err := jobconfig.Parse([]byte("angle_unit = \""+au+"\"\n"+fuzzJob), "job.toml")
		require.NoError(f, err)
		j, err := jobconfig.Resolve(jf, "job.toml")
		require.NoError(f, err)
		crs, err := geodesic.OpenCRS(j.CRS)
		require.NoError(f, err)
		g, err := geodesic.NewGeodesic(crs.Ellipsoid())
		require.NoError(f, err)
		p, err := crs.NewProjector()
		require.NoError(f, err)
		f.Cleanup(p.Close)
		pts, _, err := obsfile.ReadPoints(strings.NewReader(fuzzPoints), "points.csv", obsfile.PointOptions{GridUnit: units.Metre, HeightUnit: j.LengthUnit})
		require.NoError(f, err)
		control, err := job.ResolveControl(pts, "points.csv", p, job.Separations{})
		require.NoError(f, err)
		plan, err := job.NewPlan(j.Settings(), crs, g, control)
		require.NoError(f, err)
		out = append(out, fuzzFixture{plan: plan, job: j, proj: p, units: report.Units{Length: j.LengthUnit, Angle: j.AngleUnit}})
	}
	return out
}

// FuzzReduceRow takes rows of an observation file through the whole
// chain — parse, instrument, atmosphere, geometry, grid, residuals — and
// formats each as reduced.csv or rejects.csv does: no input panics, every
// row is reduced or rejected with a reason that names its file and line,
// and no number of a reduced row, written or kept, is NaN or infinite. `go test
// ./reduce/job -run '^$' -fuzz FuzzReduceRow` explores further than the
// seeds (testdata/fuzz/FuzzReduceRow: the demo's rows and the bad-input
// corpus's, cmd/geored/testdata/badinput).
func FuzzReduceRow(f *testing.F) {
	fixtures := newFuzzFixtures(f)
	// The columns of reduced.csv that hold numbers: those that do in
	// rows reduced by either route, the heights and the zenith angle
	// (fixture 0 reads degrees; the columns are the same in every unit).
	numeric := make([]bool, len(report.ReducedHeader(fixtures[0].units)))
	for _, row := range []string{
		"ref,NB-PILLAR1,SB-PILLAR1,662.6729,90.2237,1.569,1.600,8.5,1007.9,77,,,,,,\n",
		"ref,NB-PILLAR1,NO-HEIGHT,380.0,90.0,1.569,1.600,8.5,1007.9,77,,,,,,\n",
	} {
		got := reduceFuzzRow(f, &fixtures[0], row)
		if len(got) != 1 {
			f.Fatalf("the reference row %q is not reduced", row)
		}
		for i, v := range got[0] {
			if _, err := strconv.ParseFloat(v, 64); err == nil {
				numeric[i] = true
			}
		}
	}
	n := 0
	for _, ok := range numeric {
		if ok {
			n++
		}
	}
	if n < 40 {
		f.Fatalf("only %d numeric columns in reduced.csv", n)
	}
	for i := range fixtures {
		fixtures[i].numeric = numeric
	}
	f.Add("1,NB-PILLAR1,SB-PILLAR1,662.6729,90.13254,1.569,1.600,8.5,1007.9,77,,,,,,", uint8(1))
	f.Add("x,NB-PILLAR1,SAME-SPOT,1.0,90,1.5,1.5,,,,,,,,,", uint8(0))
	f.Add("x,SKY,NB-PILLAR1,5000,179.99,0,0,,,,,,,,,ts-applied", uint8(2))
	f.Add("x,NB-PILLAR1,FAR,300000,90,0,0,-60,300,0,60,1100,100,-100,-100,ts-applied", uint8(3))
	f.Fuzz(func(t *testing.T, rows string, unit uint8) {
		reduceFuzzRow(t, &fixtures[int(unit)%len(fixtures)], rows)
	})
}

// reduceFuzzRow reduces the rows under fuzzHeader and checks each; it
// returns the fields of the reduced rows as written.
func reduceFuzzRow(t testing.TB, fx *fuzzFixture, rows string) [][]string {
	t.Helper()
	j := fx.job
	r, _, err := obsfile.NewObsReader(strings.NewReader(fuzzHeader+rows), "obs.csv", obsfile.ObsOptions{LengthUnit: j.LengthUnit, AngleUnit: j.AngleUnit, Limits: j.Limits})
	if err != nil {
		t.Fatalf("the fixed header: %v", err)
	}
	var reduced [][]string
	for range 1000 {
		o, err := r.Next()
		if errors.Is(err, io.EOF) {
			return reduced
		}
		var re *obsfile.RowError
		if err != nil && !errors.As(err, &re) {
			// the file stops (broken quoting, a lone CR, a limit): the
			// error must say where
			if !strings.Contains(err.Error(), "obs.csv:") {
				t.Fatalf("an error that ends the file without its name and line: %v", err)
			}
			return reduced
		}
		res := job.Result{Obs: o}
		job.ReduceOne(fx.plan, fx.proj, &res, err)
		if res.Rejected {
			if res.File != "obs.csv" || res.LineNo < 2 || !strings.HasPrefix(res.Reason, fmt.Sprintf("obs.csv:%d", res.LineNo)) {
				t.Fatalf("a reject without its file and line: %s:%d %q", res.File, res.LineNo, res.Reason)
			}
			// A value is clipped to 200 bytes (obsfile.Clip), which %q
			// may show in 800 (\xd1 for each byte of broken UTF-8): a
			// reason that echoes two is under 2,000.
			if len(res.Reason) > 2000 {
				t.Fatalf("a reason of %d bytes: %.300q…", len(res.Reason), res.Reason)
			}
			if got := parseRow(t, report.AppendRejectRow(nil, &res)); len(got) != len(report.RejectsHeader) {
				t.Fatalf("a reject row of %d fields, want %d: %q", len(got), len(report.RejectsHeader), got)
			}
			continue
		}
		fields := parseRow(t, report.AppendReducedRow(nil, &res, fx.units))
		header := report.ReducedHeader(fx.units)
		if len(fields) != len(header) {
			t.Fatalf("a reduced row of %d fields, want %d: %q", len(fields), len(header), fields)
		}
		for i, v := range fields {
			if fx.numeric == nil || !fx.numeric[i] || v == "" {
				continue
			}
			x, err := strconv.ParseFloat(v, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				t.Fatalf("reduced %s:%d (%q): %s = %q, want a finite number", o.File, o.Line, o.Raw(), header[i], v)
			}
		}
		// Nor is any number the chain kept for the row, written or not.
		var bad []string
		nonFinite(reflect.ValueOf(res.Reduction), "Reduction", &bad)
		nonFinite(reflect.ValueOf(res.Line), "Line", &bad)
		if len(bad) > 0 {
			t.Fatalf("reduced %s:%d (%q): not finite: %s", o.File, o.Line, o.Raw(), strings.Join(bad, ", "))
		}
		reduced = append(reduced, fields)
	}
	return reduced
}

// nonFinite adds to bad the path of each float64 in v, a struct, that is
// NaN or infinite.
func nonFinite(v reflect.Value, path string, bad *[]string) {
	switch v.Kind() {
	case reflect.Float64:
		if x := v.Float(); math.IsNaN(x) || math.IsInf(x, 0) {
			*bad = append(*bad, path)
		}
	case reflect.Struct:
		for i := range v.NumField() {
			nonFinite(v.Field(i), path+"."+v.Type().Field(i).Name, bad)
		}
	case reflect.Array, reflect.Slice:
		for i := range v.Len() {
			nonFinite(v.Index(i), fmt.Sprintf("%s[%d]", path, i), bad)
		}
	}
}

// parseRow reads one formatted output row back as CSV.
func parseRow(t testing.TB, row []byte) []string {
	t.Helper()
	recs, err := csv.NewReader(strings.NewReader(string(row))).ReadAll()
	if err != nil || len(recs) != 1 {
		t.Fatalf("an output row that is not one CSV record (%v): %q", err, row)
	}
	return recs[0]
}
