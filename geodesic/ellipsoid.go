package geodesic

import (
	"fmt"
	"math"
	"strconv"

	"github.com/golang/geo/s1"
)

// An Ellipsoid is a reference ellipsoid of revolution given by its
// semi-major axis a (metres) and flattening f. Build one with NewEllipsoid
// or take it from a CRS (CRS.Ellipsoid). The zero Ellipsoid is not valid:
// its radii are 0 and Valid reports false.
type Ellipsoid struct {
	a, f float64
	name string
}

// Reference ellipsoids by their published defining constants (a, 1/f).
//
// Sources: NIMA TR8350.2 (WGS 84); Moritz (1980) Geodetic Reference System
// 1980, Bull. Géod. 54 (GRS 80); IOGP EPSG Geodetic Parameter Dataset
// (Bessel 1841 EPSG:7004, International 1924 EPSG:7022, Airy 1830
// EPSG:7001, Clarke 1866 EPSG:7008 which is defined by a and b).
var (
	WGS84             = mustEllipsoid("WGS 84", 6378137, 298.257223563)
	GRS80             = mustEllipsoid("GRS 1980", 6378137, 298.257222101)
	Bessel1841        = mustEllipsoid("Bessel 1841", 6377397.155, 299.1528128)
	International1924 = mustEllipsoid("International 1924", 6378388, 297)
	Airy1830          = mustEllipsoid("Airy 1830", 6377563.396, 299.3249646)
	Clarke1866        = mustEllipsoid("Clarke 1866", 6378206.4, 6378206.4/(6378206.4-6356583.8))
)

func mustEllipsoid(name string, a, invF float64) Ellipsoid {
	e, err := NewEllipsoid(a, invF)
	if err != nil {
		panic(err)
	}
	e.name = name
	return e
}

// NewEllipsoid returns the ellipsoid with semi-major axis a in metres and
// inverse flattening invF; invF = 0 means a sphere of radius a. It refuses
// a non-finite or non-positive a, and an invF that is negative, non-finite
// or at most 1 (that is, anything but an oblate ellipsoid or a sphere).
func NewEllipsoid(a, invF float64) (Ellipsoid, error) {
	if !(a > 0) || math.IsInf(a, 0) {
		return Ellipsoid{}, fmt.Errorf("ellipsoid semi-major axis %v m: want a finite length > 0", a)
	}
	if invF == 0 {
		return Ellipsoid{a: a}, nil
	}
	if !(invF > 1) || math.IsInf(invF, 0) {
		return Ellipsoid{}, fmt.Errorf("ellipsoid inverse flattening %v: want 0 (sphere) or a finite value > 1", invF)
	}
	return Ellipsoid{a: a, f: 1 / invF}, nil
}

// Valid reports whether e was made by NewEllipsoid or taken from a CRS.
func (e Ellipsoid) Valid() bool { return e.a > 0 }

// Name is the ellipsoid's name where it came from a CRS or a predefined
// value, "" otherwise.
func (e Ellipsoid) Name() string { return e.name }

// SemiMajorAxis is a, in metres.
func (e Ellipsoid) SemiMajorAxis() float64 { return e.a }

// SemiMinorAxis is b = a(1 − f), in metres.
func (e Ellipsoid) SemiMinorAxis() float64 { return e.a * (1 - e.f) }

// Flattening is f.
func (e Ellipsoid) Flattening() float64 { return e.f }

// InverseFlattening is 1/f, or 0 for a sphere.
func (e Ellipsoid) InverseFlattening() float64 {
	if e.f == 0 {
		return 0
	}
	return 1 / e.f
}

// EccentricitySquared is e² = f(2 − f).
func (e Ellipsoid) EccentricitySquared() float64 { return e.f * (2 - e.f) }

// w returns W = sqrt(1 − e² sin²φ).
func (e Ellipsoid) w(lat s1.Angle) float64 {
	s := math.Sin(float64(lat))
	return math.Sqrt(1 - e.EccentricitySquared()*s*s)
}

// MeridianRadius is the radius of curvature in the meridian at latitude
// lat, in metres:
//
//	M = a(1 − e²)/W³,  W = sqrt(1 − e² sin²φ)
//
// Source: Torge & Müller, Geodesy, 4th ed. (2012), eq. 4.15.
func (e Ellipsoid) MeridianRadius(lat s1.Angle) float64 {
	w := e.w(lat)
	return e.a * (1 - e.EccentricitySquared()) / (w * w * w)
}

// PrimeVerticalRadius is the radius of curvature in the prime vertical at
// latitude lat, in metres: N = a/W (Torge & Müller 2012, eq. 4.15).
func (e Ellipsoid) PrimeVerticalRadius(lat s1.Angle) float64 {
	return e.a / e.w(lat)
}

// RadiusInAzimuth is the radius of curvature of the normal section in
// azimuth az at latitude lat, in metres, by Euler's theorem:
//
//	1/R_α = cos²α/M + sin²α/N,  so  R_α = M N / (N cos²α + M sin²α)
//
// Source: Torge & Müller (2012) eq. 4.19; Vaníček & Krakiwsky (1986) §15.
func (e Ellipsoid) RadiusInAzimuth(lat, az s1.Angle) float64 {
	m := e.MeridianRadius(lat)
	n := e.PrimeVerticalRadius(lat)
	c, s := math.Cos(float64(az)), math.Sin(float64(az))
	return m * n / (n*c*c + m*s*s)
}

// GaussianMeanRadius is sqrt(M N), the mean of R_α over all azimuths'
// curvatures, in metres.
func (e Ellipsoid) GaussianMeanRadius(lat s1.Angle) float64 {
	return math.Sqrt(e.MeridianRadius(lat) * e.PrimeVerticalRadius(lat))
}

// String is "name (a = … m, 1/f = …)".
func (e Ellipsoid) String() string {
	name := e.name
	if name == "" {
		name = "ellipsoid"
	}
	return fmt.Sprintf("%s (a = %.4f m, 1/f = %.9f)", name, e.a, e.InverseFlattening())
}

// fmtFloat writes x in full precision without an exponent, for PROJ strings.
func fmtFloat(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) }
