package report

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/audit"
)

// AuditRow is one delivered value with every check, as audit.csv and the
// report show it. Lengths are metres; NaN where a check does not apply.
type AuditRow struct {
	File     string `json:"file"`
	Line     int    `json:"line"`
	ID       string `json:"id,omitempty"`
	From     string `json:"from"`
	To       string `json:"to"`
	What     string `json:"what"` // "grid distance", …, "vector"
	IsVector bool   `json:"-"`
	// Delivered is the delivered distance, or the vector's geodesic;
	// Reference the control distance of the same kind, or the control
	// geodesic.
	Delivered float64 `json:"delivered_m"`
	Reference float64 `json:"control_m"`
	// Residual is delivered − control for a distance, the 3-D
	// misclosure of a vector's end; PPM of the control length.
	Residual  float64 `json:"residual_m"`
	PPM       float64 `json:"ppm"`
	Sigma     float64 `json:"sigma_m"`
	W         float64 `json:"w"`
	Tolerance float64 `json:"tolerance_m"`
	Margin    float64 `json:"margin_m"`
	Pass      bool    `json:"pass"`
	// Cause is the usual error named for the row, Stage the stage of the
	// reduction where it is made: from the comparison with our own
	// reduction of the raw observations where the row has them and it
	// names one, else from the control (ControlCause).
	Cause        string `json:"cause,omitempty"`
	Stage        string `json:"stage,omitempty"`
	ControlCause string `json:"cause_from_control,omitempty"`
	Tested       string `json:"signatures_tested,omitempty"`
	// ImpliedHeight: see audit.DistanceCheck.
	ImpliedHeight float64 `json:"-"`
	// Vectors: misclosure east, north, up at the start mark, the
	// horizontal one, the geodesics' difference, the grid distances, the
	// height differences and the antenna height the misclosure shows.
	East, North, Up       float64 `json:"-"`
	Horizontal            float64 `json:"-"`
	LengthMisclosure      float64 `json:"-"`
	Grid, ControlGrid     float64 `json:"-"`
	DeltaH, ControlDeltaH float64 `json:"-"`
	AntennaHeight         float64 `json:"-"`
	// A line delivered both as a distance and as a vector: the vector
	// taken to the distance's kind, the distance less it, and the
	// verdict on that difference at the line's tolerance.
	CrossValue, CrossDiff float64 `json:"-"`
	CrossPass             string  `json:"-"` // "pass", "fail" or "" when there is no vector
	// Our reduction of the raw observations of the line (RawCount of
	// them), stage by stage, beside the delivered value: see
	// audit.RawCheck. RawPass is "pass", "fail" or "" without raw
	// observations.
	RawCount                                         int     `json:"raw_observations,omitempty"`
	RawSlope, OurSlope, OurHorizontal, OurEllipsoid  float64 `json:"-"`
	OurSeaLevel, OurGrid, OurValue, OurPPM, OurPrism float64 `json:"-"`
	RawDiff                                          float64 `json:"delivered_minus_ours_m,omitempty"`
	RawW, RawTolerance                               float64 `json:"-"`
	RawPass                                          string  `json:"delivered_vs_ours,omitempty"`
	RawCause, RawStage, RawTested                    string  `json:"-"`
}

func nan() float64 { return math.NaN() }

func blankRow(b *audit.Baseline) AuditRow {
	n := nan()
	return AuditRow{File: b.File, Line: b.Line, ID: b.ID, From: b.From, To: b.To, What: b.What(), IsVector: b.IsVector,
		ImpliedHeight: n, East: n, North: n, Up: n, Horizontal: n, LengthMisclosure: n, Grid: n, ControlGrid: n,
		DeltaH: n, ControlDeltaH: n, AntennaHeight: n, CrossValue: n, CrossDiff: n,
		RawSlope: n, OurSlope: n, OurHorizontal: n, OurEllipsoid: n, OurSeaLevel: n, OurGrid: n, OurValue: n, OurPPM: n, OurPrism: n,
		RawDiff: n, RawW: n, RawTolerance: n}
}

// DistanceRow is a delivered distance's row.
func DistanceRow(b *audit.Baseline, c *audit.DistanceCheck) AuditRow {
	r := blankRow(b)
	r.Delivered, r.Reference, r.Residual, r.PPM, r.Sigma, r.W = c.Delivered, c.Reference, c.Residual, c.PPM, c.Sigma, c.W
	r.Tolerance, r.Margin, r.Pass, r.ImpliedHeight = c.Tolerance, c.Margin, c.Pass, c.ImpliedHeight
	r.Cause, r.Stage, r.Tested = c.Diagnosis.Cause, c.Diagnosis.Stage, testedText(c.Diagnosis.Tested)
	r.ControlCause = r.Cause
	return r
}

