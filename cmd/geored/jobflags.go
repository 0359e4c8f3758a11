package main

import (
	"flag"
	"fmt"
	"path/filepath"
	"strings"

	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/units"
)

// jobFlags are the job settings that can be given as flags; a flag that is
// set wins over the config file.
type jobFlags struct {
	config                                                 string
	crs, points, out, lengthUnit, angleUnit, datum, geoid  string
	geoidN, k, critical, jobAlpha, globalAlpha             float64
	tolerance, atmosphere, delimiter                       string
	workers                                                int
	profile, wavelength, refAtmos, spec, rowPrism          string
	refN, addMM, scalePPM, prismMM, fieldPPM, fieldPrismMM float64
	fieldCurvature                                         string
	fieldK, fieldRadius                                    float64
	set                                                    map[string]bool
	limits                                                 limitFlags
}

func (f *jobFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&f.config, "config", "", "job settings file (TOML); flags below win over it")
	fs.StringVar(&f.crs, "crs", "", "projected CRS of the job: EPSG:nnnn or a PROJ string (config: crs)")
	fs.StringVar(&f.points, "points", "", "points CSV: id and lat,lon[,ellipsoid_height] (degrees, length unit) or easting,northing[,elevation] (CRS unit, length unit), optional geoid_separation (config: points)")
	fs.StringVar(&f.out, "out", "", "output folder (config: out; default geored-out)")
	fs.StringVar(&f.lengthUnit, "length-unit", "", "unit of slope distances and heights in the files: m, us-ft (1200/3937 m) or intl-ft (0.3048 m) (config: length_unit; default m)")
	fs.StringVar(&f.angleUnit, "angle-unit", "", "unit of zenith angles: deg, dms (packed DDD.MMSS), gon or rad (config: angle_unit; default deg)")
	fs.StringVar(&f.datum, "reduction-datum", "", "ellipsoid (h = H + N) or sea-level (legacy: orthometric heights, the geoid) (config: reduction_datum; default ellipsoid)")
	fs.StringVar(&f.geoid, "geoid", "", "geoid grid for N: a PROJ grid name or file, or 'none' (config: geoid; default egm96_15.gtx)")
	fs.Float64Var(&f.geoidN, "geoid-separation-m", 0, "one geoid separation N for the whole job, metres (config: geoid_separation_m)")
	fs.Float64Var(&f.k, "k", 0, "coefficient of refraction, dimensionless (config: refraction_k; default 0.13)")
	fs.Float64Var(&f.critical, "critical", 0, "critical value for the standardized residual |w| (config: critical_value; default 3.29, α = 0.1 % two-sided)")
	fs.Float64Var(&f.jobAlpha, "job-alpha", 0, "instead of -critical: the chance of any false flag in the whole job, e.g. 0.05; the critical value for |w| is then Šidák's over the job's observation rows (config: job_alpha)")
	fs.Float64Var(&f.globalAlpha, "global-test-alpha", 0, "α of the global test of the variance factor over all reduced observations (config: global_test_alpha; default 0.05)")
	fs.StringVar(&f.tolerance, "tolerance", "", "tolerance of a residual: 'A mm + B ppm' (linear, 95 %) or an accuracy class name (config: [tolerance])")
	fs.StringVar(&f.atmosphere, "default-atmosphere", "", "atmosphere for rows without one: 'T,P,RH' in °C, hPa, % (config: [default_atmosphere])")
	fs.IntVar(&f.workers, "workers", 0, "worker goroutines; 0 uses every core (config: workers)")
	fs.StringVar(&f.profile, "instrument", "", "instrument profile the flags below set (config: [instrument.NAME]; default: the job's default_instrument, else 'default')")
	fs.StringVar(&f.wavelength, "wavelength-um", "", "carrier wavelength of the EDM, µm (config: wavelength_um)")
	fs.StringVar(&f.refAtmos, "reference-atmosphere", "", "the EDM's reference atmosphere 'T,P,RH' in °C, hPa, % (config: reference_atmosphere)")
	fs.Float64Var(&f.refN, "reference-refractivity", 0, "the EDM's reference group refractivity N_ref, ppm (config: reference_refractivity)")
	fs.Float64Var(&f.addMM, "additive-constant-mm", 0, "additive constant from calibration, mm (config: additive_constant_mm)")
	fs.Float64Var(&f.scalePPM, "scale-ppm", 0, "scale correction from calibration, ppm (config: scale_ppm)")
	fs.Float64Var(&f.prismMM, "prism-constant-mm", 0, "prism constant of the targets where a row gives none, mm (config: prism_constant_mm)")
	fs.Float64Var(&f.fieldPPM, "field-ppm", 0, "ppm the field instrument already applied, ppm (config: field_ppm)")
	fs.Float64Var(&f.fieldPrismMM, "field-prism-constant-mm", 0, "prism constant the field instrument already applied, mm (config: field_prism_constant_mm)")
	fs.StringVar(&f.fieldCurvature, "field-curvature-refraction", "", "which of its horizontal and vertical distances the field instrument corrected for curvature and refraction: none, vertical or both (config: field_curvature_refraction; default none)")
	fs.Float64Var(&f.fieldK, "field-refraction-k", 0, "coefficient of refraction the field instrument used in that correction (config: field_refraction_k; required unless none)")
	fs.Float64Var(&f.fieldRadius, "field-earth-radius-m", 0, "earth radius the field instrument used in that correction, m (config: field_earth_radius_m; default 6378000)")
	fs.StringVar(&f.rowPrism, "row-prism-constant", "", "what a row's prism_constant_mm is: 'target' (the instrument applied field_prism_constant_mm) or 'applied' (the instrument applied the row's own constant) (config: row_prism_constant)")
	fs.StringVar(&f.spec, "spec", "", "EDM specification 'A mm + B ppm' (RSS, 1σ) (config: spec_mm, spec_ppm)")
	fs.StringVar(&f.delimiter, "delimiter", "", "delimiter of the points and observation files' fields: auto (found from each file's header), ',', ';' or tab; a decimal comma is read in ';' and tab files only (config: delimiter; default auto)")
	f.limits.register(fs)
}

