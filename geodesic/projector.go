package geodesic

import (
	"fmt"
	"math"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/twpayne/go-proj/v10"
)

// A GridPoint is a position on the map grid in metres.
type GridPoint struct {
	Easting, Northing float64
}

// A Projector converts between geodetic, grid and geocentric coordinates of
// one CRS and gives its scale factors. It owns PROJ contexts: use it from
// one goroutine at a time, make one per worker with CRS.NewProjector, and
// Close it when done.
type Projector struct {
	crs     *CRS
	ctx     *proj.Context
	proj    *proj.PJ // the map projection, radians → metres
	cart    *proj.PJ // geodetic → geocentric on the CRS's ellipsoid
	factors *factorHandle
	buf     []proj.Coord
}

// NewProjector builds the PROJ objects for one worker.
func (c *CRS) NewProjector() (*Projector, error) {
	ctx := proj.NewContext()
	pj, err := ctx.New(c.projection)
	if err != nil {
		ctx.Destroy()
		return nil, fmt.Errorf("CRS %s: PROJ cannot create projection %q: %w", c, c.projection, err)
	}
	cartDef := "+proj=cart +a=" + fmtFloat(c.ellipsoid.a) + " +rf=" + fmtFloat(c.ellipsoid.InverseFlattening())
	if c.ellipsoid.f == 0 {
		cartDef = "+proj=cart +R=" + fmtFloat(c.ellipsoid.a)
	}
	cart, err := ctx.New(cartDef)
	if err != nil {
		pj.Destroy()
		ctx.Destroy()
		return nil, fmt.Errorf("CRS %s: PROJ cannot create %q: %w", c, cartDef, err)
	}
	fh, err := openFactorHandle(c.projection)
	if err != nil {
		cart.Destroy()
		pj.Destroy()
		ctx.Destroy()
		return nil, fmt.Errorf("CRS %s: %w", c, err)
	}
	return &Projector{crs: c, ctx: ctx, proj: pj, cart: cart, factors: fh}, nil
}

// Close releases the PROJ objects. The Projector must not be used after.
func (p *Projector) Close() {
	if p.factors != nil {
		p.factors.destroy()
		p.factors = nil
	}
	if p.cart != nil {
		p.cart.Destroy()
		p.proj.Destroy()
		p.ctx.Destroy()
		p.cart, p.proj, p.ctx = nil, nil, nil
	}
}

// CRS is the CRS p projects to.
func (p *Projector) CRS() *CRS { return p.crs }

// Forward projects a geodetic position to the grid.
func (p *Projector) Forward(ll s2.LatLng) (GridPoint, error) {
	if err := checkLatLng("geodetic", ll); err != nil {
		return GridPoint{}, err
	}
	c, err := p.proj.Forward(proj.Coord{float64(ll.Lng), float64(ll.Lat), 0, 0})
	if err != nil || !finite(c[0]) || !finite(c[1]) {
		return GridPoint{}, fmt.Errorf("cannot project %v to %s: %v", ll, p.crs, errText(err))
	}
	return GridPoint{Easting: c[0], Northing: c[1]}, nil
}

// Inverse returns the geodetic position of a grid point.
func (p *Projector) Inverse(g GridPoint) (s2.LatLng, error) {
	c, err := p.proj.Inverse(proj.Coord{g.Easting, g.Northing, 0, 0})
	if err != nil || !finite(c[0]) || !finite(c[1]) {
		return s2.LatLng{}, fmt.Errorf("grid point E %.4f N %.4f m is outside %s: %v", g.Easting, g.Northing, p.crs, errText(err))
	}
	return s2.LatLng{Lat: s1.Angle(c[1]), Lng: s1.Angle(c[0])}, nil
}

const bulkChunk = 4096

// ForwardBulk projects lls into out (same length), through PROJ's array
// transformation in chunks. On error out holds the points up to the failed
// chunk and the error names the first bad point.
func (p *Projector) ForwardBulk(lls []s2.LatLng, out []GridPoint) error {
	if len(out) != len(lls) {
		return fmt.Errorf("ForwardBulk: %d points but %d outputs", len(lls), len(out))
	}
	for start := 0; start < len(lls); start += bulkChunk {
		chunk := lls[start:min(start+bulkChunk, len(lls))]
		buf := p.scratch(len(chunk))
		for i, ll := range chunk {
			if err := checkLatLng("geodetic", ll); err != nil {
				return fmt.Errorf("point %d: %w", start+i, err)
			}
			buf[i] = proj.Coord{float64(ll.Lng), float64(ll.Lat), 0, 0}
		}
		err := p.proj.ForwardArray(buf)
		for i, c := range buf {
			if err != nil || !finite(c[0]) || !finite(c[1]) {
				if _, err1 := p.Forward(chunk[i]); err1 != nil {
					return fmt.Errorf("point %d: %w", start+i, err1)
				}
			}
			out[start+i] = GridPoint{Easting: c[0], Northing: c[1]}
		}
	}
	return nil
}