// Failed reports whether the row fails: against the tolerance, beside
// its vector, or beside our reduction of its raw observations.
func (r AuditRow) Failed() bool { return !r.Pass || r.CrossPass == "fail" || r.RawPass == "fail" }

// AddRaw puts beside a distance's row our reduction of its raw
// observations, stage by stage. Where that comparison names a cause, it
// is the row's (it uses our own stage values, not the control's alone);
// the control's stays in ControlCause.
func (r *AuditRow) AddRaw(c *audit.RawCheck) {
	r.RawCount = c.Count
	r.RawSlope, r.OurSlope, r.OurHorizontal, r.OurEllipsoid = c.Raw, c.Slope, c.Horizontal, c.Ellipsoid
	r.OurSeaLevel, r.OurGrid, r.OurValue, r.OurPPM, r.OurPrism = c.SeaLevel, c.Grid, c.Ours, c.PPM, c.PrismConstant
	r.RawDiff, r.RawW, r.RawTolerance = c.Difference, c.W, c.Tolerance
	r.RawPass = "pass"
	if !c.Pass {
		r.RawPass = "fail"
	}
	r.RawCause, r.RawStage, r.RawTested = c.Diagnosis.Cause, c.Diagnosis.Stage, testedText(c.Diagnosis.Tested)
	if c.Diagnosis.Cause != "" {
		r.Cause, r.Stage = c.Diagnosis.Cause, c.Diagnosis.Stage
	}
}

// VectorRow is a delivered vector's row.
func VectorRow(b *audit.Baseline, c *audit.VectorCheck) AuditRow {
	r := blankRow(b)
	r.Delivered, r.Reference, r.Residual, r.PPM, r.Sigma, r.W = c.Ellipsoid, c.ControlEllipsoid, c.Length, c.PPM, c.Sigma.Norm(), c.W
	r.Tolerance, r.Margin, r.Pass = c.Tolerance, c.Margin, c.Pass
	r.Cause, r.Stage = c.Diagnosis.Cause, c.Diagnosis.Stage
	r.ControlCause = r.Cause
	r.East, r.North, r.Up, r.Horizontal, r.LengthMisclosure = c.Misclosure.X, c.Misclosure.Y, c.Misclosure.Z, c.Horizontal, c.LengthMisclosure
	r.Grid, r.ControlGrid, r.DeltaH, r.ControlDeltaH = c.Grid, c.ControlGrid, c.DeltaH, c.ControlDeltaH
	if c.Diagnosis.Cause != "" {
		r.AntennaHeight = c.AntennaHeight
	}
	return r
}

func testedText(fits []audit.Fit) string {
	var parts []string
	for _, f := range fits {
		mark := ""
		if f.Fits {
			mark = " fits"
		}
		parts = append(parts, fmt.Sprintf("%s %+.1f mm (z %+.1f)%s", f.Name, f.Predicted*1e3, f.Z, mark))
	}
	return strings.Join(parts, "; ")
}

// AuditLoop is one loop of the vector network as loops.csv shows it.
type AuditLoop struct {
	Number    int        `json:"loop"`
	Repeat    bool       `json:"repeat"`
	Vectors   []LoopStep `json:"vectors"` // in turn; JSON "file:line" each, "−" before one taken backwards
	Marks     string     `json:"marks"`   // the marks in turn
	Length    float64    `json:"length_m"`
	MM        float64    `json:"misclosure_mm"`
	DX        float64    `json:"dx_m"`
	DY        float64    `json:"dy_m"`
	DZ        float64    `json:"dz_m"`
	PPM       float64    `json:"ppm"`
	Sigma     float64    `json:"sigma_m"`
	Tolerance float64    `json:"tolerance_m"`
	Margin    float64    `json:"margin_m"`
	Pass      bool       `json:"pass"`
}

// LoopStep is a vector of a loop: the baselines file and line that
// delivered it, and whether the loop takes it backwards.
type LoopStep struct {
	File     string
	Line     int
	Reversed bool
}

// MarshalJSON writes the step as "file:line", "−file:line" backwards.
func (s LoopStep) MarshalJSON() ([]byte, error) {
	sign := ""
	if s.Reversed {
		sign = "−"
	}
	return json.Marshal(sign + s.File + ":" + strconv.Itoa(s.Line))
}

