package jobconfig

import (
	"errors"
	"fmt"
	"maps"
	"math"
	"slices"
	"sort"
	"strings"
	"time"

	"github.com/golang/geo/s1"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/input"
)

// Defaults where the job says nothing.
const (
	// DefaultRefractionK is the coefficient of refraction for lines near
	// the ground in daytime, 0.13 (Gauss's value; common practice).
	DefaultRefractionK = 0.13
	// DefaultGlobalTestAlpha is the α of the global test of the variance
	// factor, 5 % (common practice for the overall test of a network).
	DefaultGlobalTestAlpha = 0.05

	// DefaultZenithSigmaArcsec is the σ of one zenith angle where the job
	// gives no [centring] zenith_arcsec, in arc-seconds: pointing and
	// reading of a 1″–3″ total station on a prism by day, with the
	// deflection of the vertical that a geoid model's slope leaves out,
	// a few arc-seconds each (common practice, from memory).
	DefaultZenithSigmaArcsec = 5.0
	// DefaultRefractionKSigma is the σ of the coefficient of refraction
	// where the job gives no [centring] refraction_k_sigma: k of sights a
	// few metres above the ground by day departs from 0.13 by about 0.1
	// (more over hot ground, at sunrise and at sunset; common practice,
	// from memory).
	DefaultRefractionKSigma = 0.1
)

// Job is a validated job: what the commands and the pipeline run on.
// Lengths are metres.
type Job struct {
	CRS          string
	Points       string
	Observations []string
	Out          string

	LengthUnit units.LengthUnit
	AngleUnit  units.AngleUnit
	Datum      reduce.Datum

	// Geoid is the grid for N ("" for the default grid, "none" for no
	// grid); ConstantN is one N for the whole job where HasConstantN.
	Geoid        string
	ConstantN    float64
	HasConstantN bool

	K float64
	// Critical is the critical value for |w| of every observation. With
	// HasJobAlpha it holds JobAlpha for the whole job (Šidák over the
	// job's observation rows) and is set by SetTests once the rows are
	// counted; until then it is the per-observation default.
	Critical    float64
	JobAlpha    float64
	HasJobAlpha bool
	// GlobalAlpha is the α of the global test of the variance factor.
	GlobalAlpha float64
	// Tolerance is the acceptance limit; HasTolerance is false when the
	// job gave none. ToleranceText says it in words.
	Tolerance     reduce.DistanceSpec
	HasTolerance  bool
	ToleranceText string

	// DefaultAtmosphere is used where a row records no meteorology.
	DefaultAtmosphere    reduce.Atmosphere
	HasDefaultAtmosphere bool

	Profiles map[string]Profile
	// Serials names the profile of each serial_number a profile gives.
	Serials map[string]string
	// Instruments are the profiles' settings as read, for the record.
	Instruments       map[string]Instrument
	DefaultInstrument string
	Workers           int

	// Limits bound what the readers take of any one input file.
	Limits obsfile.Limits
	// Delimiter of the points and observation files' fields;
	// obsfile.DelimiterAuto finds it from each file's header.
	Delimiter obsfile.Delimiter
}

// Profile is one instrument profile, ready for the chain; Job.Instruments
// keeps its settings as read.
type Profile = input.Profile

// Settings are what a run of the pipeline (reduce/job) reads of the job.
// Its profiles are the job's map, so that SetTests reaches them.
func (j *Job) Settings() *input.Settings {
	return &input.Settings{Datum: j.Datum, Profiles: j.Profiles, DefaultInstrument: j.DefaultInstrument,
		HasDefaultAtmosphere: j.HasDefaultAtmosphere, Workers: j.Workers, LengthUnit: j.LengthUnit}
}

