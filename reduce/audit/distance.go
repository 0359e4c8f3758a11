package audit

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// DistanceCheck is a delivered distance against the control distance of
// its own kind. Lengths are metres.
type DistanceCheck struct {
	Kind      Kind
	Delivered float64
	Reference float64 // the control distance of Kind (LineControl.Reference)
	Residual  float64 // Delivered − Reference
	PPM       float64 // Residual / Reference · 1e6
	Sigma     float64 // the stated σ and the control's, in quadrature
	W         float64 // Residual / Sigma
	Verdict
	// ImpliedHeight is, on a grid or ground distance, the mean mark
	// height at which an elevation factor R/(R + h) would give the
	// delivered value from the control's (the "wrong height" the
	// subcontractor may have taken), metres; NaN on other kinds.
	ImpliedHeight float64
	Diagnosis     Diagnosis
}

// CheckDistance compares a delivered distance with the control distance
// of its kind:
//
//	r = delivered − reference,  ppm = r/reference · 1e6,
//	σ = sqrt(σ_stated² + σ_control²),  w = r/σ
//
// passes when |r| is within the tolerance at the reference length, and,
// where the line fails or w is significant, matches r against the
// signatures of the usual reduction errors (Diagnose).
func CheckDistance(d Distance, c LineControl, s Settings) (DistanceCheck, error) {
	if err := s.valid(); err != nil {
		return DistanceCheck{}, err
	}
	if !(d.Value > 0) || !(d.Sigma > 0) {
		return DistanceCheck{}, fmt.Errorf("delivered distance %v m with σ %v m: want both above 0", d.Value, d.Sigma)
	}
	ref, err := c.Reference(d.Kind)
	if err != nil {
		return DistanceCheck{}, fmt.Errorf("%v control distance: %w", d.Kind, err)
	}
	r := d.Value - ref
	sigma := math.Hypot(d.Sigma, s.ControlSigma)
	v, err := verdict(&s, ref, r)
	if err != nil {
		return DistanceCheck{}, err
	}
	out := DistanceCheck{Kind: d.Kind, Delivered: d.Value, Reference: ref, Residual: r, PPM: r / ref * 1e6,
		Sigma: sigma, W: r / sigma, Verdict: v, ImpliedHeight: math.NaN()}
	if c.HasHeights && (d.Kind == Grid || d.Kind == Ground) {
		// delivered = reference (R + h_m)/(R + h)  ⇒  h = (R + h_m)·reference/delivered − R
		out.ImpliedHeight = (c.Radius+c.MeanHeight())*ref/d.Value - c.Radius
		if d.Kind == Ground {
			// delivered = s (R + h)/R  ⇒  h = R (delivered/s − 1)
			out.ImpliedHeight = c.Radius * (d.Value/c.Ellipsoid - 1)
		}
	}
	if !v.Pass || math.Abs(out.W) > s.Critical {
		out.Diagnosis = Diagnose(r, sigma, s.Critical, DistanceSignatures(d, c))
	}
	return out, nil
}

// Signature is a usual error, the stage of the reduction where it is
// made, and the difference it would make, delivered − control (or
// delivered − our own reduction), metres.
type Signature struct {
	Name      string
	Stage     string
	Predicted float64
}

// The stages of the reduction where a usual error is made, in the
// chain's order: slope → horizontal → ellipsoid → grid.
const (
	StageInstrument = "slope: instrument (prism constant)"
	StageAtmosphere = "slope: first velocity correction (ppm)"
	StageHeights    = "ellipsoid: heights (geoid separation N)"
	StageElevation  = "horizontal → ellipsoid: elevation factor"
	StageScale      = "ellipsoid → grid: line scale factor"
	StageKind       = "delivered kind: the value of another stage"
	StageAntenna    = "vector: antenna height (not mark to mark)"
)

