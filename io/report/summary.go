package report

import "fmt"

// Summary is the machine-readable account of one reduce run, written as
// summary.json and rendered in report.html. It holds no clock time and
// nothing that depends on the number of workers, so the same inputs give a
// byte-identical summary. Lengths are metres unless a field name says mm
// or ppm.
type Summary struct {
	Tool        string `json:"tool"`         // "geored"
	Version     string `json:"version"`      // geored's version
	ProjVersion string `json:"proj_version"` // PROJ's version, e.g. "9.1.1"

	Settings Settings    `json:"settings"` // the exact settings used
	Inputs   []InputFile `json:"inputs"`
	// InputHash is the SHA-256 of the inputs' hashes and the settings, in
	// order: the identity of the job.
	InputHash string `json:"input_hash"`

	Counts    Counts        `json:"counts"`
	Residuals ResidualStats `json:"residuals"`
	// Testing says how the observations were tested, how many flags
	// chance alone would raise, and the global test of the variance
	// factor.
	Testing Testing `json:"testing"`
	// FlaggedObservations are the flagged observations, worst first (by
	// the larger of |w| and the height check's |w|), at most
	// MaxFlaggedObservations of them; FlaggedObservationsNotListed counts
	// the others, which reduced.csv has.
	FlaggedObservations          []FlaggedObservation `json:"flagged_observations,omitempty"`
	FlaggedObservationsNotListed int                  `json:"flagged_observations_not_listed"`
	// FirstRejects are the first rejected rows, at most MaxFirstRejects:
	// rejects.csv has them all.
	FirstRejects []Reject `json:"first_rejects,omitempty"`
	// Fit of the ellipsoid residuals against distance: residual =
	// constant + scale · distance. A significant constant points at a
	// wrong prism or additive constant, a scale at a wrong ppm setting;
	// with too little evidence (Fit.Evidence) neither is tested.
	Fit *Fit `json:"fit,omitempty"`

	// Lines holds the flagged lines (at most MaxListedLines of them, the
	// worst by |w|) and then, in a job of at most MaxListedLines lines,
	// every other line; each once whichever way it was observed.
	// LinesNotListed counts the lines left out: lines.csv has every line.
	Lines          []Line `json:"lines"`
	LinesNotListed int    `json:"lines_not_listed"`

	// Warnings are notes on the inputs that did not stop the run.
	Warnings []string `json:"warnings,omitempty"`

	// ExitStatus is the process's exit status (Decide): 0 clean, 1
	// something needs a look, 2 could not run or nothing was reduced.
	// Verdict says it in words and Reasons lists why, one reason each;
	// Notes are findings that do not change the status.
	ExitStatus int      `json:"exit_status"`
	Verdict    string   `json:"verdict"`
	Reasons    []string `json:"reasons,omitempty"`
	Notes      []string `json:"notes,omitempty"`
	Caution    string   `json:"caution"`

	// Replaces is the set of outputs this run replaced in its output
	// folder, where there was one.
	Replaces *Replaced `json:"replaces,omitempty"`
}

// Replaced is an earlier set of outputs that a run replaced: when it was
// made (RFC 3339, UTC) and the input hash of its run ("" for a set from
// before manifests).
type Replaced struct {
	Created   string `json:"created"`
	InputHash string `json:"input_hash,omitempty"`
}

// MaxFirstRejects bounds Summary.FirstRejects.
const MaxFirstRejects = 10

// Reject is a rejected row: where it is, the row as written, and why.
type Reject struct {
	File   string `json:"file"`
	Line   int    `json:"line"`
	Row    string `json:"row"`
	Reason string `json:"reason"`
}