// appendLoopVectors appends loops.csv's vectors of a loop: each step its
// line in its baselines file, "−" before one taken backwards, separated by
// spaces; the file's path, with a colon, comes before the first step's
// line and before that of any step from another file than the one before
// it ("net.csv:12 −40 17 more.csv:3"). A loop of 30 vectors names its
// file once, not 30 times.
func appendLoopVectors(b []byte, steps []LoopStep) []byte {
	file := ""
	for i, st := range steps {
		if i > 0 {
			b = append(b, ' ')
		}
		if st.Reversed {
			b = append(b, "−"...)
		}
		if i == 0 || st.File != file {
			b = append(append(b, st.File...), ':')
			file = st.File
		}
		b = strconv.AppendInt(b, int64(st.Line), 10)
	}
	return b
}

// AuditCounts add up: Read = Checked + Rejected, Checked = Passed + Failed.
type AuditCounts struct {
	Read        int `json:"read"`
	Checked     int `json:"checked"`
	Rejected    int `json:"rejected"`
	Passed      int `json:"passed"`
	Failed      int `json:"failed"`
	Distances   int `json:"distances"`
	Vectors     int `json:"vectors"`
	Loops       int `json:"loops"`
	LoopsFailed int `json:"loops_failed"`
	Repeats     int `json:"repeated_baselines"`
	CrossFailed int `json:"distance_vector_disagreements"`
	// The subcontractor's raw observations: rows read, reduced and
	// rejected (ObsRead = ObsReduced + ObsRejected), the distances set
	// beside our reduction and those of them that differ.
	ObsRead     int `json:"observations_read"`
	ObsReduced  int `json:"observations_reduced"`
	ObsRejected int `json:"observations_rejected"`
	RawCompared int `json:"raw_compared"`
	RawFailed   int `json:"raw_disagreements"`
}

// AuditReject is a row that could not be read or checked: a delivered
// row, or a raw observation that could not be reduced.
type AuditReject struct {
	File   string `json:"file"`
	Line   int    `json:"line"`
	Raw    string `json:"raw"`    // the row as written
	Reason string `json:"reason"` // with file, line, column, value and what was expected
}

// AuditSummary is summary.json of an audit, and what its report shows.
type AuditSummary struct {
	Tool        string      `json:"tool"`
	Version     string      `json:"version"`
	ProjVersion string      `json:"proj_version"`
	ExitStatus  int         `json:"exit_status"`
	Verdict     string      `json:"verdict"`
	Reasons     []string    `json:"reasons"`
	Counts      AuditCounts `json:"counts"`
	// Tolerance is the class or a mm + b ppm with its source, Critical
	// the bound of the signatures' fit, ControlSigma the control's σ.
	Tolerance string  `json:"tolerance"`
	Critical  float64 `json:"critical_value"`
	// JobAlpha is the job's α over all the audit's Tests where the job
	// gives job_alpha (Critical is then Šidák's), 0 otherwise.
	JobAlpha     float64       `json:"job_alpha,omitempty"`
	Tests        int           `json:"tests,omitempty"`
	ControlSigma float64       `json:"control_sigma_m"`
	CRS          string        `json:"crs"`
	CRSName      string        `json:"crs_name"`
	Ellipsoid    string        `json:"ellipsoid"`
	Geoid        string        `json:"geoid"`
	LengthUnit   string        `json:"length_unit"`
	Inputs       []InputFile   `json:"inputs"`
	Failing      []AuditRow    `json:"failing"`
	FailingLoops []AuditLoop   `json:"failing_loops"`
	Rejects      []AuditReject `json:"rejects"`
	Warnings     []string      `json:"warnings"`
	Caution      string        `json:"caution"`
	// InputHash is the identity of the audit: the SHA-256 over its
	// inputs' hashes and its settings. Replaces is the set of outputs
	// this run replaced in its output folder, where there was one.
	InputHash string    `json:"input_hash"`
	Replaces  *Replaced `json:"replaces,omitempty"`

	Rows  []AuditRow  `json:"-"`
	Loops []AuditLoop `json:"-"`
}

// Add counts a checked row.
func (s *AuditSummary) Add(r AuditRow) {
	s.Rows = append(s.Rows, r)
	s.Counts.Checked++
	if r.IsVector {
		s.Counts.Vectors++
	} else {
		s.Counts.Distances++
	}
	if r.RawCount > 0 {
		s.Counts.RawCompared++
		if r.RawPass == "fail" {
			s.Counts.RawFailed++
		}
	}
	if !r.Failed() {
		s.Counts.Passed++
	} else {
		s.Counts.Failed++
		s.Failing = append(s.Failing, r)
	}
	if r.CrossPass == "fail" {
		s.Counts.CrossFailed++
	}
}