// InverseBulk is the inverse of ForwardBulk.
func (p *Projector) InverseBulk(gs []GridPoint, out []s2.LatLng) error {
	if len(out) != len(gs) {
		return fmt.Errorf("InverseBulk: %d points but %d outputs", len(gs), len(out))
	}
	for start := 0; start < len(gs); start += bulkChunk {
		chunk := gs[start:min(start+bulkChunk, len(gs))]
		buf := p.scratch(len(chunk))
		for i, g := range chunk {
			buf[i] = proj.Coord{g.Easting, g.Northing, 0, 0}
		}
		err := p.proj.InverseArray(buf)
		for i, c := range buf {
			if err != nil || !finite(c[0]) || !finite(c[1]) {
				if _, err1 := p.Inverse(chunk[i]); err1 != nil {
					return fmt.Errorf("point %d: %w", start+i, err1)
				}
			}
			out[start+i] = s2.LatLng{Lat: s1.Angle(c[1]), Lng: s1.Angle(c[0])}
		}
	}
	return nil
}

func (p *Projector) scratch(n int) []proj.Coord {
	if cap(p.buf) < n {
		p.buf = make([]proj.Coord, n)
	}
	return p.buf[:n]
}

// Factors are the local distortions of the map projection at a point, from
// PROJ's proj_factors (after Snyder 1987, Map Projections — A Working
// Manual, USGS PP 1395, ch. 4).
type Factors struct {
	// MeridianScale h and ParallelScale k are the scale along the meridian
	// and the parallel; equal (the point scale factor) on a conformal
	// projection.
	MeridianScale, ParallelScale float64
	// ArealScale is the scale of areas, h k sin θ′.
	ArealScale float64
	// AngularDistortion ω is the largest change of an angle; 0 on a
	// conformal projection.
	AngularDistortion s1.Angle
	// MeridianParallelAngle θ′ is the angle between the images of the
	// meridian and the parallel; π/2 on a conformal projection.
	MeridianParallelAngle s1.Angle
	// Convergence γ is the meridian convergence: the angle from true north
	// to grid north, positive when grid north lies east (clockwise) of
	// true north, so that grid bearing ≈ geodetic azimuth − γ (before the
	// arc-to-chord correction). East of the central meridian of a northern
	// Transverse Mercator zone γ is positive, about Δλ sin φ.
	Convergence s1.Angle
	// Conformal is the CRS's Conformal: the projection method is conformal,
	// so h = k and θ′ = π/2 up to PROJ's numerical differentiation (about
	// 1e-8 in θ′).
	Conformal bool
}

// ScaleInAzimuth is the scale factor of an infinitesimal line in geodetic
// azimuth az:
//
//	m² = h² cos²α + h k cos θ′ sin 2α + k² sin²α
//
// (Snyder 1987, ch. 4; the map images of a unit north step, length h, and
// a unit east step, length k, meet at θ′). On a conformal projection it is
// the point scale factor k whatever az; there the formula would only add
// the noise of PROJ's numerical θ′ (1e-8), so k is returned as it is.
func (f Factors) ScaleInAzimuth(az s1.Angle) float64 {
	h, k := f.MeridianScale, f.ParallelScale
	if f.Conformal {
		return k
	}
	c, s := math.Cos(float64(az)), math.Sin(float64(az))
	return math.Sqrt(h*h*c*c + 2*h*k*math.Cos(float64(f.MeridianParallelAngle))*s*c + k*k*s*s)
}

