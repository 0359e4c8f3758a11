package units

// ColumnSuffix is the unit's spelling in the name of a CSV column that
// holds lengths in it, e.g. slope_distance_usft: m, usft or ift. Every
// CSV geored writes spells its units so.
func (u LengthUnit) ColumnSuffix() string {
	switch u {
	case USSurveyFoot:
		return "usft"
	case InternationalFoot:
		return "ift"
	}
	return "m"
}

// ColumnSuffix is the unit's spelling in the name of a CSV column that
// holds angles in it, e.g. zenith_angle_dms: deg, dms, gon or rad.
func (u AngleUnit) ColumnSuffix() string {
	switch u {
	case Gons:
		return "gon"
	case PackedDMS:
		return "dms"
	case Radians:
		return "rad"
	}
	return "deg"
}