// AddLoop counts a loop.
func (s *AuditSummary) AddLoop(l AuditLoop) {
	s.Loops = append(s.Loops, l)
	s.Counts.Loops++
	if l.Repeat {
		s.Counts.Repeats++
	}
	if !l.Pass {
		s.Counts.LoopsFailed++
		s.FailingLoops = append(s.FailingLoops, l)
	}
}

// Exit statuses of an audit, as reduce's.
const (
	AuditAllPass     = 0
	AuditSomeFail    = 1
	AuditCouldNotRun = 2
)

// DecideAudit sets the exit status, the verdict and its reasons: 0 every
// value and loop passes and no row was rejected, 1 something fails or was
// rejected, 2 nothing could be checked.
func DecideAudit(s *AuditSummary) {
	c := &s.Counts
	s.Reasons = nil
	if c.Failed > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d delivered values fail (%s)", c.Failed, c.Checked, s.Tolerance))
	}
	if c.CrossFailed > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d lines delivered as a distance and a vector disagree", c.CrossFailed))
	}
	if c.LoopsFailed > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d loops fail", c.LoopsFailed, c.Loops))
	}
	if c.RawFailed > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d delivered distances differ from our reduction of their raw observations", c.RawFailed, c.RawCompared))
	}
	if c.Rejected > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d rows rejected", c.Rejected, c.Read))
	}
	if c.ObsRejected > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d raw observations rejected", c.ObsRejected, c.ObsRead))
	}
	switch {
	case c.Checked == 0:
		s.ExitStatus, s.Verdict = AuditCouldNotRun, "could not run: no delivered value could be checked"
	case len(s.Reasons) > 0:
		s.ExitStatus, s.Verdict = AuditSomeFail, "not accepted: some delivered values fail"
	default:
		s.ExitStatus, s.Verdict = AuditAllPass, "accepted: every delivered value and loop is within the tolerance"
	}
	if s.Caution == "" {
		s.Caution = Caution
	}
}

// WriteAuditJSON writes summary.json of an audit.
func WriteAuditJSON(w io.Writer, s *AuditSummary) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(jsonSafe(s))
}

// jsonSafe replaces the NaN of checks that do not apply (JSON has no NaN)
// in the failing rows by 0; audit.csv leaves them blank.
func jsonSafe(s *AuditSummary) *AuditSummary {
	c := *s
	c.Failing = append([]AuditRow(nil), s.Failing...)
	for i := range c.Failing {
		r := &c.Failing[i]
		for _, f := range []*float64{&r.Delivered, &r.Reference, &r.Residual, &r.PPM, &r.Sigma, &r.W, &r.Tolerance, &r.Margin, &r.RawDiff} {
			if !finite(*f) {
				*f = 0
			}
		}
	}
	if c.Failing == nil {
		c.Failing = []AuditRow{}
	}
	if c.FailingLoops == nil {
		c.FailingLoops = []AuditLoop{}
	}
	for _, p := range []*[]string{&c.Reasons, &c.Warnings} {
		if *p == nil {
			*p = []string{}
		}
	}
	if c.Rejects == nil {
		c.Rejects = []AuditReject{}
	}
	return &c
}

// AuditHeader is audit.csv's header; lengths in the job's unit u.
func AuditHeader(u units.LengthUnit) []string {
	l := u.String()
	return []string{"file", "line", "id", "from", "to", "what", "verdict", "cause", "stage",
		"delivered_" + l, "control_" + l, "residual_mm", "ppm", "sigma_mm", "w", "tolerance_mm", "margin_mm", "tolerance",
		"implied_height_" + l,
		"misclosure_east_mm", "misclosure_north_mm", "misclosure_up_mm", "misclosure_horizontal_mm", "geodesic_difference_mm",
		"vector_grid_" + l, "control_grid_" + l, "vector_dh_" + l, "control_dh_" + l, "antenna_height_" + l,
		"vector_as_this_kind_" + l, "distance_minus_vector_mm", "distance_vs_vector", "signatures_tested", "cause_from_control",
		"raw_observations", "raw_slope_" + l, "our_slope_" + l, "our_horizontal_" + l, "our_ellipsoid_" + l, "our_sea_level_" + l, "our_grid_" + l,
		"our_ppm", "our_prism_constant_mm", "our_value_" + l, "delivered_minus_ours_mm", "delivered_minus_ours_w", "delivered_minus_ours_tolerance_mm",
		"delivered_vs_ours", "raw_stage", "raw_cause", "raw_signatures_tested"}
}