// Testing describes the tests of the reduced observations.
type Testing struct {
	// Scope is "observation" when the critical value holds α for each
	// observation (Baarda's data snooping at α₀, 3.29 for 0.1 %), or
	// "job" when it holds JobAlpha for the whole job (Šidák over Tests,
	// the job's observation rows counted before the run).
	Scope    string  `json:"scope"`
	Critical float64 `json:"critical_value"`
	// AlphaPerObservation is the chance that one observation free of
	// blunders is flagged: P(|w| > Critical).
	AlphaPerObservation float64 `json:"alpha_per_observation"`
	JobAlpha            float64 `json:"job_alpha,omitempty"`
	Tests               int     `json:"tests,omitempty"`
	// Outliers counts the reduced observations whose |w| is over the
	// critical value; ExpectedByChance is how many of them chance alone
	// would give if every σ were right: reduced × AlphaPerObservation.
	Outliers         int     `json:"outliers"`
	ExpectedByChance float64 `json:"expected_outliers_by_chance"`
	// Global is the global test over every reduced observation; nil when
	// none was reduced.
	Global *GlobalTest `json:"global_test,omitempty"`
}

// GlobalTest is the test of the variance factor Σw²/n over the reduced
// observations (reduce.GlobalTest).
type GlobalTest struct {
	N              int     `json:"n"`
	VarianceFactor float64 `json:"variance_factor"`
	Alpha          float64 `json:"alpha"`
	Lower          float64 `json:"lower"`
	Upper          float64 `json:"upper"`
	// Outcome is "pass", "too large" (blunders, systematic errors or σ
	// understated: the status is 1) or "too small" (σ overstated: a
	// note).
	Outcome string `json:"outcome"`
	// The variance factor of the observations that are not flagged: near
	// 1 when the flagged ones explain a failed test.
	UnflaggedN              int     `json:"unflagged_n"`
	UnflaggedVarianceFactor float64 `json:"unflagged_variance_factor"`
}

// Caution is printed in every report.
const Caution = "These results support, and do not replace, the judgement of a licensed surveyor. Local regulations and standards govern."

// Settings are the job's settings as used, after config file and flags.
type Settings struct {
	CRS            string               `json:"crs"`
	CRSName        string               `json:"crs_name"`
	Datum          string               `json:"datum"`     // geodetic datum of the CRS
	Ellipsoid      string               `json:"ellipsoid"` // name, a and 1/f
	ReductionDatum string               `json:"reduction_datum"`
	LengthUnit     string               `json:"length_unit"`
	GridUnit       string               `json:"grid_unit"` // of the points' easting and northing: the CRS's axis unit
	AngleUnit      string               `json:"angle_unit"`
	Geoid          string               `json:"geoid"` // grid name, "constant N = …", or "none"
	RefractionK    float64              `json:"refraction_k"`
	CriticalValue  float64              `json:"critical_value"`
	JobAlpha       float64              `json:"job_alpha,omitempty"` // the critical value holds it for the whole job
	GlobalAlpha    float64              `json:"global_test_alpha"`
	Tolerance      string               `json:"tolerance"` // e.g. "5 mm + 5 ppm linear, 95 %" or a class name
	DefaultAtmos   string               `json:"default_atmosphere"`
	Instruments    []InstrumentSettings `json:"instruments"`
	Strict         bool                 `json:"strict"`
}

// InstrumentSettings is one instrument profile as used.
type InstrumentSettings struct {
	Name                  string  `json:"name"`
	WavelengthUM          float64 `json:"wavelength_um"`
	ReferenceRefractivity float64 `json:"reference_refractivity"`
	AdditiveConstantMM    float64 `json:"additive_constant_mm"`
	ScalePPM              float64 `json:"scale_ppm"`
	PrismConstantMM       float64 `json:"prism_constant_mm"`
	AppliedPPM            float64 `json:"field_applied_ppm"`
	AppliedPrismMM        float64 `json:"field_applied_prism_constant_mm"`
	// RowPrismConstant is how a row's prism_constant_mm was read where
	// the row gave no field_prism_constant_mm: "target", "applied", or
	// "not given" (rows where the readings differ are rejected).
	RowPrismConstant string `json:"row_prism_constant"`
	// FieldCurvatureRefraction is which of its horizontal and vertical
	// distances the instrument corrected for curvature and refraction:
	// "none", "vertical" or "both"; with, unless "none", the coefficient
	// of refraction and the earth radius (m) it used.
	FieldCurvatureRefraction string   `json:"field_curvature_refraction"`
	FieldRefractionK         *float64 `json:"field_refraction_k,omitempty"`
	FieldEarthRadiusM        *float64 `json:"field_earth_radius_m,omitempty"`
	Spec                     string   `json:"spec"` // e.g. "1 mm + 1.5 ppm, RSS, 1σ"
	// SerialNumber is the profile's serial_number, by which a LandXML
	// file's InstrumentDetails pick it; "" where it gives none.
	SerialNumber string `json:"serial_number,omitempty"`
}

