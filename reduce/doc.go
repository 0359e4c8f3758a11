// Package reduce reduces observed EDM slope distances to the ellipsoid and
// to the map grid, and compares them with the distances the control
// coordinates imply.
//
// The chain (DESIGN.md §4) is a series of pure functions over plain values,
// one stage per file, each returning a struct that keeps its intermediate
// values so that every stage can be shown, audited and tested on its own:
//
//	InstrumentCorrection       raw → S1   additive and prism constants, calibration scale
//	FirstVelocityCorrection    S1 → S2    IAG 1999 group refractivity, exact n_ref/n_L
//	SecondVelocityCorrection   S2 → S3    second velocity and ray arc-to-chord
//	EllipsoidDistance          S3 → s     chord and arc on the Euler radius (both heights known)
//	EllipsoidDistanceFromZenith S3, z → s, hB  when the target's height is unknown
//	GridDistance               s → d      Simpson line scale factor, grid arc-to-chord, elevation and combined factors
//	DistanceUncertainty        σ of the reduced distance
//	CheckTargetHeight          heights route: the reflector's height against its zenith angle, w-test
//	CompareDistance            residual against the inverse from control, w-test, tolerance
//
// Reduce runs the whole chain for one observation of one line. Work that
// depends only on the line (midpoint, radius, scale factors, inverse) is
// gathered once per line by NewLine, from the caller's control geometry
// and through the small interfaces Radii and ScaleFactorer that the
// geodesic package satisfies; reduce
// itself does no I/O and holds no PROJ handle.
//
// Units: lengths are float64 metres, angles s1.Angle (radians); the few
// other units (hPa, °C, %, ppm, µm) are named in the field names. Bad input
// or impossible geometry returns an *InputError naming the stage, the
// quantity, the value and what was wanted; no function returns NaN or Inf
// or panics on finite or non-finite input.
//
// Results support, and do not replace, the judgement of a licensed
// surveyor; local regulations and standards govern.
package reduce