// WriteAuditCSV writes audit.csv: a row per delivered value.
func WriteAuditCSV(w io.Writer, s *AuditSummary, u units.LengthUnit) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(AuditHeader(u)); err != nil {
		return err
	}
	for _, r := range s.Rows {
		v := "pass"
		if r.Failed() {
			v = "fail"
		}
		raw := ""
		if r.RawCount > 0 {
			raw = strconv.Itoa(r.RawCount)
		}
		rec := []string{r.File, strconv.Itoa(r.Line), r.ID, r.From, r.To, r.What, v, r.Cause, r.Stage,
			lengthCell(r.Delivered, u, 4), lengthCell(r.Reference, u, 4), cell(r.Residual*1e3, 1), cell(r.PPM, 2), cell(r.Sigma*1e3, 1),
			cell(r.W, 2), cell(r.Tolerance*1e3, 1), cell(r.Margin*1e3, 1), s.Tolerance,
			lengthCell(r.ImpliedHeight, u, 2),
			cell(r.East*1e3, 1), cell(r.North*1e3, 1), cell(r.Up*1e3, 1), cell(r.Horizontal*1e3, 1), cell(r.LengthMisclosure*1e3, 1),
			lengthCell(r.Grid, u, 4), lengthCell(r.ControlGrid, u, 4), lengthCell(r.DeltaH, u, 4), lengthCell(r.ControlDeltaH, u, 4), lengthCell(r.AntennaHeight, u, 3),
			lengthCell(r.CrossValue, u, 4), cell(r.CrossDiff*1e3, 1), r.CrossPass, r.Tested, r.ControlCause,
			raw, lengthCell(r.RawSlope, u, 4), lengthCell(r.OurSlope, u, 4), lengthCell(r.OurHorizontal, u, 4), lengthCell(r.OurEllipsoid, u, 4),
			lengthCell(r.OurSeaLevel, u, 4), lengthCell(r.OurGrid, u, 4), cell(r.OurPPM, 2), cell(r.OurPrism*1e3, 1), lengthCell(r.OurValue, u, 4),
			cell(r.RawDiff*1e3, 1), cell(r.RawW, 2), cell(r.RawTolerance*1e3, 1), r.RawPass, r.RawStage, r.RawCause, r.RawTested}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// LoopsHeader is loops.csv's header.
var LoopsHeader = []string{"loop", "kind", "verdict", "misclosure_mm", "ppm", "tolerance_mm", "margin_mm", "sigma_mm",
	"length_m", "dx_mm", "dy_mm", "dz_mm", "marks", "vectors"}

// WriteLoopsCSV writes loops.csv: a row per independent loop.
func WriteLoopsCSV(w io.Writer, s *AuditSummary) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(LoopsHeader); err != nil {
		return err
	}
	var vectors []byte
	for _, l := range s.Loops {
		vectors = appendLoopVectors(vectors[:0], l.Vectors)
		kind, v := "loop", "pass"
		if l.Repeat {
			kind = "repeated baseline"
		}
		if !l.Pass {
			v = "fail"
		}
		rec := []string{strconv.Itoa(l.Number), kind, v, cell(l.MM, 1), cell(l.PPM, 2), cell(l.Tolerance*1e3, 1), cell(l.Margin*1e3, 1),
			cell(l.Sigma*1e3, 1), cell(l.Length, 3), cell(l.DX*1e3, 1), cell(l.DY*1e3, 1), cell(l.DZ*1e3, 1), l.Marks, string(vectors)}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// cell writes x with the given decimals (as fixed does), blank for NaN:
// a check that does not apply to the row.
func cell(x float64, decimals int) string {
	if !finite(x) {
		return ""
	}
	return fixed(x, decimals)
}

// lengthCell writes m metres in unit u, blank for NaN.
func lengthCell(m float64, u units.LengthUnit, decimals int) string {
	if !finite(m) {
		return ""
	}
	s, err := units.FormatLength(m, u, decimals)
	if err != nil {
		return ""
	}
	return s
}

// WriteAuditRejectsCSV writes rejects.csv of an audit with reduce's
// columns (RejectsHeader: file, line, raw, reason): a row per delivered
// row that could not be read or checked and per raw observation that
// could not be reduced.
func WriteAuditRejectsCSV(w io.Writer, s *AuditSummary) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(RejectsHeader); err != nil {
		return err
	}
	for _, r := range s.Rejects {
		if err := cw.Write([]string{r.File, strconv.Itoa(r.Line), r.Raw, r.Reason}); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