// FieldCurvatureText is the profile's field curvature and refraction in
// words for the report: "none", or the mode with its k and radius.
func (s InstrumentSettings) FieldCurvatureText() string {
	if s.FieldRefractionK == nil || s.FieldEarthRadiusM == nil {
		if s.FieldCurvatureRefraction == "" {
			return "none"
		}
		return s.FieldCurvatureRefraction
	}
	return fmt.Sprintf("%s, k = %g, R = %g m", s.FieldCurvatureRefraction, *s.FieldRefractionK, *s.FieldEarthRadiusM)
}

// InputFile is one input as read.
type InputFile struct {
	Role   string `json:"role"` // "points" or "observations"
	Path   string `json:"path"`
	SHA256 string `json:"sha256"`
	Rows   int    `json:"rows"`
	// Format says how an observation file was read: "csv", with its
	// Delimiter ("," ";" or "tab") and DecimalMark ("." or ","; "" where
	// the file showed none), or "landxml".
	Format      string `json:"format,omitempty"`
	Delimiter   string `json:"delimiter,omitempty"`
	DecimalMark string `json:"decimal_mark,omitempty"`
}

// Counts add up: Read = Reduced + Rejected.
type Counts struct {
	Read     int `json:"read"`
	Reduced  int `json:"reduced"`
	Rejected int `json:"rejected"`
	// Flagged counts reduced observations whose standardized residual is
	// over the critical value, whose residual is over the tolerance, or
	// whose target height disagrees with their zenith angle.
	Flagged      int `json:"flagged"`
	Lines        int `json:"lines"`
	FlaggedLines int `json:"flagged_lines"`
}

// ResidualStats describe the residuals of the reduced observations: of
// every one, and of those not flagged (Counts.Flagged), so that a blunder
// shows against the rest instead of swamping them.
type ResidualStats struct {
	Ellipsoid          Stats `json:"ellipsoid"` // reduced arc − geodesic from control
	Grid               Stats `json:"grid"`      // reduced grid distance − grid distance from control
	EllipsoidUnflagged Stats `json:"ellipsoid_unflagged"`
	GridUnflagged      Stats `json:"grid_unflagged"`
}

// Stats of a set of observations' residuals, in millimetres and ppm.
type Stats struct {
	N        int     `json:"n"`
	MeanMM   float64 `json:"mean_mm"`
	RMSMM    float64 `json:"rms_mm"`
	StdDevMM float64 `json:"std_dev_mm"`
	// MedianMM is the median of the observations' residuals and
	// RobustSigmaMM their median absolute deviation from it times 1.4826
	// (madToSigma), a σ that a few blunders do not move. Both are read
	// from a histogram of the residuals (residualHistogram): within
	// 0.005 mm of the exact values for residuals under 20 mm, and within
	// 0.05 % beyond.
	MedianMM      float64 `json:"median_mm"`
	RobustSigmaMM float64 `json:"robust_sigma_mm"`
	MinMM         float64 `json:"min_mm"`
	MaxMM         float64 `json:"max_mm"`
	MeanPPM       float64 `json:"mean_ppm"`
	// MaxAbsW is the largest standardized residual |w|.
	MaxAbsW float64 `json:"max_abs_w"`
}

