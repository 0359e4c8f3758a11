package baselines

import (
	"encoding/csv"
	"fmt"
	"math"
	"strings"

	"github.com/golang/geo/r3"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/audit"
)

// parser checks one row.
type parser struct {
	file string
	line int
	col  map[string]int
	cr   *csv.Reader
	unit units.LengthUnit
	row  row
	// delim is the file's delimiter, mark its decimal mark (0 while no
	// number has shown one: a point reads them), first on markLine.
	delim    obsfile.Delimiter
	mark     units.DecimalMark
	markLine int
}

// decimalMark is the mark to read the row's numbers with.
func (p *parser) decimalMark() units.DecimalMark {
	if p.mark == 0 {
		return units.DecimalPoint
	}
	return p.mark
}

// get is the value of column name as written ("" when the file has no
// such column).
func (r *row) get(name string) string {
	switch name {
	case "id":
		return r.ID
	case "from":
		return r.From
	case "to":
		return r.To
	case "kind":
		return r.Kind
	case "distance":
		return r.Distance
	case "sigma":
		return r.Sigma
	case "dx":
		return r.DX
	case "dy":
		return r.DY
	case "dz":
		return r.DZ
	case "sigma_x":
		return r.SigmaX
	case "sigma_y":
		return r.SigmaY
	case "sigma_z":
		return r.SigmaZ
	case "cov_xx":
		return r.CovXX
	case "cov_xy":
		return r.CovXY
	case "cov_xz":
		return r.CovXZ
	case "cov_yy":
		return r.CovYY
	case "cov_yz":
		return r.CovYZ
	case "cov_zz":
		return r.CovZZ
	case "applied_ppm":
		return r.AppliedPPM
	case "applied_prism_constant_mm":
		return r.PrismMM
	}
	return ""
}

// raw is the row's known fields in the header's order, joined by commas.
func (r *row) raw(header []string, d obsfile.Delimiter) string {
	f := make([]string, len(header))
	for i, h := range header {
		f[i] = r.get(h)
	}
	return obsfile.JoinRow(f, d)
}

func (p *parser) fieldError(name, want string, cause error) error {
	e := &obsfile.FieldError{File: p.file, Line: p.line, Field: name, Value: p.row.get(name), Want: want, Err: cause}
	if i, ok := p.col[name]; ok {
		e.Line, e.Column = p.cr.FieldPos(i)
		e.Column = i + 1
	}
	return e
}

func (p *parser) rowError(want string) error {
	return &obsfile.FieldError{File: p.file, Line: p.line, Want: want}
}

func (p *parser) blank(name string) bool { return strings.TrimSpace(p.row.get(name)) == "" }

// length reads a length in the job's unit, metres out, in [lo, hi].
func (p *parser) length(name, want string, lo, hi float64) (float64, error) {
	s := strings.TrimSpace(p.row.get(name))
	if s == "" {
		return 0, p.fieldError(name, want, nil)
	}
	v, err := units.ParseLengthMark(name, s, p.unit, p.decimalMark())
	if err != nil {
		return 0, p.fieldError(name, want+obsfile.MarkNote(p.delim, p.mark, p.markLine, s), err)
	}
	if v < lo || v > hi {
		return 0, p.fieldError(name, want, nil)
	}
	return v, nil
}

// number reads a plain number in [lo, hi].
func (p *parser) number(name, want string, lo, hi float64) (float64, error) {
	s := strings.TrimSpace(p.row.get(name))
	v, err := units.ParseFloatMark(s, p.decimalMark())
	if err != nil || math.IsNaN(v) || v < lo || v > hi {
		return 0, p.fieldError(name, want+obsfile.MarkNote(p.delim, p.mark, p.markLine, s), err)
	}
	return v, nil
}

var (
	vectorColumns = []string{"dx", "dy", "dz"}
	sigmaColumns  = []string{"sigma_x", "sigma_y", "sigma_z"}
	covColumns    = []string{"cov_xx", "cov_xy", "cov_xz", "cov_yy", "cov_yz", "cov_zz"}
)

