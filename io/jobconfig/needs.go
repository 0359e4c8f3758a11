package jobconfig

// Needs names the settings a command cannot run without; ResolveFor
// reports each that is missing with every other problem of the job.
type Needs struct {
	Points       bool // the points file
	Observations bool // at least one observation file
	Tolerance    bool // [tolerance]
	Instrument   bool // at least one [instrument.NAME] profile
}

// check reports the settings of need that f does not give. A setting
// given but wrong has been reported already, by its key.
func (n Needs) check(f File, j *Job, pr *problems) {
	if n.Points && f.Points == "" {
		pr.bad("points", "missing: want the points CSV: id with easting,northing[,elevation] in the CRS's unit and length_unit, or lat,lon[,ellipsoid_height] (or the flag -points)")
	}
	if n.Observations && len(f.Observations) == 0 {
		pr.bad("observations", `missing: want the list of observation CSVs, e.g. observations = ["day1.csv"] (or name the files after the flags; "-" reads standard input)`)
	}
	t := f.Tolerance
	if n.Tolerance && t.Class == "" && t.ConstantMM == nil && t.PPM == nil {
		pr.bad("tolerance", `missing: want [tolerance] with class = "<accuracy class>" (geored reduce -help lists them) or constant_mm and ppm (or the flag -tolerance)`)
	}
	if n.Instrument && len(f.Instrument) == 0 {
		pr.bad("instrument", "missing: want an [instrument.NAME] profile with wavelength_um, reference_atmosphere (or reference_refractivity, or modulation_hz with unit_length_m), spec_mm and spec_ppm (or the instrument flags)")
	}
}
