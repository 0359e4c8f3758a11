package audit

import (
	"math"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s2"
)

// Topocentric turns a geocentric difference d (metres) into east, north
// and up at the origin o, the rotation of IOGP Guidance Note 7-2's
// geocentric/topocentric conversion (EPSG method 9836):
//
//	E = −sin λ dX + cos λ dY
//	N = −sin φ cos λ dX − sin φ sin λ dY + cos φ dZ
//	U =  cos φ cos λ dX + cos φ sin λ dY + sin φ dZ
//
// returned as r3.Vector{X: E, Y: N, Z: U}.
func Topocentric(o s2.LatLng, d r3.Vector) r3.Vector {
	r := rotation(o)
	return r3.Vector{X: r[0].Dot(d), Y: r[1].Dot(d), Z: r[2].Dot(d)}
}

// Up is the ellipsoid normal at p, geocentric.
func Up(p s2.LatLng) r3.Vector {
	sp, cp := math.Sincos(float64(p.Lat))
	sl, cl := math.Sincos(float64(p.Lng))
	return r3.Vector{X: cp * cl, Y: cp * sl, Z: sp}
}

// rotation's rows are east, north and up at o.
func rotation(o s2.LatLng) [3]r3.Vector {
	sp, cp := math.Sincos(float64(o.Lat))
	sl, cl := math.Sincos(float64(o.Lng))
	return [3]r3.Vector{
		{X: -sl, Y: cl, Z: 0},
		{X: -sp * cl, Y: -sp * sl, Z: cp},
		{X: cp * cl, Y: cp * sl, Z: sp},
	}
}

// TopocentricCovariance is R Σ Rᵀ: the covariance c of a geocentric
// difference as east, north and up at o.
func TopocentricCovariance(o s2.LatLng, c Covariance) Covariance {
	r := rotation(o)
	var out Covariance
	for i := range 3 {
		for j := range 3 {
			var v float64
			for k := range 3 {
				for l := range 3 {
					v += comp(r[i], k) * c[k][l] * comp(r[j], l)
				}
			}
			out[i][j] = v
		}
	}
	return out
}

// Add is the sum of two covariances (of independent differences).
func (c Covariance) Add(o Covariance) Covariance {
	for i := range 3 {
		for j := range 3 {
			c[i][j] += o[i][j]
		}
	}
	return c
}

// Trace is the sum of the variances, m²: the variance of the length of a
// small isotropic error.
func (c Covariance) Trace() float64 { return c[0][0] + c[1][1] + c[2][2] }

// comp is component i (0 X, 1 Y, 2 Z) of v.
func comp(v r3.Vector, i int) float64 {
	switch i {
	case 0:
		return v.X
	case 1:
		return v.Y
	}
	return v.Z
}
