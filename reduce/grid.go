package reduce

import "math"

// ScaleFactors is what a map projection does to one line: its point scale
// factors at the two ends and at the geodesic midpoint, and the curvature
// of the geodesic's image on the grid.
type ScaleFactors struct {
	A, Mid, B float64
	// Curvature of the geodesic's image on the grid, 1/m of grid, positive
	// when it turns left from A to B: on a conformal map (1/k) ∂ln k/∂n
	// with n across the line to the right, for the image turns towards
	// smaller k. Zero on the central meridian of a transverse
	// Mercator or along a line of constant k; with zero the grid distance
	// is the length of the image.
	Curvature float64
}

// GridResult keeps the grid stage's values.
type GridResult struct {
	Scale           ScaleFactors
	LineScale       float64 // (kA + 4 k_mid + kB)/6, Simpson's rule
	Arc             float64 // distance on the reference surface, metres
	GridArc         float64 // length of the geodesic's image on the grid, Arc · LineScale, metres
	ArcToChord      float64 // GridDistance − GridArc, metres
	GridDistance    float64 // straight distance between the grid coordinates, metres
	MeanHeight      float64 // mean height of the two marks on the datum, metres
	Radius          float64 // R_α, metres
	ElevationFactor float64 // R/(R + MeanHeight)
	GroundDistance  float64 // horizontal distance at MeanHeight: Arc (R + MeanHeight)/R, metres
	CombinedFactor  float64 // GridDistance / GroundDistance = LineScale · ElevationFactor (less the arc-to-chord)
}

// GridDistance scales the distance on the reference surface, arc (metres),
// to the map grid with the line scale factor by Simpson's rule,
//
//	k_line = (kA + 4 k_mid + kB) / 6
//
// which gives the length of the geodesic's curved image on the grid, and
// then takes the straight distance between the grid coordinates from it,
// with the image taken as a circle of the given curvature κ:
//
//	d = (2/κ) sin(κ L / 2) ≈ L − κ² L³ / 24,  L = arc · k_line
//
// (0.1 mm on a 30 km line 390 km from a Lambert conic's central parallel;
// nil on a TM's central meridian).
//
// recommended by Stem, State Plane Coordinate System of 1983, NOAA Manual
// NOS NGS 5 (1989): within 0.3 mm of the integrated scale at 100 km, where
// the mean of the ends is off by centimetres to metres (REFERENCES.md §3).
// It also gives the elevation factor R/(R + h_mean) for the mean mark
// height h_mean (metres) and the combined factor, grid distance over the
// horizontal ground distance at h_mean, for work in ground units. One metre
// of height error moves the elevation factor by 0.157 ppm.
func GridDistance(arc float64, k ScaleFactors, meanMarkHeight, radius float64) (GridResult, error) {
	const stage = "grid"
	if err := needRange(stage, "ellipsoid distance", arc, "m", 0, 1e7); err != nil {
		return GridResult{}, err
	}
	for _, f := range [...]struct {
		name string
		v    float64
	}{{"scale factor at A", k.A}, {"scale factor at the midpoint", k.Mid}, {"scale factor at B", k.B}} {
		if err := needRange(stage, f.name, f.v, "", 0.5, 2); err != nil {
			return GridResult{}, err
		}
	}
	if err := needRange(stage, "curvature of the line on the grid", k.Curvature, "1/m", -1e-5, 1e-5); err != nil {
		return GridResult{}, err
	}
	if err := needPositive(stage, "radius", radius, "m"); err != nil {
		return GridResult{}, err
	}
	if err := needRange(stage, "mean mark height", meanMarkHeight, "m", -radius/2, radius); err != nil {
		return GridResult{}, err
	}
	line := (k.A + 4*k.Mid + k.B) / 6
	elev := radius / (radius + meanMarkHeight)
	gridArc := arc * line
	d := gridArc * sinc(k.Curvature*gridArc/2)
	return GridResult{
		Scale:           k,
		LineScale:       line,
		Arc:             arc,
		GridArc:         gridArc,
		ArcToChord:      d - gridArc,
		GridDistance:    d,
		MeanHeight:      meanMarkHeight,
		Radius:          radius,
		ElevationFactor: elev,
		GroundDistance:  arc / elev,
		CombinedFactor:  d / (arc / elev),
	}, nil
}

// sinc is sin(x)/x. Below 1e-3 rad, the x ≤ 1e-5·100 km / 2 of any line on
// a grid, it is 1 − x²/6 + x⁴/120, whose next term x⁶/5040 is under 1e-22.
func sinc(x float64) float64 {
	if math.Abs(x) < 1e-3 {
		x2 := x * x
		return 1 - x2/6*(1-x2/20)
	}
	return math.Sin(x) / x
}
