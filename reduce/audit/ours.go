package audit

import (
	"fmt"
	"math"
)

// Ours is our own reduction of the subcontractor's raw observations of
// one line, with the job's settings: the mean over the line's
// observations (either direction) at every stage of the chain. Lengths
// are metres.
type Ours struct {
	Count int     // observations reduced
	Raw   float64 // the raw slope distance as the instrument stored it
	Slope float64 // S3: after the instrument, first and second velocity corrections
	// Line holds our values of the later stages in the form the control
	// gives them: Ellipsoid our distance on the ellipsoid, Grid our grid
	// distance, LineScale our line scale factor, Radius R_α, the marks'
	// heights we reduced with, and their geoid separations. Its
	// Reference(Ground) is then our horizontal distance at the marks'
	// mean height and Reference(SeaLevel) our distance on the geoid.
	Line LineControl
	// PPM is the first velocity correction we applied, N_ref − N_L
	// (ppm), and PrismConstant the target's constant we added (metres),
	// means over the observations.
	PPM, PrismConstant float64
}

// RawCheck is a delivered distance beside our own reduction of the
// subcontractor's raw observations, stage by stage. Lengths are metres;
// NaN where a stage needs what the job lacks (heights, N).
type RawCheck struct {
	Kind      Kind
	Count     int
	Delivered float64
	Ours      float64 // our value of the delivered kind
	// Our values at each stage: the raw and corrected slope distance,
	// the horizontal distance at the marks' mean height, the ellipsoid,
	// the geoid (sea level) and the grid.
	Raw, Slope, Horizontal, Ellipsoid, SeaLevel, Grid float64
	PPM, PrismConstant                                float64 // ours, as in Ours
	Difference                                        float64 // Delivered − Ours
	DifferencePPM                                     float64 // Difference / Ours · 1e6
	Sigma                                             float64 // the delivered value's stated σ
	W                                                 float64 // Difference / Sigma
	Verdict                                                   // |Difference| against the tolerance at Ours
	Diagnosis                                         Diagnosis
}

// CompareRaw sets a delivered distance beside our reduction of its raw
// observations and, where the two differ by more than the tolerance or
// significantly (|w| over the critical value), names the stage and the
// usual error that explain the difference: the signatures of
// DistanceSignatures taken with OUR stage values (o.Line) in place of the
// control's, and with the ppm and prism constant we applied where the
// subcontractor states none (rounded to 0.1 ppm and 0.1 mm), so that
// "applied twice" is tested on every line that has raw observations.
//
// Both reductions start from the same observations and share their
// errors, so the difference carries only the reductions' own: the
// stated σ of the delivered value bounds it from above, and is the σ of
// the comparison (the control's does not enter; the control is not
// used).
func CompareRaw(d Distance, o Ours, s Settings) (RawCheck, error) {
	if err := s.valid(); err != nil {
		return RawCheck{}, err
	}
	if o.Count < 1 {
		return RawCheck{}, fmt.Errorf("no reduced observation of the line")
	}
	if !(d.Value > 0) || !(d.Sigma > 0) {
		return RawCheck{}, fmt.Errorf("delivered distance %v m with σ %v m: want both above 0", d.Value, d.Sigma)
	}
	ours, err := o.Line.Reference(d.Kind)
	if err != nil {
		return RawCheck{}, fmt.Errorf("our %v distance: %w", d.Kind, err)
	}
	stage := func(k Kind) float64 {
		v, err := o.Line.Reference(k)
		if err != nil {
			return math.NaN()
		}
		return v
	}
	r := d.Value - ours
	out := RawCheck{Kind: d.Kind, Count: o.Count, Delivered: d.Value, Ours: ours,
		Raw: o.Raw, Slope: o.Slope, Horizontal: stage(Ground), Ellipsoid: o.Line.Ellipsoid, SeaLevel: stage(SeaLevel), Grid: o.Line.Grid,
		PPM: o.PPM, PrismConstant: o.PrismConstant,
		Difference: r, DifferencePPM: r / ours * 1e6, Sigma: d.Sigma, W: r / d.Sigma}
	if out.Verdict, err = verdict(&s, ours, r); err != nil {
		return RawCheck{}, err
	}
	if out.Pass && math.Abs(out.W) <= s.Critical {
		return out, nil
	}
	dd := d
	if !dd.HasAppliedPPM {
		dd.AppliedPPM, dd.HasAppliedPPM = math.Round(o.PPM*10)/10, true
	}
	if !dd.HasPrismConstant {
		dd.PrismConstant, dd.HasPrismConstant = math.Round(o.PrismConstant*1e4)/1e4, true
	}
	out.Diagnosis = Diagnose(r, d.Sigma, s.Critical, DistanceSignatures(dd, o.Line))
	return out, nil
}
