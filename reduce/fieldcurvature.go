package reduce

import (
	"fmt"
	"math"

	"github.com/golang/geo/s1"
)

// FieldCurvatureMode says which of its horizontal and vertical distances
// a total station corrected for the earth's curvature and refraction
// before storing them.
type FieldCurvatureMode uint8

const (
	// FieldCurvatureNone: the instrument stored hd = S sin z and
	// vd = S cos z (the default).
	FieldCurvatureNone FieldCurvatureMode = iota
	// FieldCurvatureVertical: only the vertical distance is corrected,
	// hd = S sin z.
	FieldCurvatureVertical
	// FieldCurvatureBoth: both distances are corrected.
	FieldCurvatureBoth
)

func (m FieldCurvatureMode) String() string {
	switch m {
	case FieldCurvatureNone:
		return "none"
	case FieldCurvatureVertical:
		return "vertical"
	case FieldCurvatureBoth:
		return "both"
	}
	return fmt.Sprintf("FieldCurvatureMode(%d)", uint8(m))
}

// DefaultFieldEarthRadius is the earth radius, metres, that total
// stations commonly use in their curvature and refraction correction
// (from memory; set the one in the instrument's manual).
const DefaultFieldEarthRadius = 6378000.0

// The earth radii and coefficients of refraction a FieldCurvature takes.
const (
	MinFieldEarthRadius = 6.3e6 // metres
	MaxFieldEarthRadius = 6.4e6 // metres
	// MaxFieldK is the bound k stays below: at k = 1 the line of sight
	// would follow the level surface.
	MaxFieldK = 1.0
)

// FieldCurvature is the curvature and refraction correction a total
// station applied to the horizontal and vertical distances it stored:
// which of them (Mode), with its coefficient of refraction K and its
// earth radius Radius (metres). The zero value applied nothing.
//
// The instrument's forward formulas are the textbook first-order forms
// as total-station manuals give them (from memory; the geometry as in
// Rüeger 1996, Electronic Distance Measurement, and Torge & Müller 2012,
// Geodesy, from memory). With S the slope distance, z the observed
// (refracted) zenith angle at the instrument's axis A, and
//
//	X = S cos z,  Y = S sin z
//
// the components of S along and across the plumb line at A, the earth is
// taken as the sphere of radius R through A (centre O, |OA| = R) and the
// line of sight as a circular arc of radius R/k, concave to the earth.
// The chord from A to the reflector B leaves A at zenith angle
//
//	ζ = z + δ,  δ = kS/(2R) ≈ kψ/2,  ψ ≈ Y/R
//
// (the angle between an arc's tangent and its chord is half the angle the
// arc subtends at its own centre, S/(R/k)), ψ being the angle AOB.
// Projected on the plumb line and across it at A, the chord's components
// are X_c = S cos ζ ≈ X − Y·kS/(2R) ≈ X − kY²/(2R) and
// Y_c = S sin ζ ≈ Y + X·kS/(2R) ≈ Y + kXY/(2R), to first order in S/R.
//
// The height difference is the height of B above the sphere through A:
//
//	|OB| − R = √((R + X_c)² + Y_c²) − R ≈ X_c + Y_c²/(2R)
//
// so, with Y_c² ≈ Y² to this order,
//
//	vd' = X + (1 − k)·Y²/(2R)
//
// (the curvature Y²/(2R) less the refraction kY²/(2R)). The horizontal
// distance is the arc on that sphere from A to the foot of OB:
//
//	R·ψ = R·atan(Y_c/(R + X_c)) ≈ Y_c·(1 − X_c/R) ≈ Y + kXY/(2R) − XY/R
//
// so
//
//	hd' = Y − (1 − k/2)·X·Y/R
//
// Mode FieldCurvatureVertical stores hd = Y and vd'; FieldCurvatureBoth
// stores hd' and vd'. The neglected terms are of order Y³/R² and
// XY²/R² (8 mm and 1 mm at Y = 10 km, X = 900 m): they belong to the
// instrument's own formulas, which Forward reproduces and Inverse undoes
// exactly, so that the chain's own curvature and refraction apply once.
type FieldCurvature struct {
	Mode   FieldCurvatureMode
	K      float64 // the instrument's coefficient of refraction, 0 ≤ K < 1
	Radius float64 // the instrument's earth radius, metres
}

const fieldCurvatureStage = "field curvature and refraction"

// Check says whether c is one an instrument can have applied: a known
// mode and, unless the mode is none, 0 ≤ K < 1 and Radius in
// [MinFieldEarthRadius, MaxFieldEarthRadius].
func (c FieldCurvature) Check() error {
	switch c.Mode {
	case FieldCurvatureNone:
		return nil
	case FieldCurvatureVertical, FieldCurvatureBoth:
	default:
		return &InputError{Stage: fieldCurvatureStage, Quantity: "mode", Got: float64(c.Mode), Want: "none, vertical or both"}
	}
	if !(c.K >= 0 && c.K < MaxFieldK) {
		return &InputError{Stage: fieldCurvatureStage, Quantity: "coefficient of refraction", Got: c.K, Want: "0 ≤ k < 1"}
	}
	return needRange(fieldCurvatureStage, "earth radius", c.Radius, "m", MinFieldEarthRadius, MaxFieldEarthRadius)
}

