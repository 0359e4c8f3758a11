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
	Cause     string  `json:"cause,omitempty"`
	Tested    string  `json:"signatures_tested,omitempty"`
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
}

func nan() float64 { return math.NaN() }

func blankRow(b *audit.Baseline) AuditRow {
	n := nan()
	return AuditRow{File: b.File, Line: b.Line, ID: b.ID, From: b.From, To: b.To, What: b.What(), IsVector: b.IsVector,
		ImpliedHeight: n, East: n, North: n, Up: n, Horizontal: n, LengthMisclosure: n, Grid: n, ControlGrid: n,
		DeltaH: n, ControlDeltaH: n, AntennaHeight: n, CrossValue: n, CrossDiff: n}
}

// DistanceRow is a delivered distance's row.
func DistanceRow(b *audit.Baseline, c *audit.DistanceCheck) AuditRow {
	r := blankRow(b)
	r.Delivered, r.Reference, r.Residual, r.PPM, r.Sigma, r.W = c.Delivered, c.Reference, c.Residual, c.PPM, c.Sigma, c.W
	r.Tolerance, r.Margin, r.Pass, r.ImpliedHeight = c.Tolerance, c.Margin, c.Pass, c.ImpliedHeight
	r.Cause, r.Tested = c.Diagnosis.Cause, testedText(c.Diagnosis.Tested)
	return r
}

// VectorRow is a delivered vector's row.
func VectorRow(b *audit.Baseline, c *audit.VectorCheck) AuditRow {
	r := blankRow(b)
	r.Delivered, r.Reference, r.Residual, r.PPM, r.Sigma, r.W = c.Ellipsoid, c.ControlEllipsoid, c.Length, c.PPM, c.Sigma.Norm(), c.W
	r.Tolerance, r.Margin, r.Pass = c.Tolerance, c.Margin, c.Pass
	r.Cause = c.Diagnosis.Cause
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
	Number    int      `json:"loop"`
	Repeat    bool     `json:"repeat"`
	Vectors   []string `json:"vectors"` // "file:line" of each vector, "−" before one taken backwards
	Marks     string   `json:"marks"`   // the marks in turn
	Length    float64  `json:"length_m"`
	MM        float64  `json:"misclosure_mm"`
	DX        float64  `json:"dx_m"`
	DY        float64  `json:"dy_m"`
	DZ        float64  `json:"dz_m"`
	PPM       float64  `json:"ppm"`
	Sigma     float64  `json:"sigma_m"`
	Tolerance float64  `json:"tolerance_m"`
	Margin    float64  `json:"margin_m"`
	Pass      bool     `json:"pass"`
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
	Tolerance    string      `json:"tolerance"`
	Critical     float64     `json:"critical_value"`
	ControlSigma float64     `json:"control_sigma_m"`
	CRS          string      `json:"crs"`
	CRSName      string      `json:"crs_name"`
	Ellipsoid    string      `json:"ellipsoid"`
	Geoid        string      `json:"geoid"`
	LengthUnit   string      `json:"length_unit"`
	Inputs       []InputFile `json:"inputs"`
	Failing      []AuditRow  `json:"failing"`
	FailingLoops []AuditLoop `json:"failing_loops"`
	Rejects      []string    `json:"rejects"`
	Warnings     []string    `json:"warnings"`
	Caution      string      `json:"caution"`

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
	if r.Pass && r.CrossPass != "fail" {
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
	if c.Rejected > 0 {
		s.Reasons = append(s.Reasons, fmt.Sprintf("%d of %d rows rejected", c.Rejected, c.Read))
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
		for _, f := range []*float64{&r.Delivered, &r.Reference, &r.Residual, &r.PPM, &r.Sigma, &r.W, &r.Tolerance, &r.Margin} {
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
	for _, p := range []*[]string{&c.Reasons, &c.Rejects, &c.Warnings} {
		if *p == nil {
			*p = []string{}
		}
	}
	return &c
}

// AuditHeader is audit.csv's header; lengths in the job's unit u.
func AuditHeader(u units.LengthUnit) []string {
	l := u.String()
	return []string{"file", "line", "id", "from", "to", "what", "verdict", "cause",
		"delivered_" + l, "control_" + l, "residual_mm", "ppm", "sigma_mm", "w", "tolerance_mm", "margin_mm", "tolerance",
		"implied_height_" + l,
		"misclosure_east_mm", "misclosure_north_mm", "misclosure_up_mm", "misclosure_horizontal_mm", "geodesic_difference_mm",
		"vector_grid_" + l, "control_grid_" + l, "vector_dh_" + l, "control_dh_" + l, "antenna_height_" + l,
		"vector_as_this_kind_" + l, "distance_minus_vector_mm", "distance_vs_vector", "signatures_tested"}
}

// WriteAuditCSV writes audit.csv: a row per delivered value.
func WriteAuditCSV(w io.Writer, s *AuditSummary, u units.LengthUnit) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(AuditHeader(u)); err != nil {
		return err
	}
	for _, r := range s.Rows {
		v := "pass"
		if !r.Pass {
			v = "fail"
		}
		rec := []string{r.File, strconv.Itoa(r.Line), r.ID, r.From, r.To, r.What, v, r.Cause,
			lengthCell(r.Delivered, u, 4), lengthCell(r.Reference, u, 4), cell(r.Residual*1e3, 1), cell(r.PPM, 2), cell(r.Sigma*1e3, 1),
			cell(r.W, 2), cell(r.Tolerance*1e3, 1), cell(r.Margin*1e3, 1), s.Tolerance,
			lengthCell(r.ImpliedHeight, u, 2),
			cell(r.East*1e3, 1), cell(r.North*1e3, 1), cell(r.Up*1e3, 1), cell(r.Horizontal*1e3, 1), cell(r.LengthMisclosure*1e3, 1),
			lengthCell(r.Grid, u, 4), lengthCell(r.ControlGrid, u, 4), lengthCell(r.DeltaH, u, 4), lengthCell(r.ControlDeltaH, u, 4), lengthCell(r.AntennaHeight, u, 3),
			lengthCell(r.CrossValue, u, 4), cell(r.CrossDiff*1e3, 1), r.CrossPass, r.Tested}
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
	for _, l := range s.Loops {
		kind, v := "loop", "pass"
		if l.Repeat {
			kind = "repeated baseline"
		}
		if !l.Pass {
			v = "fail"
		}
		rec := []string{strconv.Itoa(l.Number), kind, v, cell(l.MM, 1), cell(l.PPM, 2), cell(l.Tolerance*1e3, 1), cell(l.Margin*1e3, 1),
			cell(l.Sigma*1e3, 1), cell(l.Length, 3), cell(l.DX*1e3, 1), cell(l.DY*1e3, 1), cell(l.DZ*1e3, 1), l.Marks, strings.Join(l.Vectors, " ")}
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