// file loads the config file (if any) and lays the set flags over it.
func (f *jobFlags) file(fs *flag.FlagSet) (jobconfig.File, string, error) {
	f.set = map[string]bool{}
	fs.Visit(func(fl *flag.Flag) { f.set[fl.Name] = true })
	var jf jobconfig.File
	name := "flags"
	if f.config != "" {
		var err error
		if jf, err = jobconfig.ReadFile(f.config); err != nil {
			return jf, "", err
		}
		name = f.config
	}
	str := func(flag string, dst *string, v string) {
		if f.set[flag] {
			*dst = v
		}
	}
	num := func(flag string, dst **float64, v float64) {
		if f.set[flag] {
			x := v
			*dst = &x
		}
	}
	str("crs", &jf.CRS, f.crs)
	str("points", &jf.Points, f.points)
	str("out", &jf.Out, f.out)
	str("length-unit", &jf.LengthUnit, f.lengthUnit)
	str("angle-unit", &jf.AngleUnit, f.angleUnit)
	str("reduction-datum", &jf.ReductionDatum, f.datum)
	str("geoid", &jf.Geoid, f.geoid)
	str("delimiter", &jf.Delimiter, f.delimiter)
	num("geoid-separation-m", &jf.GeoidSeparationM, f.geoidN)
	num("k", &jf.RefractionK, f.k)
	num("critical", &jf.CriticalValue, f.critical)
	num("job-alpha", &jf.JobAlpha, f.jobAlpha)
	num("global-test-alpha", &jf.GlobalTestAlpha, f.globalAlpha)
	// A flag wins over the config: one of the two ways to set the test.
	if f.set["critical"] && !f.set["job-alpha"] {
		jf.JobAlpha = nil
	}
	if f.set["job-alpha"] && !f.set["critical"] {
		jf.CriticalValue = nil
	}
	if f.set["workers"] {
		jf.Workers = f.workers
	}
	if f.set["tolerance"] {
		if a, b, ok := parseAPlusB(f.tolerance); ok {
			jf.Tolerance = jobconfig.Tolerance{ConstantMM: &a, PPM: &b}
		} else {
			jf.Tolerance = jobconfig.Tolerance{Class: f.tolerance}
		}
	}
	if f.set["default-atmosphere"] {
		a, err := parseAtmosphere("-default-atmosphere", f.atmosphere)
		if err != nil {
			return jf, name, err
		}
		jf.Atmosphere = &a
	}
	f.limits.apply(f.set, &jf)
	if err := f.applyProfile(&jf); err != nil {
		return jf, name, err
	}
	return jf, name, nil
}