// Fit is a weighted least-squares line through the lines' residuals:
// residual = ConstantMM + ScalePPM · distance, with σ from the fit's a
// posteriori variance factor (see FitResiduals). Its terms are a diagnosis
// of the instrument only when Evidence is EvidenceEnough; otherwise they
// are shown for information and neither is significant.
type Fit struct {
	// N is the lines in the fit. LinesLeftOut are lines that did not
	// enter it (their observations disagree and every one is flagged),
	// LinesRejected those its test removed; ObservationsLeftOut counts the
	// flagged observations left out of their lines' means.
	N                   int     `json:"n"`
	LinesLeftOut        int     `json:"lines_left_out"`
	LinesRejected       int     `json:"lines_rejected"`
	ObservationsLeftOut int     `json:"observations_left_out"`
	ConstantMM          float64 `json:"constant_mm"`
	ConstantSigma       float64 `json:"constant_sigma_mm"`
	ScalePPM            float64 `json:"scale_ppm"`
	ScaleSigma          float64 `json:"scale_sigma_ppm"`
	// VarianceFactor is the a posteriori variance factor s0² of the fit.
	VarianceFactor float64 `json:"variance_factor"`
	// Evidence says whether the lines are enough for a diagnosis:
	// "enough", or why not — "too_few_lines" (under MinFitLines),
	// "narrow_spread" (the longest under MinFitLengthRatio times the
	// shortest) or "high_leverage" (a line's leverage over
	// MaxFitLeverage: it alone decides the fit). ShortestM and LongestM
	// are the lines' lengths, MaxLeverage the largest hat value.
	Evidence    string  `json:"evidence"`
	ShortestM   float64 `json:"shortest_m"`
	LongestM    float64 `json:"longest_m"`
	MaxLeverage float64 `json:"max_leverage"`
	// Critical is the critical value of Student's t with N − 2 degrees
	// of freedom at the job's α, which a term's |estimate|/σ must pass.
	Critical float64 `json:"critical_value"`
	// Significant says which of the two terms differ from zero: never
	// without enough evidence.
	ConstantSignificant bool `json:"constant_significant"`
	ScaleSignificant    bool `json:"scale_significant"`
}

// Enough reports whether the fit is evidence enough for a diagnosis.
func (f *Fit) Enough() bool { return f.Evidence == EvidenceEnough }

// Line summarises the observations of one line, either direction.
type Line struct {
	// From and To are the two point ids in the direction first observed.
	From  string `json:"from"`
	To    string `json:"to"`
	Count int    `json:"count"`
	// Reciprocal says both directions were observed.
	Reciprocal bool `json:"reciprocal"`
	// Geodesic and Grid are the distances from control.
	Geodesic float64 `json:"geodesic_m"`
	Grid     float64 `json:"grid_m"`
	// MeanArc is the mean reduced ellipsoid distance; SpreadMM the
	// largest minus the smallest reduced arc; StdDevMM their standard
	// deviation (0 for one observation).
	MeanArc  float64 `json:"mean_arc_m"`
	SpreadMM float64 `json:"spread_mm"`
	StdDevMM float64 `json:"std_dev_mm"`
	// ResidualMM, ResidualPPM and SigmaMM are of the mean: mean reduced
	// arc − geodesic; MaxAbsW is the largest |w| of its observations.
	ResidualMM  float64 `json:"residual_mm"`
	ResidualPPM float64 `json:"residual_ppm"`
	SigmaMM     float64 `json:"sigma_mm"`
	MaxAbsW     float64 `json:"max_abs_w"`
	// FlaggedObservations counts its observations flagged (over the
	// critical value or the tolerance); UnflaggedResidualMM is the
	// residual of the mean of the others, ResidualMM when none is flagged
	// and 0 when all are.
	FlaggedObservations int     `json:"flagged_observations"`
	UnflaggedResidualMM float64 `json:"unflagged_residual_mm"`
	// FlaggedAt are the places (file:line) of its flagged observations
	// among Summary.FlaggedObservations, worst first: all of them unless
	// the job has more flagged observations than that list holds.
	FlaggedAt []string `json:"flagged_at,omitempty"`
	// K is the coefficient of refraction from reciprocal zenith angles,
	// where both directions were observed with zenith angles.
	K *float64 `json:"k,omitempty"`
	// Flags: "outlier" (|w| over the critical value), "tolerance" (over
	// the job's tolerance), "spread" (observations disagree), "height" (a
	// target height disagrees with its zenith angle).
	Flags []string `json:"flags,omitempty"`
}

// Flagged reports whether the line carries any flag.
func (l Line) Flagged() bool { return len(l.Flags) > 0 }