// ProfileNames lists the profiles in order.
func (j *Job) ProfileNames() []string {
	names := make([]string, 0, len(j.Profiles))
	for n := range j.Profiles {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// Resolve validates f and builds the Job. Every problem is reported, each
// naming its key.
func Resolve(f File, name string) (*Job, error) { return ResolveFor(f, name, Needs{}) }

// ResolveFor is Resolve for a command that cannot run without the
// settings need names: a missing one is reported with every other
// problem of the job, at once.
func ResolveFor(f File, name string, need Needs) (*Job, error) {
	pr := &problems{file: name}
	j := &Job{CRS: strings.TrimSpace(f.CRS), Points: f.Points, Observations: f.Observations, Out: f.Out, Geoid: f.Geoid, Workers: f.Workers}
	if j.CRS == "" {
		pr.bad("crs", "missing: want EPSG:nnnn or a PROJ string of the job's projected CRS")
	}
	var err error
	if j.LengthUnit, err = units.ParseLengthUnit(or(f.LengthUnit, "m")); err != nil {
		pr.bad("length_unit", "%v", err)
	}
	if j.AngleUnit, err = units.ParseAngleUnit(or(f.AngleUnit, "deg")); err != nil {
		pr.bad("angle_unit", "%v", err)
	}
	switch strings.ToLower(or(f.ReductionDatum, "ellipsoid")) {
	case "ellipsoid":
		j.Datum = reduce.DatumEllipsoid
	case "sea-level", "sea_level", "geoid":
		j.Datum = reduce.DatumSeaLevel
	default:
		pr.bad("reduction_datum", "%q: want ellipsoid or sea-level", f.ReductionDatum)
	}
	if f.GeoidSeparationM != nil {
		if n := *f.GeoidSeparationM; !finite(n) || math.Abs(n) > 200 {
			pr.bad("geoid_separation_m", "%v: want a geoid separation within ±200 m", n)
		}
		j.ConstantN, j.HasConstantN = *f.GeoidSeparationM, true
	}
	j.K = DefaultRefractionK
	if f.RefractionK != nil {
		if k := *f.RefractionK; !finite(k) || k < -2 || k > 2 {
			pr.bad("refraction_k", "%v: want a coefficient of refraction in -2..2 (0.13 is usual by day)", k)
		}
		j.K = *f.RefractionK
	}
	j.Critical = reduce.DefaultCriticalValue
	if f.CriticalValue != nil {
		if c := *f.CriticalValue; !finite(c) || c <= 0 {
			pr.bad("critical_value", "%v: want a positive critical value for |w| (3.29 is α = 0.1 %% two-sided)", c)
		}
		j.Critical = *f.CriticalValue
	}
	if f.JobAlpha != nil {
		if a := *f.JobAlpha; !(a > 0 && a < 0.5) {
			pr.bad("job_alpha", "%v: want the chance of any false flag in the whole job, between 0 and 0.5 (0.05 is usual)", a)
		}
		if f.CriticalValue != nil {
			pr.bad("job_alpha", "give critical_value (one observation's test) or job_alpha (the whole job's), not both")
		}
		j.JobAlpha, j.HasJobAlpha = *f.JobAlpha, true
	}
	j.GlobalAlpha = DefaultGlobalTestAlpha
	if f.GlobalTestAlpha != nil {
		if a := *f.GlobalTestAlpha; !(a > 0 && a < 0.5) {
			pr.bad("global_test_alpha", "%v: want the global test's α between 0 and 0.5 (0.05 is usual)", a)
		}
		j.GlobalAlpha = *f.GlobalTestAlpha
	}
	if f.Workers < 0 {
		pr.bad("workers", "%d: want 0 (all cores) or a positive count", f.Workers)
	}
	j.resolveTolerance(f.Tolerance, pr)
	j.resolveLimits(f.Limits, pr)
	if j.Delimiter, err = obsfile.ParseDelimiter(f.Delimiter); err != nil {
		pr.bad(obsfile.DelimiterKey, "%v", err)
	}
	if f.Atmosphere != nil {
		a, ok := atmosphere(*f.Atmosphere, "default_atmosphere", pr)
		j.DefaultAtmosphere, j.HasDefaultAtmosphere = a, ok
	}
	budget := j.budget(f.Centring, pr)

	j.Profiles = map[string]Profile{}
	j.Instruments = map[string]Instrument{}
	for pname, in := range f.Instrument {
		p, ok := profile(pname, in, pr)
		if !ok {
			continue
		}
		p.Chain.DefaultAtmosphere = j.DefaultAtmosphere
		p.Chain.K = j.K
		p.Chain.Test = reduce.Test{Critical: j.Critical, Tolerance: j.Tolerance}
		b := budget
		b.Instrument = p.Chain.Budget.Instrument
		p.Chain.Budget = b
		j.Profiles[pname] = p
		j.Instruments[pname] = in
	}
	j.Serials = map[string]string{}
	for _, pname := range slices.Sorted(maps.Keys(f.Instrument)) {
		sn := strings.TrimSpace(f.Instrument[pname].SerialNumber)
		if sn == "" {
			continue
		}
		if other, dup := j.Serials[sn]; dup {
			pr.bad("instrument."+pname+".serial_number", "%q is [instrument.%s]'s serial_number too: one instrument, one profile", sn, other)
			continue
		}
		j.Serials[sn] = pname
	}
	j.DefaultInstrument = f.DefaultInstrument
	if j.DefaultInstrument == "" && len(f.Instrument) == 1 {
		for n := range f.Instrument {
			j.DefaultInstrument = n
		}
	}
	if j.DefaultInstrument != "" {
		if _, ok := f.Instrument[j.DefaultInstrument]; !ok {
			pr.bad("default_instrument", "%q is not an [instrument.NAME] profile", j.DefaultInstrument)
		}
	}
	need.check(f, j, pr)
	if len(pr.errs) > 0 {
		return nil, errors.Join(pr.errs...)
	}
	return j, nil
}

// SetTests sets the critical value for |w| from the number of
// observation rows the job will test, n, when the job gives job_alpha:
// Šidák's critical value that holds JobAlpha over n tests
// (reduce.SidakCritical). Without job_alpha it changes nothing.
func (j *Job) SetTests(n int) error {
	if !j.HasJobAlpha {
		return nil
	}
	c, err := reduce.SidakCritical(j.JobAlpha, max(n, 1))
	if err != nil {
		return err
	}
	j.Critical = c
	for name, p := range j.Profiles {
		p.Chain.Test.Critical = c
		j.Profiles[name] = p
	}
	return nil
}

func (j *Job) resolveTolerance(t Tolerance, pr *problems) {
	if t.Class != "" {
		if t.ConstantMM != nil || t.PPM != nil {
			pr.bad("tolerance", "give class or constant_mm and ppm, not both")
			return
		}
		c, err := reduce.AccuracyClassNamed(t.Class)
		if err != nil {
			pr.bad("tolerance.class", "%v", err)
			return
		}
		j.Tolerance, j.HasTolerance = c.Spec, true
		j.ToleranceText = fmt.Sprintf("%s (%s): %s", c.Name, c.Source, specText(c.Spec))
		return
	}
	if t.ConstantMM == nil && t.PPM == nil {
		return
	}
	spec := reduce.DistanceSpec{Constant: deref(t.ConstantMM) / 1000, PPM: deref(t.PPM), Rule: reduce.Linear, Level: reduce.Percent95}
	if spec.Constant < 0 || spec.PPM < 0 || !finite(spec.Constant) || !finite(spec.PPM) {
		pr.bad("tolerance", "constant_mm %v and ppm %v: want non-negative values", deref(t.ConstantMM), deref(t.PPM))
		return
	}
	if !(spec.Constant > 0 || spec.PPM > 0) {
		pr.bad("tolerance", "constant_mm and ppm are both zero: no residual could pass")
		return
	}
	var ok bool
	if spec.Rule, ok = rule(t.Rule, reduce.Linear); !ok {
		pr.bad("tolerance.rule", "%q: want linear or rss", t.Rule)
	}
	if spec.Level, ok = level(t.Level, reduce.Percent95); !ok {
		pr.bad("tolerance.level", "%q: want 95 or 1sigma", t.Level)
	}
	j.Tolerance, j.HasTolerance = spec, true
	j.ToleranceText = specText(spec)
}

func (j *Job) budget(c Centring, pr *problems) reduce.Budget {
	mm := func(key string, v *float64) float64 {
		if v == nil {
			return 0
		}
		if !finite(*v) || *v < 0 || *v > 1000 {
			pr.bad("centring."+key, "%v: want a σ in 0..1000 mm", *v)
			return 0
		}
		return *v / 1000
	}
	b := reduce.Budget{
		CentringInstrument: mm("instrument_mm", c.InstrumentMM),
		CentringTarget:     mm("target_mm", c.TargetMM),
		Control:            mm("control_mm", c.ControlMM),
	}
	b.HeightA = mm("height_mm", c.HeightMM)
	b.HeightB = b.HeightA
	// The σ of z and k serve the zenith route's distance and, on the
	// heights route, the check of the target's height against its zenith
	// angle: a job that gives none gets the defaults, not a zero that
	// would flag every sight.
	b.Zenith = s1.Angle(DefaultZenithSigmaArcsec / 3600 * math.Pi / 180)
	if c.ZenithArcsec != nil {
		if v := *c.ZenithArcsec; !finite(v) || v < 0 || v > 3600 {
			pr.bad("centring.zenith_arcsec", "%v: want a σ in 0..3600″", v)
		} else {
			b.Zenith = s1.Angle(v / 3600 * math.Pi / 180)
		}
	}
	b.K = DefaultRefractionKSigma
	if c.KSigma != nil {
		if v := *c.KSigma; !finite(v) || v < 0 || v > 1 {
			pr.bad("centring.refraction_k_sigma", "%v: want a σ in 0..1", v)
		} else {
			b.K = v
		}
	}
	return b
}

func profile(name string, in Instrument, pr *problems) (Profile, bool) {
	key := "instrument." + name
	n := len(pr.errs)
	var c reduce.Carrier
	var err error
	given := 0
	for _, set := range []bool{in.ReferenceAtmosphere != nil, in.ReferenceRefractivity != nil, in.ModulationHz != nil || in.UnitLengthM != nil} {
		if set {
			given++
		}
	}
	// The wavelength and the reference are reported together when both
	// are missing or wrong.
	wl := in.WavelengthUM != 0
	if !wl {
		pr.bad(key+".wavelength_um", "missing: want the carrier wavelength in µm (e.g. 0.658 for red, 0.850 for infrared)")
	}
	switch {
	case given != 1:
		pr.bad(key, "give exactly one of reference_atmosphere, reference_refractivity, or modulation_hz with unit_length_m (the EDM's reference for its ppm, from its manual)")
	case in.ReferenceAtmosphere != nil:
		a, ok := atmosphere(*in.ReferenceAtmosphere, key+".reference_atmosphere", pr)
		if ok && wl {
			c, err = reduce.CarrierFromReferenceAtmosphere(in.WavelengthUM, a)
		}
	case in.ReferenceRefractivity != nil:
		if wl {
			c, err = reduce.NewCarrier(in.WavelengthUM, *in.ReferenceRefractivity)
		}
	default:
		if in.ModulationHz == nil || in.UnitLengthM == nil {
			pr.bad(key, "modulation_hz and unit_length_m go together")
		} else if wl {
			c, err = reduce.CarrierFromModulation(in.WavelengthUM, *in.ModulationHz, *in.UnitLengthM)
		}
	}
	if err != nil {
		pr.bad(key, "%v", err)
	}
	for _, v := range []struct {
		k string
		x float64
	}{{"additive_constant_mm", in.AdditiveConstantMM}, {"prism_constant_mm", in.PrismConstantMM}, {"field_prism_constant_mm", in.FieldPrismConstantMM}} {
		if !finite(v.x) || math.Abs(v.x) > 1000 {
			pr.bad(key+"."+v.k, "%v: want a constant within ±1000 mm", v.x)
		}
	}
	for _, v := range []struct {
		k string
		x float64
	}{{"scale_ppm", in.ScalePPM}, {"field_ppm", in.FieldPPM}} {
		if !finite(v.x) || math.Abs(v.x) > 1000 {
			pr.bad(key+"."+v.k, "%v: want a value within ±1000 ppm", v.x)
		}
	}
	curv := fieldCurvature(key, in, pr)
	rowPrism, err := rowPrismReading(in.RowPrismConstant)
	if err != nil {
		pr.bad(key+".row_prism_constant", "%v", err)
	}
	spec := reduce.DistanceSpec{Constant: in.SpecMM / 1000, PPM: in.SpecPPM}
	if !(in.SpecMM > 0) || in.SpecPPM < 0 || !finite(in.SpecMM) || !finite(in.SpecPPM) {
		pr.bad(key+".spec_mm", "spec_mm %v, spec_ppm %v: want the EDM's specification a mm + b ppm, a > 0", in.SpecMM, in.SpecPPM)
	}
	var ok bool
	if spec.Rule, ok = rule(in.SpecRule, reduce.RSS); !ok {
		pr.bad(key+".spec_rule", "%q: want linear or rss", in.SpecRule)
	}
	if spec.Level, ok = level(in.SpecLevel, reduce.OneSigma); !ok {
		pr.bad(key+".spec_level", "%q: want 1sigma or 95", in.SpecLevel)
	}
	if in.Calibrated != "" {
		if _, err := time.Parse(time.DateOnly, in.Calibrated); err != nil {
			pr.bad(key+".calibrated", "%q: want the day of the calibration, YYYY-MM-DD", in.Calibrated)
		}
	}
	if len(pr.errs) != n {
		return Profile{}, false
	}
	return Profile{
		Name: name,
		Chain: reduce.Job{
			Instrument: reduce.Instrument{AdditiveConstant: in.AdditiveConstantMM / 1000, ScalePPM: in.ScalePPM},
			Field:      reduce.FieldSettings{PrismConstant: in.FieldPrismConstantMM / 1000, PPM: in.FieldPPM, Curvature: curv},
			Carrier:    c,
			Budget:     reduce.Budget{Instrument: spec},
		},
		PrismConstant: in.PrismConstantMM / 1000,
		RowPrism:      rowPrism,
	}, true
}

// fieldCurvature reads a profile's field_curvature_refraction,
// field_refraction_k and field_earth_radius_m: what curvature and
// refraction correction the instrument applied to the horizontal and
// vertical distances it stored.
func fieldCurvature(key string, in Instrument, pr *problems) reduce.FieldCurvature {
	var c reduce.FieldCurvature
	switch strings.ToLower(in.FieldCurvatureRefraction) {
	case "", "none":
		c.Mode = reduce.FieldCurvatureNone
	case "vertical":
		c.Mode = reduce.FieldCurvatureVertical
	case "both":
		c.Mode = reduce.FieldCurvatureBoth
	default:
		pr.bad(key+".field_curvature_refraction", "%q: want \"none\", \"vertical\" (the instrument corrected its vertical distance) or \"both\" (its horizontal and vertical distances)", in.FieldCurvatureRefraction)
		return c
	}
	if c.Mode == reduce.FieldCurvatureNone {
		// Nothing is dropped silently: a k or radius without a mode is a
		// setting that does nothing.
		if in.FieldRefractionK != nil {
			pr.bad(key+".field_refraction_k", "%v given, but field_curvature_refraction is \"none\": set it to \"vertical\" or \"both\", or remove the key", *in.FieldRefractionK)
		}
		if in.FieldEarthRadiusM != nil {
			pr.bad(key+".field_earth_radius_m", "%v given, but field_curvature_refraction is \"none\": set it to \"vertical\" or \"both\", or remove the key", *in.FieldEarthRadiusM)
		}
		return c
	}
	c.Radius = reduce.DefaultFieldEarthRadius
	if in.FieldEarthRadiusM != nil {
		if v := *in.FieldEarthRadiusM; !(v >= reduce.MinFieldEarthRadius && v <= reduce.MaxFieldEarthRadius) {
			pr.bad(key+".field_earth_radius_m", "%v: want the earth radius the instrument used, %g..%g m (from its manual; default %g)", v, reduce.MinFieldEarthRadius, reduce.MaxFieldEarthRadius, reduce.DefaultFieldEarthRadius)
		} else {
			c.Radius = v
		}
	}
	switch {
	case in.FieldRefractionK == nil:
		pr.bad(key+".field_refraction_k", "missing: want the coefficient of refraction the instrument used for field_curvature_refraction = %q, 0 ≤ k < 1 (from its settings)", c.Mode)
	case !(*in.FieldRefractionK >= 0 && *in.FieldRefractionK < reduce.MaxFieldK):
		pr.bad(key+".field_refraction_k", "%v: want the coefficient of refraction the instrument used, 0 ≤ k < 1", *in.FieldRefractionK)
	default:
		c.K = *in.FieldRefractionK
	}
	return c
}

// problems collects every problem of a job file, each naming its key.
type problems struct {
	file string
	errs []error
}

func (p *problems) bad(key, format string, a ...any) {
	p.errs = append(p.errs, fmt.Errorf("%s: %s: %s", p.file, key, fmt.Sprintf(format, a...)))
}

func atmosphere(a Atmosphere, key string, pr *problems) (reduce.Atmosphere, bool) {
	if a.TemperatureC == nil || a.PressureHPa == nil || a.HumidityPct == nil {
		pr.bad(key, "want temperature_c, pressure_hpa and humidity_pct")
		return reduce.Atmosphere{}, false
	}
	out := reduce.Atmosphere{TemperatureC: *a.TemperatureC, PressureHPa: *a.PressureHPa, HumidityPct: *a.HumidityPct}
	if err := CheckAtmosphere(out); err != nil {
		pr.bad(key, "%v", err)
		return reduce.Atmosphere{}, false
	}
	return out, true
}

// CheckAtmosphere checks that values are physically plausible for EDM
// work: −60..60 °C, 500..1100 hPa, 0..100 %.
func CheckAtmosphere(a reduce.Atmosphere) error {
	switch {
	case !finite(a.TemperatureC) || a.TemperatureC < -60 || a.TemperatureC > 60:
		return fmt.Errorf("temperature_c %v: want -60..60 °C", a.TemperatureC)
	case !finite(a.PressureHPa) || a.PressureHPa < 500 || a.PressureHPa > 1100:
		return fmt.Errorf("pressure_hpa %v: want 500..1100 hPa", a.PressureHPa)
	case !finite(a.HumidityPct) || a.HumidityPct < 0 || a.HumidityPct > 100:
		return fmt.Errorf("humidity_pct %v: want 0..100 %%", a.HumidityPct)
	}
	return nil
}

func rule(s string, def reduce.Combination) (reduce.Combination, bool) {
	switch strings.ToLower(s) {
	case "":
		return def, true
	case "linear":
		return reduce.Linear, true
	case "rss":
		return reduce.RSS, true
	}
	return 0, false
}

func level(s string, def reduce.Level) (reduce.Level, bool) {
	switch strings.ToLower(s) {
	case "":
		return def, true
	case "1sigma":
		return reduce.OneSigma, true
	case "95", "95%":
		return reduce.Percent95, true
	}
	return 0, false
}

// specText writes a spec as "5 mm + 5 ppm, linear, 95 %".
func specText(s reduce.DistanceSpec) string {
	r := map[reduce.Combination]string{reduce.Linear: "linear", reduce.RSS: "RSS"}[s.Rule]
	l := map[reduce.Level]string{reduce.OneSigma: "1σ", reduce.Percent95: "95 %"}[s.Level]
	return fmt.Sprintf("%g mm + %g ppm, %s, %s", s.Constant*1000, s.PPM, r, l)
}

// SpecText is specText for callers that record settings.
func SpecText(s reduce.DistanceSpec) string { return specText(s) }

func or(s, def string) string {
	if strings.TrimSpace(s) == "" {
		return def
	}
	return s
}

func deref(p *float64) float64 {
	if p == nil {
		return 0
	}
	return *p
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// ObsOptions are the job's units, limits and delimiter for reading its
// observation files.
func (j *Job) ObsOptions() obsfile.ObsOptions {
	return obsfile.ObsOptions{LengthUnit: j.LengthUnit, AngleUnit: j.AngleUnit, Limits: j.Limits, Delimiter: j.Delimiter}
}
