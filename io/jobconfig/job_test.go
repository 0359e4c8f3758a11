package jobconfig

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
)

const full = `
crs = "EPSG:25832"
points = "points.csv"
observations = ["day1.csv", "day2.csv"]
out = "out"
length_unit = "m"
angle_unit = "gon"
geoid = "egm96_15.gtx"
refraction_k = 0.14
critical_value = 3.0
default_instrument = "ts1"

[tolerance]
constant_mm = 5
ppm = 5

[default_atmosphere]
temperature_c = 15
pressure_hpa = 1000
humidity_pct = 50

[centring]
instrument_mm = 0.5
target_mm = 1.0
height_mm = 2

[instrument.ts1]
wavelength_um = 0.658
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
additive_constant_mm = 0.4
scale_ppm = -1.5
prism_constant_mm = -30
field_ppm = 0
field_prism_constant_mm = -30
spec_mm = 1
spec_ppm = 1.5

[instrument.old]
wavelength_um = 0.910
modulation_hz = 14985520
unit_length_m = 10
spec_mm = 3
spec_ppm = 3
spec_rule = "linear"
spec_level = "95"
`

func TestResolveFullJob(t *testing.T) {
	f, err := Parse([]byte(full), "job.toml")
	require.NoError(t, err)
	j, err := Resolve(f, "job.toml")
	require.NoError(t, err)
	assert.Equal(t, "EPSG:25832", j.CRS)
	assert.Equal(t, units.Gons, j.AngleUnit)
	assert.Equal(t, reduce.DatumEllipsoid, j.Datum)
	assert.Equal(t, 0.14, j.K)
	assert.True(t, j.HasTolerance)
	assert.Equal(t, "5 mm + 5 ppm, linear, 95 %", j.ToleranceText)
	assert.Equal(t, []string{"old", "ts1"}, j.ProfileNames())
	ts1 := j.Profiles["ts1"]
	assert.InDelta(t, 0.0004, ts1.Chain.Instrument.AdditiveConstant, 1e-15)
	assert.InDelta(t, -0.030, ts1.PrismConstant, 1e-15)
	assert.InDelta(t, -0.030, ts1.Chain.Field.PrismConstant, 1e-15)
	assert.Equal(t, 0.14, ts1.Chain.K)
	assert.InDelta(t, 0.0005, ts1.Chain.Budget.CentringInstrument, 1e-15)
	assert.InDelta(t, 0.002, ts1.Chain.Budget.HeightB, 1e-15)
	assert.InDelta(t, 0.001, ts1.Chain.Budget.Instrument.Constant, 1e-15)
	assert.Equal(t, reduce.RSS, ts1.Chain.Budget.Instrument.Rule, "an EDM spec is RSS at 1σ unless the job says otherwise")
	assert.Equal(t, 1000.0, ts1.Chain.DefaultAtmosphere.PressureHPa)
	// n_ref = c / (2 f U) (REFERENCES.md §1; IAG 1999 resolution):
	// c = 299 792 458 m/s, f = 14 985 520 Hz, U = 10 m → n = 1.000 287 06…
	old := j.Profiles["old"]
	assert.InDelta(t, (299792458/(2*14985520*10.0)-1)*1e6, old.Chain.Carrier.ReferenceRefractivity, 1e-6, "N_ref, ppm")
	assert.Equal(t, reduce.Percent95, old.Chain.Budget.Instrument.Level)
	// no zenith_arcsec or refraction_k_sigma: the defaults, 5″ and 0.1
	assert.InDeltaf(t, 5/206264.80624709636, float64(ts1.Chain.Budget.Zenith), 1e-15, "default σ of z (rad)")
	assert.Equal(t, 0.1, ts1.Chain.Budget.K, "default σ of k")
}

// The job's own σ of z and k replace the defaults, zero included.
func TestCentringZenithAndK(t *testing.T) {
	in := strings.Replace(full, "height_mm = 2\n", "height_mm = 2\nzenith_arcsec = 1.5\nrefraction_k_sigma = 0\n", 1)
	require.NotEqual(t, full, in)
	f, err := Parse([]byte(in), "job.toml")
	require.NoError(t, err)
	j, err := Resolve(f, "job.toml")
	require.NoError(t, err)
	b := j.Profiles["ts1"].Chain.Budget
	assert.InDeltaf(t, 1.5/206264.80624709636, float64(b.Zenith), 1e-15, "σ of z (rad)")
	assert.Equal(t, 0.0, b.K, "σ of k")
}

