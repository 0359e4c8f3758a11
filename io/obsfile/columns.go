package obsfile

import "slices"

// ObservationColumns are the columns an observation file may have, in
// the order the documentation lists them.
func ObservationColumns() []string { return slices.Clone(obsColumns) }

// PointColumns are the columns a points file may have.
func PointColumns() []string { return slices.Clone(pointColumns) }
