// Package geodesic holds the ellipsoid and the map projection under every
// reduced distance: Karney's geodesics, radii of curvature, point scale
// factors and meridian convergence, geodetic ↔ grid ↔ geocentric
// conversions and the geoid separation, all through PROJ (the C library,
// version 9.1 or later, via github.com/twpayne/go-proj/v10 and the one cgo
// file of this package for what that binding lacks).
//
// Lengths are metres; angles are s1.Angle; positions are s2.LatLng on the
// job CRS's own geodetic datum. Grid coordinates are metres, whatever the
// unit of the CRS: the CRS reports its unit (CRS.Unit, CRS.UnitCode,
// CRS.MetresPerUnit) so that files in US survey feet convert at the edge
// (io/units.AxisUnit recognises it).
//
// # Concurrency
//
// Ellipsoid, *Geodesic and *CRS are immutable after construction and safe
// for concurrent use by any number of goroutines; the geodesic routines run
// without a lock.
//
// *Projector and *Geoid own PROJ contexts and PROJ objects. PROJ objects
// must not be shared between threads, and go-proj takes its context's mutex
// on every call, so each worker goroutine makes its own with
// CRS.NewProjector and OpenGeoid (or Geoid.Clone) and calls Close when done.
// Their contexts are silent: PROJ's messages come back as errors, never on
// stderr (go-proj's package-level default context, which does print, is
// never used here). The network is disabled: grids come from local files
// only.
package geodesic