func TestParseErrors(t *testing.T) {
	_, err := Parse([]byte("crs = \"EPSG:25832\"\nrefraction_k = = 3\n"), "job.toml")
	assert.ErrorContains(t, err, "job.toml:2:")
	_, err = Parse([]byte("crs = \"EPSG:25832\"\nrefraction = 0.13\n[instrument.a]\nwavelenght_um = 0.658\n"), "job.toml")
	assert.ErrorContains(t, err, "unknown setting(s) instrument.a.wavelenght_um, refraction")
}

func TestResolveErrorsNameTheirKeys(t *testing.T) {
	in := `
length_unit = "ft"
angle_unit = "grads?"
reduction_datum = "moon"
refraction_k = 7
geoid_separation_m = 500
[tolerance]
class = "no such class"
[default_atmosphere]
temperature_c = 90
pressure_hpa = 1000
humidity_pct = 50
[instrument.a]
spec_mm = 1
[instrument.b]
wavelength_um = 0.658
reference_refractivity = 280
unit_length_m = 10
spec_mm = 0
calibrated = "2026-13-01"
`
	f, err := Parse([]byte(in), "job.toml")
	require.NoError(t, err)
	_, err = Resolve(f, "job.toml")
	require.Error(t, err)
	for _, want := range []string{
		"job.toml: crs: missing",
		"job.toml: length_unit:",
		"job.toml: angle_unit:",
		"job.toml: reduction_datum: \"moon\"",
		"job.toml: refraction_k: 7",
		"job.toml: geoid_separation_m: 500",
		"job.toml: tolerance.class:",
		"job.toml: default_atmosphere: temperature_c 90",
		"job.toml: instrument.a.wavelength_um: missing",
		"job.toml: instrument.b: give exactly one of",
		"job.toml: instrument.b.spec_mm",
		"job.toml: instrument.b.calibrated: \"2026-13-01\": want the day of the calibration, YYYY-MM-DD",
	} {
		assert.ErrorContains(t, err, want)
	}
}

func TestToleranceClass(t *testing.T) {
	f, err := Parse([]byte("crs = \"EPSG:25832\"\n[tolerance]\nclass = \""+reduce.AccuracyClasses()[0]+"\"\n"), "job.toml")
	require.NoError(t, err)
	j, err := Resolve(f, "job.toml")
	require.NoError(t, err)
	assert.True(t, j.HasTolerance)
	assert.Contains(t, j.ToleranceText, reduce.AccuracyClasses()[0])

	f.Tolerance.PPM = new(float64)
	_, err = Resolve(f, "job.toml")
	assert.ErrorContains(t, err, "not both")
}

// job_alpha sets the critical value for the whole job once the rows are
// counted (Šidák, reduce.SidakCritical); it and critical_value exclude
// each other, and the global test's α defaults to 5 %.
func TestJobAlpha(t *testing.T) {
	resolve := func(extra string) (*Job, error) {
		text := strings.Replace(full, "critical_value = 3.0\n", extra, 1)
		f, err := Parse([]byte(text), "job.toml")
		require.NoError(t, err)
		return Resolve(f, "job.toml")
	}
	j, err := resolve("job_alpha = 0.05\nglobal_test_alpha = 0.01\n")
	require.NoError(t, err)
	assert.True(t, j.HasJobAlpha)
	assert.Equal(t, 0.01, j.GlobalAlpha)
	assert.Equal(t, reduce.DefaultCriticalValue, j.Critical, "until the rows are counted")
	require.NoError(t, j.SetTests(100))
	// Šidák at α 0.05 over 100 tests: 3.4740 (testdata/reduce/sidak_python.txt).
	assert.InDelta(t, 3.473978869154039, j.Critical, 1e-9)
	for name, p := range j.Profiles {
		assert.Equalf(t, j.Critical, p.Chain.Test.Critical, "profile %s tests at the job's critical value", name)
	}

	j, err = resolve("")
	require.NoError(t, err)
	assert.Equal(t, DefaultGlobalTestAlpha, j.GlobalAlpha)
	require.NoError(t, j.SetTests(100))
	assert.Equal(t, reduce.DefaultCriticalValue, j.Critical, "without job_alpha the count changes nothing")

	_, err = resolve("critical_value = 3.0\njob_alpha = 0.05\n")
	assert.ErrorContains(t, err, "job.toml: job_alpha: give critical_value (one observation's test) or job_alpha (the whole job's), not both")
	_, err = resolve("job_alpha = 0.7\n")
	assert.ErrorContains(t, err, "job.toml: job_alpha: 0.7: want the chance of any false flag in the whole job, between 0 and 0.5")
	_, err = resolve("global_test_alpha = 0\n")
	assert.ErrorContains(t, err, "job.toml: global_test_alpha: 0: want the global test's α between 0 and 0.5")
}