// DistanceSignatures lists the errors a distance of d's kind may carry
// and the difference each would make on this line, from the control's
// own values (s the geodesic, g the grid distance, k Simpson's line
// scale factor, G = s (R + h_m)/R the ground distance, L = s (R + N_m)/R
// the sea-level distance, p the ppm and c the prism constant the
// subcontractor says were applied). Those that need what the job lacks
// (heights, N, the ppm or prism constant applied) are left out.
//
//	grid:      scale factor twice g(k−1); not applied g/k − g;
//	           elevation factor left out g·h_m/R; at a mark's height,
//	           not the mean, g(h_m − h_A)/(R + h_A); geoid separation
//	           ignored (heights H for h) g·N_m/R; ground delivered as
//	           grid G − g
//	ellipsoid: ground delivered G − s; sea level delivered (N
//	           ignored) L − s; grid delivered g − s
//	ground:    grid delivered g − G; scale factor applied G(k − 1);
//	           ellipsoid delivered s − G; at a mark's height, not the
//	           mean, s(h_A − h_m)/R
//	sea level: ellipsoid delivered (N ignored) s − L; ground delivered
//	           G − L; scale factor applied L(k − 1)
//	any:       ppm applied twice D·p·1e-6, D the control distance of
//	           the kind; prism constant applied twice c·D/s (the
//	           constant scaled as the line is, within 0.1 % of c)
func DistanceSignatures(d Distance, c LineControl) []Signature {
	s, g, k, R := c.Ellipsoid, c.Grid, c.LineScale, c.Radius
	hm, nm := c.MeanHeight(), c.MeanSeparation()
	G := s * (R + hm) / R
	L := s * (R + nm) / R
	var out []Signature
	add := func(ok bool, stage, name string, v float64) {
		if ok {
			out = append(out, Signature{Name: name, Stage: stage, Predicted: v})
		}
	}
	hh, nn := c.HasHeights, c.HasSeparation
	var D float64
	switch d.Kind {
	case Grid:
		D = g
		add(true, StageScale, "scale factor applied twice", g*(k-1))
		add(true, StageScale, "scale factor not applied (an ellipsoid distance delivered as grid)", g/k-g)
		add(hh, StageElevation, "elevation factor left out", g*hm/R)
		add(hh && c.HeightA != c.HeightB, StageElevation, "elevation factor taken at the start mark's height, not the mean", g*(hm-c.HeightA)/(R+c.HeightA))
		add(hh && c.HeightA != c.HeightB, StageElevation, "elevation factor taken at the end mark's height, not the mean", g*(hm-c.HeightB)/(R+c.HeightB))
		add(nn, StageHeights, "geoid separation ignored (orthometric heights taken as ellipsoidal)", g*nm/R)
		add(hh, StageKind, "grid and ground swapped (a ground distance delivered as grid)", G-g)
	case Ellipsoid:
		D = s
		add(hh, StageElevation, "elevation factor left out (a ground distance delivered as ellipsoidal)", G-s)
		add(nn, StageHeights, "a sea-level distance delivered as ellipsoidal (geoid separation ignored)", L-s)
		add(true, StageScale, "scale factor applied (a grid distance delivered as ellipsoidal)", g-s)
	case Ground:
		D = G
		add(true, StageKind, "grid and ground swapped (a grid distance delivered as ground)", g-G)
		add(true, StageScale, "scale factor applied to a ground distance", G*(k-1))
		add(true, StageElevation, "elevation factor applied (an ellipsoid distance delivered as ground)", s-G)
		add(c.HeightA != c.HeightB, StageElevation, "horizontal distance at the start mark's height, not the mean", s*(c.HeightA-hm)/R)
		add(c.HeightA != c.HeightB, StageElevation, "horizontal distance at the end mark's height, not the mean", s*(c.HeightB-hm)/R)
	case SeaLevel:
		D = L
		add(true, StageHeights, "an ellipsoidal distance delivered as sea level (geoid separation ignored)", s-L)
		add(hh, StageElevation, "elevation factor left out (a ground distance delivered as sea level)", G-L)
		add(true, StageScale, "scale factor applied to a sea-level distance", L*(k-1))
	}
	add(d.HasAppliedPPM && d.AppliedPPM != 0, StageAtmosphere, fmt.Sprintf("ppm applied twice (%+.4g ppm)", d.AppliedPPM), D*d.AppliedPPM*1e-6)
	add(d.HasPrismConstant && d.PrismConstant != 0, StageInstrument, fmt.Sprintf("prism constant applied twice (%+.4g mm)", d.PrismConstant*1e3), d.PrismConstant*D/s)
	return out
}

// NoKnownCause is the diagnosis of a difference that no signature fits.
const NoKnownCause = "no known cause"

// Diagnosis says which usual error explains a difference.
type Diagnosis struct {
	// Cause is the one signature that fits, the fitting ones joined by
	// " or " when several do (a tie: the line alone cannot tell them
	// apart), or NoKnownCause; "" when nothing needed explaining.
	Cause   string
	Fitting []string
	// Stage is the stage of the reduction where the fitting error is
	// made (the stages of the ties joined by " or "), "" when none fits.
	Stage  string
	Tested []Fit
}

// Fit is one signature tested against the observed difference.
type Fit struct {
	Signature
	Z    float64 // (observed − predicted)/σ
	Fits bool    // |Z| ≤ critical and the prediction itself differs from 0 by more than critical·σ
}

// Diagnose tests each signature's predicted difference against the
// observed one, with the combined σ: a signature fits when
//
//	|observed − predicted| ≤ critical·σ  and  |predicted| > critical·σ
//
// (the second: an error too small to tell from none explains nothing).
// It names the one that fits, lists the ties, or says NoKnownCause.
func Diagnose(observed, sigma, critical float64, sigs []Signature) Diagnosis {
	d := Diagnosis{}
	var stages []string
	for _, sg := range sigs {
		z := (observed - sg.Predicted) / sigma
		f := Fit{Signature: sg, Z: z, Fits: math.Abs(z) <= critical && math.Abs(sg.Predicted) > critical*sigma}
		d.Tested = append(d.Tested, f)
		if f.Fits {
			d.Fitting = append(d.Fitting, sg.Name)
			if !slices.Contains(stages, sg.Stage) {
				stages = append(stages, sg.Stage)
			}
		}
	}
	d.Stage = strings.Join(stages, " or ")
	switch len(d.Fitting) {
	case 0:
		d.Cause = NoKnownCause
	default:
		d.Cause = strings.Join(d.Fitting, " or ")
	}
	return d
}
