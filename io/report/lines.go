package report

import (
	"strconv"
	"strings"
)

// LinesHeader is the first row of lines.csv.
func LinesHeader(u Units) []string {
	l := "_" + u.suffix()
	return []string{"from", "to", "count", "reciprocal", "control_geodesic" + l, "control_grid" + l, "mean_ellipsoid_distance" + l,
		"spread_mm", "std_dev_mm", "residual_mm", "residual_ppm", "sigma_mm", "max_abs_w",
		"flagged_observations", "unflagged_residual_mm", "k_reciprocal", "flags"}
}

// AppendLineRow writes one line of lines.csv.
func AppendLineRow(b []byte, l *Line, u Units) []byte {
	lu := float64(u.Length)
	b = appendField(b, l.From)
	b = append(b, ',')
	b = appendField(b, l.To)
	b = append(b, ',')
	b = strconv.AppendInt(b, int64(l.Count), 10)
	b = append(b, ',')
	b = appendBool(b, l.Reciprocal)
	for _, v := range [...]float64{l.Geodesic / lu, l.Grid / lu, l.MeanArc / lu} {
		b = append(b, ',')
		b = appendFixed(b, v, 5)
	}
	for _, v := range [...]float64{l.SpreadMM, l.StdDevMM, l.ResidualMM, l.ResidualPPM, l.SigmaMM, l.MaxAbsW} {
		b = append(b, ',')
		b = appendFixed(b, v, 2)
	}
	b = append(b, ',')
	b = strconv.AppendInt(b, int64(l.FlaggedObservations), 10)
	b = append(b, ',')
	if l.FlaggedObservations < l.Count {
		b = appendFixed(b, l.UnflaggedResidualMM, 2)
	}
	b = append(b, ',')
	if l.K != nil {
		b = appendFixed(b, *l.K, 3)
	}
	b = append(b, ',')
	b = appendField(b, strings.Join(l.Flags, " "))
	return append(b, '\n')
}
