package jobconfig

import (
	"errors"
	"fmt"
	"os"
	"sort"
	"strings"

	"github.com/BurntSushi/toml"
)

// File is the TOML form of a job. Optional numbers are pointers so that a
// value that was not given is told apart from a zero.
type File struct {
	CRS          string   `toml:"crs"`
	Points       string   `toml:"points"`
	Observations []string `toml:"observations"`
	Out          string   `toml:"out"`

	LengthUnit string `toml:"length_unit"` // m, us-ft, intl-ft
	AngleUnit  string `toml:"angle_unit"`  // deg, dms, gon, rad

	ReductionDatum    string   `toml:"reduction_datum"`    // ellipsoid (default) or sea-level
	Geoid             string   `toml:"geoid"`              // grid name or file; "none" for no grid
	GeoidSeparationM  *float64 `toml:"geoid_separation_m"` // one N for the whole job, metres
	RefractionK       *float64 `toml:"refraction_k"`       // coefficient of refraction
	CriticalValue     *float64 `toml:"critical_value"`     // for |w|
	JobAlpha          *float64 `toml:"job_alpha"`          // α for the whole job (Šidák), instead of critical_value
	GlobalTestAlpha   *float64 `toml:"global_test_alpha"`  // α of the global test of the variance factor
	Workers           int      `toml:"workers"`            // 0: all cores
	DefaultInstrument string   `toml:"default_instrument"` // profile for rows without an instrument column

	Tolerance  Tolerance             `toml:"tolerance"`
	Atmosphere *Atmosphere           `toml:"default_atmosphere"`
	Centring   Centring              `toml:"centring"`
	Instrument map[string]Instrument `toml:"instrument"`

	Limits Limits `toml:"limits"` // what the readers take of a file at most
	// Delimiter of the points and observation files' fields: "auto"
	// (the default: found from each file's header), ",", ";" or "tab".
	Delimiter string `toml:"delimiter"`
}

// Tolerance is the job's acceptance limit for a residual: a named accuracy
// class, or a + b ppm.
type Tolerance struct {
	Class      string   `toml:"class"`
	ConstantMM *float64 `toml:"constant_mm"`
	PPM        *float64 `toml:"ppm"`
	Rule       string   `toml:"rule"`  // linear (default) or rss
	Level      string   `toml:"level"` // 95 (default) or 1sigma
}

// Atmosphere is one set of meteorological values.
type Atmosphere struct {
	TemperatureC *float64 `toml:"temperature_c"`
	PressureHPa  *float64 `toml:"pressure_hpa"`
	HumidityPct  *float64 `toml:"humidity_pct"`
}

// Centring holds the σ of setting up over the marks and of the heights.
type Centring struct {
	InstrumentMM *float64 `toml:"instrument_mm"`
	TargetMM     *float64 `toml:"target_mm"`
	HeightMM     *float64 `toml:"height_mm"`
	ZenithArcsec *float64 `toml:"zenith_arcsec"`
	KSigma       *float64 `toml:"refraction_k_sigma"`
	ControlMM    *float64 `toml:"control_mm"`
}

// Instrument is one instrument profile.
type Instrument struct {
	WavelengthUM float64 `toml:"wavelength_um"`
	// The reference refractivity: one of a reference atmosphere, the
	// refractivity itself, or the modulation frequency and unit length.
	ReferenceAtmosphere   *Atmosphere `toml:"reference_atmosphere"`
	ReferenceRefractivity *float64    `toml:"reference_refractivity"`
	ModulationHz          *float64    `toml:"modulation_hz"`
	UnitLengthM           *float64    `toml:"unit_length_m"`

	AdditiveConstantMM float64 `toml:"additive_constant_mm"` // from calibration
	ScalePPM           float64 `toml:"scale_ppm"`            // from calibration
	PrismConstantMM    float64 `toml:"prism_constant_mm"`    // of the targets, where a row gives none

	// What the field instrument already applied to the stored distances.
	FieldPPM             float64 `toml:"field_ppm"`
	FieldPrismConstantMM float64 `toml:"field_prism_constant_mm"`
	// FieldCurvatureRefraction says which of its horizontal and vertical
	// distances the instrument corrected for curvature and refraction
	// before storing them: "none" (the default), "vertical" or "both";
	// with its coefficient of refraction FieldRefractionK (required
	// unless "none") and earth radius FieldEarthRadiusM (default
	// reduce.DefaultFieldEarthRadius).
	FieldCurvatureRefraction string   `toml:"field_curvature_refraction"`
	FieldRefractionK         *float64 `toml:"field_refraction_k"`
	FieldEarthRadiusM        *float64 `toml:"field_earth_radius_m"`
	// RowPrismConstant says what a row's prism_constant_mm is where the
	// row gives no field_prism_constant_mm: "target" (the target's true
	// constant; the instrument applied field_prism_constant_mm) or
	// "applied" (the instrument applied the row's own constant).
	RowPrismConstant string `toml:"row_prism_constant"`

	// The EDM specification a mm + b ppm.
	SpecMM    float64 `toml:"spec_mm"`
	SpecPPM   float64 `toml:"spec_ppm"`
	SpecRule  string  `toml:"spec_rule"`  // linear or rss (default)
	SpecLevel string  `toml:"spec_level"` // 1sigma (default) or 95

	// Calibrated is the day (YYYY-MM-DD) the instrument was last
	// calibrated: the nightly trend of its fits starts there.
	Calibrated string `toml:"calibrated"`

	// SerialNumber is the instrument's serial number, by which a LandXML
	// file's InstrumentDetails name it.
	SerialNumber string `toml:"serial_number"`
}

// ReadFile reads a TOML job file. A syntax error names the line; an
// unknown key is an error naming it.
func ReadFile(path string) (File, error) {
	var f File
	b, err := os.ReadFile(path)
	if err != nil {
		return f, err
	}
	return Parse(b, path)
}

// Parse reads TOML text; name is used in errors.
func Parse(b []byte, name string) (File, error) {
	var f File
	md, err := toml.Decode(string(b), &f)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return f, fmt.Errorf("%s:%d: %s", name, pe.Position.Line, pe.Message)
		}
		return f, fmt.Errorf("%s: %w", name, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		keys := make([]string, len(und))
		for i, k := range und {
			keys[i] = k.String()
		}
		sort.Strings(keys)
		return f, fmt.Errorf("%s: unknown setting(s) %s", name, strings.Join(keys, ", "))
	}
	return f, nil
}