func (f *jobFlags) applyProfile(jf *jobconfig.File) error {
	any := false
	for _, n := range []string{"wavelength-um", "reference-atmosphere", "reference-refractivity", "additive-constant-mm", "scale-ppm",
		"prism-constant-mm", "field-ppm", "field-prism-constant-mm", "field-curvature-refraction", "field-refraction-k", "field-earth-radius-m",
		"row-prism-constant", "spec"} {
		any = any || f.set[n]
	}
	if !any {
		return nil
	}
	name := f.profile
	if name == "" {
		name = jf.DefaultInstrument
	}
	if name == "" {
		name = "default"
	}
	if jf.Instrument == nil {
		jf.Instrument = map[string]jobconfig.Instrument{}
	}
	in := jf.Instrument[name]
	if f.set["wavelength-um"] {
		v, err := units.ParseFloat(f.wavelength)
		if err != nil {
			return fmt.Errorf("-wavelength-um %q: want a wavelength in µm", f.wavelength)
		}
		in.WavelengthUM = v
	}
	if f.set["reference-atmosphere"] {
		a, err := parseAtmosphere("-reference-atmosphere", f.refAtmos)
		if err != nil {
			return err
		}
		in.ReferenceAtmosphere, in.ReferenceRefractivity, in.ModulationHz, in.UnitLengthM = &a, nil, nil, nil
	}
	if f.set["reference-refractivity"] {
		v := f.refN
		in.ReferenceRefractivity, in.ReferenceAtmosphere, in.ModulationHz, in.UnitLengthM = &v, nil, nil, nil
	}
	set := func(flag string, dst *float64, v float64) {
		if f.set[flag] {
			*dst = v
		}
	}
	set("additive-constant-mm", &in.AdditiveConstantMM, f.addMM)
	set("scale-ppm", &in.ScalePPM, f.scalePPM)
	set("prism-constant-mm", &in.PrismConstantMM, f.prismMM)
	set("field-ppm", &in.FieldPPM, f.fieldPPM)
	set("field-prism-constant-mm", &in.FieldPrismConstantMM, f.fieldPrismMM)
	if f.set["field-curvature-refraction"] {
		in.FieldCurvatureRefraction = f.fieldCurvature
	}
	ptr := func(flag string, dst **float64, v float64) {
		if f.set[flag] {
			x := v
			*dst = &x
		}
	}
	ptr("field-refraction-k", &in.FieldRefractionK, f.fieldK)
	ptr("field-earth-radius-m", &in.FieldEarthRadiusM, f.fieldRadius)
	if f.set["row-prism-constant"] {
		in.RowPrismConstant = f.rowPrism
	}
	if f.set["spec"] {
		a, b, ok := parseAPlusB(f.spec)
		if !ok {
			return fmt.Errorf("-spec %q: want 'A mm + B ppm'", f.spec)
		}
		in.SpecMM, in.SpecPPM = a, b
	}
	jf.Instrument[name] = in
	return nil
}

