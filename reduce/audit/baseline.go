package audit

import (
	"fmt"

	"github.com/golang/geo/r3"
)

// Kind says what a delivered distance is.
type Kind int

// Kinds of delivered distance. The zero value is not a kind.
const (
	// Grid is the plane distance between the marks' projected
	// coordinates on the job's map grid.
	Grid Kind = iota + 1
	// Ellipsoid is the geodesic between the marks on the CRS's
	// ellipsoid.
	Ellipsoid
	// Ground is the horizontal distance at the marks' mean ellipsoidal
	// height h_m: the geodesic scaled by (R + h_m)/R, R the Euler radius
	// in the line's azimuth (the inverse of the elevation factor
	// R/(R + h_m) of Stem, NOAA Manual NOS NGS 5, 1989; GroundDistance of
	// reduce.GridResult).
	Ground
	// SeaLevel is the legacy distance on the geoid: the geodesic scaled
	// by (R + N_m)/R, N_m the marks' mean geoid separation (REFERENCES.md
	// §2: the difference from the ellipsoid is about s·N/R).
	SeaLevel
)

// Kinds lists the kinds in the order of their names in files.
var Kinds = []Kind{Grid, Ellipsoid, Ground, SeaLevel}

// String is the kind's name as files write it.
func (k Kind) String() string {
	switch k {
	case Grid:
		return "grid"
	case Ellipsoid:
		return "ellipsoid"
	case Ground:
		return "ground"
	case SeaLevel:
		return "sea-level"
	}
	return fmt.Sprintf("kind(%d)", int(k))
}

// Describe says in words what the kind is measured on.
func (k Kind) Describe() string {
	switch k {
	case Grid:
		return "grid distance between the projected marks"
	case Ellipsoid:
		return "geodesic on the ellipsoid"
	case Ground:
		return "horizontal distance at the marks' mean ellipsoidal height, s·(R + h_m)/R"
	case SeaLevel:
		return "distance on the geoid (sea level), s·(R + N_m)/R"
	}
	return k.String()
}

// Distance is a delivered distance and what the subcontractor says of it.
type Distance struct {
	Kind  Kind
	Value float64 // metres
	Sigma float64 // stated σ, metres
	// AppliedPPM is the atmospheric (or total) ppm the subcontractor
	// says was applied to the raw distance, where HasAppliedPPM; with it
	// the audit can test whether it was applied twice.
	AppliedPPM    float64
	HasAppliedPPM bool
	// PrismConstant is the prism constant the subcontractor says was
	// applied, metres, where HasPrismConstant.
	PrismConstant    float64
	HasPrismConstant bool
}

// Vector is a delivered GNSS baseline vector from the start mark to the
// end mark in the CRS datum's geocentric (earth-centred, earth-fixed)
// frame, metres, with its covariance, m².
type Vector struct {
	Delta r3.Vector
	Cov   Covariance
}

// Covariance is a symmetric 3×3 covariance matrix of X, Y, Z, m².
type Covariance [3][3]float64

// DiagonalCovariance is the covariance of uncorrelated components with
// the given σ, metres.
func DiagonalCovariance(sx, sy, sz float64) Covariance {
	return Covariance{{sx * sx, 0, 0}, {0, sy * sy, 0}, {0, 0, sz * sz}}
}

// PositiveDefinite reports whether c is a usable covariance: symmetric
// and positive definite (Sylvester's criterion on the leading minors).
func (c Covariance) PositiveDefinite() bool {
	for i := range 3 {
		for j := range i {
			if c[i][j] != c[j][i] {
				return false
			}
		}
	}
	m1 := c[0][0]
	m2 := c[0][0]*c[1][1] - c[0][1]*c[1][0]
	m3 := c[0][0]*(c[1][1]*c[2][2]-c[1][2]*c[2][1]) - c[0][1]*(c[1][0]*c[2][2]-c[1][2]*c[2][0]) + c[0][2]*(c[1][0]*c[2][1]-c[1][1]*c[2][0])
	return m1 > 0 && m2 > 0 && m3 > 0
}

// Baseline is one delivered line: a distance or a vector from mark From
// to mark To, and where it was read.
type Baseline struct {
	ID       string // the row's id, or "" when the file gives none
	File     string
	Line     int
	Raw      string // the row as written, its fields joined by commas
	From, To string
	IsVector bool
	Distance Distance // when !IsVector
	Vector   Vector   // when IsVector
}

// What names the delivered value: "grid distance", "vector", ….
func (b *Baseline) What() string {
	if b.IsVector {
		return "vector"
	}
	return b.Distance.Kind.String() + " distance"
}