func (p *parser) parse(r row) (audit.Baseline, error) {
	p.row = r
	b := audit.Baseline{ID: strings.TrimSpace(r.ID), File: p.file, Line: p.line,
		From: strings.TrimSpace(r.From), To: strings.TrimSpace(r.To)}
	if b.From == "" {
		return b, p.fieldError("from", "the id of the start mark", nil)
	}
	if b.To == "" {
		return b, p.fieldError("to", "the id of the end mark", nil)
	}
	if b.From == b.To {
		return b, p.fieldError("to", fmt.Sprintf("a mark other than the start mark %q", b.From), nil)
	}
	kind := strings.ToLower(strings.TrimSpace(r.Kind))
	if kind == "vector" {
		b.IsVector = true
		v, err := p.vector()
		b.Vector = v
		return b, err
	}
	for _, k := range audit.Kinds {
		if kind == k.String() {
			d, err := p.distance(k)
			b.Distance = d
			return b, err
		}
	}
	return b, p.fieldError("kind", "grid, ellipsoid, ground, sea-level or vector", nil)
}

func (p *parser) distance(k audit.Kind) (audit.Distance, error) {
	d := audit.Distance{Kind: k}
	for _, c := range append(append(append([]string{}, vectorColumns...), sigmaColumns...), covColumns...) {
		if !p.blank(c) {
			return d, p.fieldError(c, "blank on a "+k.String()+" distance (vector columns are for kind vector)", nil)
		}
	}
	var err error
	unit := p.unit.String()
	if d.Value, err = p.length("distance", "a distance in "+unit+", above 0 and at most 1000 km", 1e-3, maxLength); err != nil {
		return d, err
	}
	if d.Sigma, err = p.length("sigma", "the distance's stated σ in "+unit+", above 0 and at most 10 m", 1e-9, maxSigma); err != nil {
		return d, err
	}
	if !p.blank("applied_ppm") {
		if d.AppliedPPM, err = p.number("applied_ppm", "the ppm applied, a number from -1000 to 1000", -1000, 1000); err != nil {
			return d, err
		}
		d.HasAppliedPPM = true
	}
	if !p.blank("applied_prism_constant_mm") {
		var mm float64
		if mm, err = p.number("applied_prism_constant_mm", "the prism constant applied in mm, from -100 to 100", -100, 100); err != nil {
			return d, err
		}
		d.PrismConstant, d.HasPrismConstant = mm*1e-3, true
	}
	return d, nil
}

func (p *parser) vector() (audit.Vector, error) {
	var v audit.Vector
	unit := p.unit.String()
	for _, c := range []string{"distance", "sigma", "applied_ppm", "applied_prism_constant_mm"} {
		if !p.blank(c) {
			return v, p.fieldError(c, "blank on a vector (distance columns are for the distance kinds)", nil)
		}
	}
	var xyz [3]float64
	for i, c := range vectorColumns {
		var err error
		if xyz[i], err = p.length(c, "the vector's component in "+unit+", within ±1000 km", -maxLength, maxLength); err != nil {
			return v, err
		}
	}
	v.Delta = r3.Vector{X: xyz[0], Y: xyz[1], Z: xyz[2]}
	if n := v.Delta.Norm(); n < 1e-3 || n > maxLength {
		return v, p.rowError(fmt.Sprintf("a vector of length above 1 mm and at most 1000 km, not %.4g m", n))
	}
	hasSigma, hasCov := false, false
	for _, c := range sigmaColumns {
		hasSigma = hasSigma || !p.blank(c)
	}
	for _, c := range covColumns {
		hasCov = hasCov || !p.blank(c)
	}
	switch {
	case hasSigma && hasCov:
		return v, p.rowError("either sigma_x, sigma_y, sigma_z or the six cov_ columns, not both")
	case hasSigma:
		var s [3]float64
		for i, c := range sigmaColumns {
			var err error
			if s[i], err = p.length(c, "the component's σ in "+unit+", above 0 and at most 10 m", 1e-9, maxSigma); err != nil {
				return v, err
			}
		}
		v.Cov = audit.DiagonalCovariance(s[0], s[1], s[2])
	case hasCov:
		var c [6]float64
		sq := float64(p.unit) * float64(p.unit)
		for i, name := range covColumns {
			lo, hi := float64(-maxSigma*maxSigma), float64(maxSigma*maxSigma)
			x, err := p.number(name, "a covariance in "+unit+"², within ±100 m²", lo/sq, hi/sq)
			if err != nil {
				return v, err
			}
			c[i] = x * sq
		}
		v.Cov = audit.Covariance{{c[0], c[1], c[2]}, {c[1], c[3], c[4]}, {c[2], c[4], c[5]}}
		if !v.Cov.PositiveDefinite() {
			return v, p.rowError("a positive definite covariance (cov_xx, cov_yy, cov_zz above 0 and the correlations below 1)")
		}
	default:
		return v, p.rowError("the vector's σ: sigma_x, sigma_y, sigma_z or the six cov_ columns")
	}
	return v, nil
}
