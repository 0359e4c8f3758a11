// Package baselines reads a subcontractor's delivered baselines CSV: per
// row either a distance of a stated kind with its σ, or a GNSS vector
// with a σ per component or a full covariance. Values are checked at the
// edge, converted from the job's length unit to metres, and every bad row
// is reported with its file, line, column, value and what was expected;
// nothing is dropped silently (Result.Read = len(Baselines) +
// len(Rejects)).
//
// Columns (a header row, columns in any order, # comment lines):
//
//	from, to, kind                  required; kind is grid, ellipsoid,
//	                                ground, sea-level or vector
//	id                              optional name of the row
//	distance, sigma                 a distance and its stated σ (length unit)
//	dx, dy, dz                      a vector, start mark to end mark, in the
//	                                CRS datum's geocentric frame (length unit)
//	sigma_x, sigma_y, sigma_z       its σ per component (length unit), or
//	cov_xx, cov_xy, cov_xz,         its covariance (length unit squared)
//	cov_yy, cov_yz, cov_zz
//	applied_ppm                     the ppm the subcontractor applied (ppm)
//	applied_prism_constant_mm       the prism constant they applied (mm)
package baselines