// resolve reads the config file (if any), lays the set flags over it,
// takes the paths it names (points, out, observations) relative to it,
// and validates the job.
func (f *jobFlags) resolve(fs *flag.FlagSet) (*jobconfig.Job, error) {
	return f.resolveFor(fs, jobconfig.Needs{}, nil)
}

// resolveFor is resolve for a command that cannot run without what need
// names. Observation files named on the command line (obsArgs, relative
// to the working folder) replace the job file's list.
func (f *jobFlags) resolveFor(fs *flag.FlagSet, need jobconfig.Needs, obsArgs []string) (*jobconfig.Job, error) {
	file, name, err := f.file(fs)
	if err != nil {
		return nil, err
	}
	if f.config != "" {
		base := filepath.Dir(f.config)
		rel := func(p string) string {
			if p == "" || filepath.IsAbs(p) {
				return p
			}
			return filepath.Join(base, p)
		}
		if !f.set["points"] {
			file.Points = rel(file.Points)
		}
		if !f.set["out"] {
			file.Out = rel(file.Out)
		}
		for i, o := range file.Observations {
			file.Observations[i] = rel(o)
		}
	}
	if len(obsArgs) > 0 {
		file.Observations = obsArgs
	}
	if need.Points && file.Points == "" && anyLandXML(file.Observations) {
		need.Points = false // the control from the LandXML file's CgPoints
	}
	return jobconfig.ResolveFor(file, name, need)
}

// parseAPlusB reads "5mm+5ppm", "5 mm + 5 ppm" or "5+5".
func parseAPlusB(s string) (a, b float64, ok bool) {
	t := strings.ReplaceAll(strings.ToLower(s), " ", "")
	parts := strings.Split(t, "+")
	if len(parts) != 2 {
		return 0, 0, false
	}
	var err1, err2 error
	a, err1 = units.ParseFloat(strings.TrimSuffix(parts[0], "mm"))
	b, err2 = units.ParseFloat(strings.TrimSuffix(parts[1], "ppm"))
	return a, b, err1 == nil && err2 == nil
}

// parseAtmosphere reads "T,P,RH".
func parseAtmosphere(flagName, s string) (jobconfig.Atmosphere, error) {
	parts := strings.Split(s, ",")
	if len(parts) != 3 {
		return jobconfig.Atmosphere{}, fmt.Errorf("%s %q: want 'T,P,RH' in °C, hPa, %%", flagName, s)
	}
	v := make([]float64, 3)
	for i, p := range parts {
		x, err := units.ParseFloat(strings.TrimSpace(p))
		if err != nil {
			return jobconfig.Atmosphere{}, fmt.Errorf("%s %q: want 'T,P,RH' in °C, hPa, %%", flagName, s)
		}
		v[i] = x
	}
	return jobconfig.Atmosphere{TemperatureC: &v[0], PressureHPa: &v[1], HumidityPct: &v[2]}, nil
}

// registerOnly registers the job flags named, and no others: a command's
// -help lists only the flags it uses.
func (f *jobFlags) registerOnly(fs *flag.FlagSet, names ...string) {
	all := flag.NewFlagSet("", flag.ContinueOnError)
	f.register(all)
	for _, n := range names {
		fl := all.Lookup(n)
		if fl == nil {
			panic("no job flag -" + n)
		}
		fs.Var(fl.Value, fl.Name, fl.Usage)
	}
}

// The job flags of the commands that use only some of them.
var (
	// siteFlags place the marks: the CRS, the points and their heights,
	// refraction.
	siteFlags = []string{"config", "crs", "points", "length-unit", "reduction-datum", "geoid", "geoid-separation-m", "k", "delimiter"}
	// instrumentFlags set an instrument profile.
	instrumentFlags = []string{"instrument", "wavelength-um", "reference-atmosphere", "reference-refractivity", "additive-constant-mm",
		"scale-ppm", "prism-constant-mm", "field-ppm", "field-prism-constant-mm", "field-curvature-refraction", "field-refraction-k",
		"field-earth-radius-m", "row-prism-constant", "spec"}
)
