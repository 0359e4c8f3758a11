package audit

import (
	"fmt"
	"math"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s2"
)

// VectorControl is what a GNSS vector is checked against, as the caller
// computed it with PROJ (reduce/job): the control marks geodetic and
// geocentric, and where the vector, laid from the start mark, ends.
// Lengths are metres.
type VectorControl struct {
	Line             LineControl // the control line between the marks
	A, B             s2.LatLng   // the marks from control
	StartECEF        r3.Vector   // mark A, geocentric
	EndECEF          r3.Vector   // mark B, geocentric
	End              s2.LatLng   // the vector's end: A's geocentric position + the vector
	EndHeight        float64     // its ellipsoidal height
	VectorEllipsoid  float64     // geodesic from A to the vector's end
	VectorGrid       float64     // plane distance from A's projection to the end's
	AntennaMin       float64     // least antenna height the audit looks for (e.g. 1 m)
	AntennaMax       float64     // greatest (e.g. 2.5 m)
	HasAntennaLimits bool
}

// Typical antenna heights above a mark on a tripod or a pole, metres
// (common practice: a fixed-height pole is 1.5 to 2 m, a tripod set-up
// 1 to 2.5 m). A vertical misclosure in this range, with the horizontal
// one within its σ, is a vector to the antenna rather than the mark.
const (
	DefaultAntennaMin = 1.0
	DefaultAntennaMax = 2.5
)

// VectorCheck is a delivered GNSS vector against control.
type VectorCheck struct {
	End       s2.LatLng // where the vector ends, laid from the start mark
	EndHeight float64
	// The vector's own distances and the control's: geodesic between
	// its ends (not the chord |Δ| nor a tangent-plane length), grid
	// distance between the projected ends, ellipsoidal height
	// difference.
	Ellipsoid, ControlEllipsoid float64
	Grid, ControlGrid           float64
	DeltaH, ControlDeltaH       float64
	Chord, ControlChord         float64 // |Δ| and |X_B − X_A|
	// Misclosure is the vector's end less the control mark B as east,
	// north, up at the start mark A; Sigma their σ (the vector's
	// covariance rotated, with the control's σ); Length the 3-D
	// misclosure, Horizontal the east-north one, LengthMisclosure the
	// vector's geodesic less the control's.
	Misclosure       r3.Vector
	Sigma            r3.Vector
	Length           float64
	Horizontal       float64
	LengthMisclosure float64
	PPM              float64 // Length / ControlEllipsoid · 1e6
	W                float64 // the largest |component / σ|
	Verdict                  // the 3-D misclosure against the tolerance at the control length
	Diagnosis        Diagnosis
	// AntennaHeight is the height along the end mark's vertical that the
	// misclosure shows (positive: the vector ends above B), metres.
	AntennaHeight float64
}

// CheckVector compares a vector with control: the misclosure of its end
// against mark B, in east, north and up at A (Topocentric) and in length,
// passes when the 3-D misclosure is within the tolerance at the control
// geodesic's length, and, where it fails or a component is significant,
// asks whether it is a vector to an antenna: a misclosure along B's
// vertical (or A's, for a vector from the antenna over A) of a typical
// antenna height, the rest within its σ. Otherwise NoKnownCause.
func CheckVector(v Vector, c VectorControl, s Settings) (VectorCheck, error) {
	if err := s.valid(); err != nil {
		return VectorCheck{}, err
	}
	if err := c.Line.valid(); err != nil {
		return VectorCheck{}, err
	}
	if !v.Cov.PositiveDefinite() {
		return VectorCheck{}, fmt.Errorf("vector covariance %v: want positive definite", v.Cov)
	}
	lo, hi := DefaultAntennaMin, DefaultAntennaMax
	if c.HasAntennaLimits {
		lo, hi = c.AntennaMin, c.AntennaMax
	}
	d := c.StartECEF.Add(v.Delta).Sub(c.EndECEF)
	enu := Topocentric(c.A, d)
	cov := TopocentricCovariance(c.A, v.Cov)
	ctl := s.ControlSigma * s.ControlSigma
	cov = cov.Add(Covariance{{ctl, 0, 0}, {0, ctl, 0}, {0, 0, ctl}})
	sig := r3.Vector{X: math.Sqrt(cov[0][0]), Y: math.Sqrt(cov[1][1]), Z: math.Sqrt(cov[2][2])}
	out := VectorCheck{
		End: c.End, EndHeight: c.EndHeight,
		Ellipsoid: c.VectorEllipsoid, ControlEllipsoid: c.Line.Ellipsoid,
		Grid: c.VectorGrid, ControlGrid: c.Line.Grid,
		DeltaH: c.EndHeight - c.Line.HeightA, ControlDeltaH: c.Line.HeightB - c.Line.HeightA,
		Chord: v.Delta.Norm(), ControlChord: c.EndECEF.Sub(c.StartECEF).Norm(),
		Misclosure: enu, Sigma: sig, Length: d.Norm(), Horizontal: math.Hypot(enu.X, enu.Y),
		LengthMisclosure: c.VectorEllipsoid - c.Line.Ellipsoid,
	}
	out.PPM = out.Length / c.Line.Ellipsoid * 1e6
	out.W = max(math.Abs(enu.X/sig.X), math.Abs(enu.Y/sig.Y), math.Abs(enu.Z/sig.Z))
	var err error
	if out.Verdict, err = verdict(&s, c.Line.Ellipsoid, out.Length); err != nil {
		return VectorCheck{}, err
	}
	if out.Pass && out.W <= s.Critical {
		return out, nil
	}
	// Antenna over B: the end lies h along B's vertical; over A: the
	// start did, so the end lies h below along A's vertical.
	fitB, hB := antennaFit(d, Up(c.B), c.A, cov, s.Critical)
	fitA, hA := antennaFit(d, Up(c.A), c.A, cov, s.Critical)
	switch {
	// An antenna is above its mark: over B the end is too high, over A
	// the end too low.
	case fitB && hB >= lo && hB <= hi:
		out.AntennaHeight = hB
		out.Diagnosis = antennaDiagnosis(fmt.Sprintf("antenna height left in at the end mark (%+.3f m along its vertical): the vector is not mark to mark", hB))
	case fitA && -hA >= lo && -hA <= hi:
		out.AntennaHeight = hA
		out.Diagnosis = antennaDiagnosis(fmt.Sprintf("antenna height left in at the start mark (%+.3f m along its vertical): the vector is not mark to mark", -hA))
	default:
		out.AntennaHeight = hB
		out.Diagnosis = Diagnosis{Cause: NoKnownCause}
	}
	return out, nil
}

func antennaDiagnosis(name string) Diagnosis {
	return Diagnosis{Cause: name, Fitting: []string{name}, Stage: StageAntenna}
}

// antennaFit takes out of the misclosure d (geocentric) its component h
// along the unit vertical up, and reports whether the rest fits within
// critical σ in each of east, north, up at o.
func antennaFit(d, up r3.Vector, o s2.LatLng, cov Covariance, critical float64) (bool, float64) {
	h := d.Dot(up)
	rest := Topocentric(o, d.Sub(up.Mul(h)))
	ok := math.Abs(rest.X) <= critical*math.Sqrt(cov[0][0]) &&
		math.Abs(rest.Y) <= critical*math.Sqrt(cov[1][1]) &&
		math.Abs(rest.Z) <= critical*math.Sqrt(cov[2][2])
	return ok, h
}