// Factors returns the projection's distortions at ll.
func (p *Projector) Factors(ll s2.LatLng) (Factors, error) {
	if err := checkLatLng("geodetic", ll); err != nil {
		return Factors{}, err
	}
	f, errno := p.factors.factors(float64(ll.Lng), float64(ll.Lat))
	if errno != 0 || !finite(f.parallelScale) || !finite(f.meridianConvergence) {
		reason := "PROJ returned no value"
		if errno != 0 {
			reason = projErrnoString(errno)
		}
		return Factors{}, fmt.Errorf("scale factor of %s at %v: %s", p.crs, ll, reason)
	}
	return Factors{
		MeridianScale:         f.meridionalScale,
		ParallelScale:         f.parallelScale,
		ArealScale:            f.arealScale,
		AngularDistortion:     s1.Angle(f.angularDistortion),
		MeridianParallelAngle: s1.Angle(f.meridianParallelAngle),
		Convergence:           s1.Angle(f.meridianConvergence),
		Conformal:             p.crs.conformal,
	}, nil
}

// PointScaleFactor is the point scale factor k at ll of a conformal
// projection (CRS.Conformal). On a projection that is not conformal
// (Cassini–Soldner, say) the scale depends on direction: it returns an
// error, and Factors(ll).ScaleInAzimuth gives the scale of a line.
func (p *Projector) PointScaleFactor(ll s2.LatLng) (float64, error) {
	f, err := p.Factors(ll)
	if err != nil {
		return 0, err
	}
	if !p.crs.conformal {
		return 0, fmt.Errorf("%s (%s) is not a conformal projection: the scale depends on direction; use Factors(…).ScaleInAzimuth", p.crs, projName(p.crs.projection))
	}
	return f.ParallelScale, nil
}

// Convergence is the meridian convergence γ at ll (see Factors.Convergence).
func (p *Projector) Convergence(ll s2.LatLng) (s1.Angle, error) {
	f, err := p.Factors(ll)
	return f.Convergence, err
}

// ToGeocentric converts a geodetic position and ellipsoidal height h
// (metres) to earth-centred, earth-fixed X, Y, Z in metres on the CRS's
// ellipsoid.
func (p *Projector) ToGeocentric(ll s2.LatLng, h float64) (r3.Vector, error) {
	if err := checkLatLng("geodetic", ll); err != nil {
		return r3.Vector{}, err
	}
	if !finite(h) {
		return r3.Vector{}, fmt.Errorf("ellipsoidal height %v m: want a finite value", h)
	}
	c, err := p.cart.Forward(proj.Coord{float64(ll.Lng), float64(ll.Lat), h, 0})
	if err != nil {
		return r3.Vector{}, fmt.Errorf("geocentric of %v: %w", ll, err)
	}
	return r3.Vector{X: c[0], Y: c[1], Z: c[2]}, nil
}

// FromGeocentric converts X, Y, Z in metres to a geodetic position and
// ellipsoidal height in metres.
func (p *Projector) FromGeocentric(v r3.Vector) (s2.LatLng, float64, error) {
	if !finite(v.X) || !finite(v.Y) || !finite(v.Z) {
		return s2.LatLng{}, 0, fmt.Errorf("geocentric %v: want finite X, Y, Z", v)
	}
	c, err := p.cart.Inverse(proj.Coord{v.X, v.Y, v.Z, 0})
	if err != nil {
		return s2.LatLng{}, 0, fmt.Errorf("geodetic of %v: %w", v, err)
	}
	return s2.LatLng{Lat: s1.Angle(c[1]), Lng: s1.Angle(c[0])}, c[2], nil
}

// ToGeocentricBulk converts lls with heights hs into out (all the same
// length) with PROJ's array transformation.
func (p *Projector) ToGeocentricBulk(lls []s2.LatLng, hs []float64, out []r3.Vector) error {
	if len(hs) != len(lls) || len(out) != len(lls) {
		return fmt.Errorf("ToGeocentricBulk: %d points, %d heights, %d outputs", len(lls), len(hs), len(out))
	}
	for start := 0; start < len(lls); start += bulkChunk {
		end := min(start+bulkChunk, len(lls))
		buf := p.scratch(end - start)
		for i := range buf {
			ll := lls[start+i]
			if err := checkLatLng("geodetic", ll); err != nil {
				return fmt.Errorf("point %d: %w", start+i, err)
			}
			buf[i] = proj.Coord{float64(ll.Lng), float64(ll.Lat), hs[start+i], 0}
		}
		if err := p.cart.ForwardArray(buf); err != nil {
			return fmt.Errorf("geocentric of points %d..%d: %w", start, end-1, err)
		}
		for i, c := range buf {
			out[start+i] = r3.Vector{X: c[0], Y: c[1], Z: c[2]}
		}
	}
	return nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func errText(err error) string {
	if err == nil {
		return "PROJ returned no value"
	}
	return err.Error()
}