// delimiter is "auto" where the job gives none, and one of ",", ";" and
// "tab"; anything else is an error naming the key.
func TestDelimiterSetting(t *testing.T) {
	for text, want := range map[string]obsfile.Delimiter{"": obsfile.DelimiterAuto, `delimiter = "auto"`: obsfile.DelimiterAuto,
		`delimiter = ";"`: obsfile.Semicolon, `delimiter = "tab"`: obsfile.Tab, `delimiter = ","`: obsfile.Comma} {
		f, err := Parse([]byte(text+"\n"+full), "job.toml")
		require.NoError(t, err, text)
		j, err := Resolve(f, "job.toml")
		require.NoError(t, err, text)
		assert.Equal(t, want, j.Delimiter, text)
	}
	f, err := Parse([]byte("delimiter = \"|\"\n"+full), "job.toml")
	require.NoError(t, err)
	_, err = Resolve(f, "job.toml")
	require.Error(t, err)
	assert.Contains(t, err.Error(), `job.toml: delimiter: "|": want "auto"`)
}

// The curvature and refraction the field instrument applied to its
// horizontal and vertical distances: none by default, the radius's
// default where a mode is given, and each wrong key named.
func TestFieldCurvatureSettings(t *testing.T) {
	resolve := func(keys string) (*Job, error) {
		t.Helper()
		in := strings.Replace(full, "field_prism_constant_mm = -30\n", "field_prism_constant_mm = -30\n"+keys, 1)
		require.Equal(t, len(full)+len(keys), len(in), "the keys go into [instrument.ts1]")
		f, err := Parse([]byte(in), "job.toml")
		require.NoError(t, err)
		return Resolve(f, "job.toml")
	}
	j, err := resolve("")
	require.NoError(t, err)
	assert.Equal(t, reduce.FieldCurvature{}, j.Profiles["ts1"].Chain.Field.Curvature, "none by default")
	j, err = resolve("field_curvature_refraction = \"none\"\n")
	require.NoError(t, err)
	assert.Equal(t, reduce.FieldCurvature{}, j.Profiles["ts1"].Chain.Field.Curvature)
	j, err = resolve("field_curvature_refraction = \"both\"\nfield_refraction_k = 0.13\n")
	require.NoError(t, err)
	assert.Equal(t, reduce.FieldCurvature{Mode: reduce.FieldCurvatureBoth, K: 0.13, Radius: 6378000}, j.Profiles["ts1"].Chain.Field.Curvature)
	j, err = resolve("field_curvature_refraction = \"vertical\"\nfield_refraction_k = 0\nfield_earth_radius_m = 6370000\n")
	require.NoError(t, err)
	assert.Equal(t, reduce.FieldCurvature{Mode: reduce.FieldCurvatureVertical, K: 0, Radius: 6370000}, j.Profiles["ts1"].Chain.Field.Curvature)
	assert.Equal(t, reduce.FieldCurvature{}, j.Profiles["old"].Chain.Field.Curvature, "per profile")

	for keys, want := range map[string]string{
		"field_curvature_refraction = \"yes\"\n":                                                          `job.toml: instrument.ts1.field_curvature_refraction: "yes": want "none", "vertical"`,
		"field_curvature_refraction = \"both\"\n":                                                         `job.toml: instrument.ts1.field_refraction_k: missing: want the coefficient of refraction the instrument used for field_curvature_refraction = "both"`,
		"field_curvature_refraction = \"both\"\nfield_refraction_k = 1\n":                                 "job.toml: instrument.ts1.field_refraction_k: 1: want the coefficient of refraction the instrument used, 0 ≤ k < 1",
		"field_curvature_refraction = \"vertical\"\nfield_refraction_k = -0.1\n":                          "job.toml: instrument.ts1.field_refraction_k: -0.1: want",
		"field_curvature_refraction = \"both\"\nfield_refraction_k = 0.13\nfield_earth_radius_m = 6378\n": "job.toml: instrument.ts1.field_earth_radius_m: 6378: want the earth radius the instrument used, 6.3e+06..6.4e+06 m",
		"field_refraction_k = 0.13\n":                                                                     `job.toml: instrument.ts1.field_refraction_k: 0.13 given, but field_curvature_refraction is "none"`,
		"field_curvature_refraction = \"none\"\nfield_earth_radius_m = 6378000\n":                         `job.toml: instrument.ts1.field_earth_radius_m: 6.378e+06 given, but field_curvature_refraction is "none"`,
	} {
		_, err := resolve(keys)
		assert.ErrorContains(t, err, want, keys)
	}
}
