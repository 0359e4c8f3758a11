package report

import (
	"math"
	"strconv"

	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// Units of the outputs: lengths in the job's length unit, angles in its
// angle unit; corrections and residuals always in mm and ppm.
type Units struct {
	Length units.LengthUnit
	Angle  units.AngleUnit
}

func (u Units) suffix() string { return u.Length.ColumnSuffix() }

func (u Units) angleSuffix() string { return u.Angle.ColumnSuffix() }

// ReducedHeader is the first row of reduced.csv. prism_constant_mm is
// the target's constant that the reduction applied and
// field_prism_constant_mm the one the field instrument had applied, which
// it removed first, as it removed field_ppm; their _source columns say
// where each came from (input.PrismOrigin: row, row-prism or profile).
// observed_at is the row's date and time as written, if it had one.
func ReducedHeader(u Units) []string {
	l, a := "_"+u.suffix(), "_"+u.angleSuffix()
	return []string{
		"file", "line", "obs_id", "observed_at", "from", "to", "instrument", "route",
		"slope_raw" + l, "slope_instrument" + l,
		"prism_constant_mm", "prism_source", "field_prism_constant_mm", "field_prism_source",
		"field_ppm", "field_ppm_source",
		"additive_constant_mm", "scale_correction_mm",
		"atmosphere", "temperature_c", "pressure_hpa", "humidity_pct", "refractivity_line", "refractivity_reference",
		"first_velocity_ppm", "slope_first_velocity" + l, "second_velocity_mm", "slope_chord" + l,
		"height_instrument" + l, "height_target" + l, "mean_mark_height" + l, "radius" + l,
		"zenith" + a, "refraction_arcsec",
		"ellipsoid_chord" + l, "ellipsoid_distance" + l,
		"k_from", "k_mid", "k_to", "line_scale_factor", "elevation_factor", "combined_factor", "grid_distance" + l,
		"control_geodesic" + l, "control_grid" + l,
		"residual_mm", "residual_ppm", "sigma_mm", "w", "grid_residual_mm", "tolerance_mm", "outlier", "out_of_tolerance",
		"height_target_from_zenith" + l, "height_target_difference" + l, "height_w", "height_flagged",
	}
}

// RouteName is reduced.csv's route: how the observation reached the
// ellipsoid. A slope distance and zenith angle go by "heights" (both marks'
// heights known: the chord on Euler's radius) or "zenith" (the target's
// height from the zenith angle and k). A horizontal and vertical distance
// (obsfile.SlopeFromHorizontal: the slope distance and zenith angle they
// came from, exactly) go by "horizontal heights" (the chord from
// S = sqrt(hd² + vd²)) or "horizontal" (the target's height from vd and k:
// the horizontal distance at the instrument's horizon through its
// elevation and the curvature of the horizon plane).
func RouteName(horizontal bool, r reduce.Route) string {
	switch {
	case horizontal && r == reduce.RouteZenith:
		return "horizontal"
	case horizontal:
		return "horizontal heights"
	case r == reduce.RouteZenith:
		return "zenith"
	}
	return "heights"
}

// AppendReducedRow writes one reduced observation as a CSV row (with its
// line end) in the columns of ReducedHeader.
func AppendReducedRow(b []byte, r *job.Result, u Units) []byte {
	const dl, dmm, dk = 5, 2, 10 // decimals: lengths (0.01 mm in m), millimetres, factors
	lu := float64(u.Length)
	length := func(b []byte, m float64) []byte { return appendFixed(b, m/lu, dl) }
	o, red := &r.Obs, &r.Reduction
	b = appendField(b, o.File)
	b = append(b, ',')
	b = strconv.AppendInt(b, int64(o.Line), 10)
	b = append(b, ',')
	b = appendField(b, o.ObsID)
	b = append(b, ',')
	b = appendField(b, o.ObservedAt)
	b = append(b, ',')
	b = appendField(b, o.From)
	b = append(b, ',')
	b = appendField(b, o.To)
	b = append(b, ',')
	b = appendField(b, r.Profile)
	b = append(b, ',')
	b = append(b, RouteName(o.Horizontal, red.Geometry.Route)...)
	in, fv, sv := &red.Instrument, &red.FirstVelocity, &red.SecondVelocity
	b = append(b, ',')
	b = length(b, in.Raw)
	b = append(b, ',')
	b = length(b, in.Distance)
	b = append(b, ',')
	b = appendFixed(b, in.PrismConstant*1e3, dmm)
	b = append(b, ',')
	b = append(b, r.PrismFrom.String()...)
	b = append(b, ',')
	b = appendFixed(b, in.FieldPrismConstant*1e3, dmm)
	b = append(b, ',')
	b = append(b, r.FieldPrismFrom.String()...)
	b = append(b, ',')
	b = appendFixed(b, in.FieldPPM, 3)
	b = append(b, ',')
	b = append(b, r.FieldPPMFrom.String()...)
	b = append(b, ',')
	b = appendFixed(b, in.AdditiveConstant*1e3, dmm)
	b = append(b, ',')
	b = appendFixed(b, in.ScaleCorrection*1e3, dmm+1)
	b = append(b, ',')
	b = append(b, fv.Source.String()...)
	b = append(b, ',')
	b = appendFixed(b, fv.Atmosphere.TemperatureC, 1)
	b = append(b, ',')
	b = appendFixed(b, fv.Atmosphere.PressureHPa, 1)
	b = append(b, ',')
	b = appendFixed(b, fv.Atmosphere.HumidityPct, 0)
	b = append(b, ',')
	b = appendFixed(b, fv.Line, 3)
	b = append(b, ',')
	b = appendFixed(b, fv.Reference, 3)
	b = append(b, ',')
	b = appendFixed(b, fv.PPM, 3)
	b = append(b, ',')
	b = length(b, fv.Distance)
	b = append(b, ',')
	b = appendFixed(b, (sv.Distance-sv.Input)*1e3, 3)
	b = append(b, ',')
	b = length(b, sv.Distance)
	g, h := &red.Geometry, &red.Heights
	b = append(b, ',')
	b = length(b, h.HeightA)
	b = append(b, ',')
	b = length(b, h.HeightB)
	b = append(b, ',')
	b = length(b, h.MeanMarkHeight)
	b = append(b, ',')
	b = appendFixed(b, g.Radius/lu, 1)
	b = append(b, ',')
	b = appendAngle(b, o.Zenith.Radians(), u.Angle)
	b = append(b, ',')
	if g.Route == reduce.RouteZenith {
		b = appendFixed(b, g.Refraction.Degrees()*3600, 2)
	}
	b = append(b, ',')
	b = length(b, g.Chord)
	b = append(b, ',')
	b = length(b, g.Arc)
	gr := &red.Grid
	for _, k := range [...]float64{gr.Scale.A, gr.Scale.Mid, gr.Scale.B, gr.LineScale, gr.ElevationFactor, gr.CombinedFactor} {
		b = append(b, ',')
		b = appendFixed(b, k, dk)
	}
	b = append(b, ',')
	b = length(b, gr.GridDistance)
	b = append(b, ',')
	b = length(b, r.Line.Inverse.Distance)
	b = append(b, ',')
	b = length(b, r.Line.GridDistance)
	e := &red.EllipsoidResidual
	b = append(b, ',')
	b = appendFixed(b, e.Residual*1e3, dmm)
	b = append(b, ',')
	b = appendFixed(b, e.PPM, 2)
	b = append(b, ',')
	b = appendFixed(b, e.Sigma*1e3, dmm)
	b = append(b, ',')
	b = appendFixed(b, e.Standardized, 2)
	b = append(b, ',')
	b = appendFixed(b, red.GridResidual.Residual*1e3, dmm)
	b = append(b, ',')
	b = appendFixed(b, e.Tolerance*1e3, dmm)
	b = append(b, ',')
	b = appendBool(b, e.Outlier)
	b = append(b, ',')
	b = appendBool(b, e.OutOfTolerance)
	// the reflector's height against its zenith angle, on the heights
	// route only (blank on the zenith route, which has nothing to compare)
	if g.Route == reduce.RouteHeights {
		hc := &red.HeightCheck
		b = append(b, ',')
		b = length(b, hc.Implied)
		b = append(b, ',')
		b = length(b, hc.Difference)
		b = append(b, ',')
		b = appendFixed(b, hc.Standardized, 2)
		b = append(b, ',')
		b = appendBool(b, hc.Flagged)
	} else {
		b = append(b, ",,,,"...)
	}
	return append(b, '\n')
}

// appendAngle writes an angle given in radians in unit u: 6 decimals of a
// degree (0.004″), 6 of a gon, 8 of a radian, or packed DDD.MMSSss.
func appendAngle(b []byte, rad float64, u units.AngleUnit) []byte {
	switch u {
	case units.Gons:
		return appendFixed(b, rad*200/math.Pi, 6)
	case units.Radians:
		return appendFixed(b, rad, 8)
	case units.PackedDMS:
		s, err := units.FormatAngle(s1Angle(rad), units.PackedDMS, 2)
		if err != nil {
			return append(b, "?"...)
		}
		return append(b, s...)
	}
	return appendFixed(b, rad*180/math.Pi, 6)
}

// RejectsHeader is the first row of rejects.csv.
var RejectsHeader = []string{"file", "line", "raw", "reason"}

// AppendRejectRow writes one rejected row.
func AppendRejectRow(b []byte, r *job.Result) []byte {
	b = appendField(b, r.File)
	b = append(b, ',')
	b = strconv.AppendInt(b, int64(r.LineNo), 10)
	b = append(b, ',')
	b = appendField(b, r.Raw)
	b = append(b, ',')
	b = appendField(b, r.Reason)
	return append(b, '\n')
}

// AppendHeader writes a header row.
func AppendHeader(b []byte, cols []string) []byte {
	for i, c := range cols {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendField(b, c)
	}
	return append(b, '\n')
}