// MaxLength is the longest horizontal distance, and the largest vertical
// distance up or down, metres, that Inverse takes: R/100, about 64 km,
// beyond a total station's range (common practice). Up to it Inverse's
// equation has exactly one root (see Inverse).
func (c FieldCurvature) MaxLength() float64 { return c.Radius / 100 }

// Forward is what the instrument stores for a slope distance s (metres)
// at observed zenith angle z: its horizontal and vertical distances, hd'
// and vd' with c's correction (see FieldCurvature). With mode none they
// are S sin z and S cos z. c is taken as Check accepts it.
func (c FieldCurvature) Forward(s float64, z s1.Angle) (hd, vd float64) {
	sin, cos := math.Sincos(float64(z))
	x, y := s*cos, s*sin
	switch c.Mode {
	case FieldCurvatureVertical:
		return y, x + (1-c.K)*y*y/(2*c.Radius)
	case FieldCurvatureBoth:
		return y - (1-c.K/2)*x*y/c.Radius, x + (1-c.K)*y*y/(2*c.Radius)
	}
	return y, x
}

// fieldCurvatureMaxIter bounds Inverse's Newton iterations. From its
// start Y = hd the relative error is at most about b·vd + ab·hd² ≈
// MaxLength/R = 0.01 and squares each step: 1e-2, 1e-4, 1e-8, 1e-16,
// then a step below the stopping bound — five steps at most; the bound
// leaves room for round-off.
const fieldCurvatureMaxIter = 12

// Inverse undoes c: the slope distance (metres) and observed zenith angle
// whose stored horizontal and vertical distances are hd and vd (metres),
// so that Forward(Inverse(hd, vd)) = (hd, vd) to round-off.
//
// Mode vertical is solved in closed form: Y = hd, X = vd − (1 − k)hd²/(2R).
// Mode both eliminates X = vd − a·Y² (a = (1 − k)/(2R)) from
// hd = Y − b·X·Y (b = (1 − k/2)/R), leaving the cubic
//
//	g(Y) = (1 − b·vd)·Y + a·b·Y³ − hd = 0
//
// whose slope 1 − b·vd + 3ab·Y² is at least 0.99 for |vd| ≤ MaxLength:
// g rises monotonically, so it has one root, which Newton's method finds
// from Y = hd. The iteration stops once a step is below 1e-14·|Y|: Newton
// converges quadratically, so the error after it is of order
// (1e-14·|Y|)² times g's second derivative over its slope, far below
// one unit in the last place. An iteration that has not stopped after
// fieldCurvatureMaxIter steps is an error, and so are hd or vd non-finite
// or beyond MaxLength, a negative hd, and a c that Check refuses.
func (c FieldCurvature) Inverse(hd, vd float64) (s float64, z s1.Angle, err error) {
	x, y, _, err := c.inverse(hd, vd)
	if err != nil {
		return 0, 0, err
	}
	return math.Hypot(x, y), s1.Angle(math.Atan2(y, x)), nil
}

// inverse is Inverse's X = S cos z and Y = S sin z, with the number of
// Newton steps taken.
func (c FieldCurvature) inverse(hd, vd float64) (x, y float64, steps int, err error) {
	if c.Mode == FieldCurvatureNone {
		return vd, hd, 0, nil
	}
	if err := c.Check(); err != nil {
		return 0, 0, 0, err
	}
	limit := c.MaxLength()
	if err := needRange(fieldCurvatureStage, "horizontal distance", hd, "m", 0, limit); err != nil {
		return 0, 0, 0, err
	}
	if err := needRange(fieldCurvatureStage, "vertical distance", vd, "m", -limit, limit); err != nil {
		return 0, 0, 0, err
	}
	a := (1 - c.K) / (2 * c.Radius)
	if c.Mode == FieldCurvatureVertical {
		return vd - a*hd*hd, hd, 0, nil
	}
	b := (1 - c.K/2) / c.Radius
	lin := 1 - b*vd
	y = hd
	for steps = 1; steps <= fieldCurvatureMaxIter; steps++ {
		g := lin*y + a*b*y*y*y - hd
		dy := g / (lin + 3*a*b*y*y)
		y -= dy
		if math.Abs(dy) <= 1e-14*math.Abs(y) {
			return vd - a*y*y, y, steps, nil
		}
	}
	return 0, 0, steps, &InputError{Stage: fieldCurvatureStage, Quantity: "horizontal distance", Got: hd, Unit: "m",
		Want: fmt.Sprintf("one that %d Newton steps undo (vertical distance %g m)", fieldCurvatureMaxIter, vd)}
}
