package main

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"text/template"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
)

// The files a starter job is made of.
const (
	starterJob          = "job.toml"
	starterPoints       = "points.csv"
	starterObservations = "observations.csv"
)

var starterFiles = []string{starterJob, starterPoints, starterObservations}

func runInit(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("init", flag.ContinueOnError)
	crs := fs.String("crs", "", "projected CRS of the job: EPSG:nnnn or a PROJ string (required)")
	lengthUnit := fs.String("length-unit", "m", "unit of slope distances and heights in the job's files: m, us-ft (1200/3937 m) or intl-ft (0.3048 m)")
	angleUnit := fs.String("angle-unit", "deg", "unit of zenith angles: deg, dms (packed DDD.MMSS), gon or rad")
	dir := fs.String("dir", ".", "folder to write the starter job into (made if missing)")
	force := fs.Bool("force", false, "replace job.toml, points.csv and observations.csv if they exist")
	fs.Usage = func() {
		fmt.Fprint(stderr, `Usage: geored init -crs CRS [-length-unit UNIT] [-angle-unit UNIT] [-dir DIR] [-force]

Writes a starter job into DIR: job.toml, with every setting of a job
commented (its unit, its default and what it does) and the accuracy class
names, and small example files points.csv (three invented marks inside the
CRS's area of use) and observations.csv (the six sights between them, as
an instrument with the example profile would read them), in the units
named. The job runs as written:

  geored init -crs EPSG:25832 -angle-unit dms -dir myjob
  geored reduce -config myjob/job.toml

Then replace the example marks, observations, instrument profile and
tolerance with the job's own. Existing files are left alone unless -force.
Exit status: 0 written, 2 could not write (bad flags, files exist).

Flags:
`)
		fs.PrintDefaults()
		fmt.Fprint(stderr, accuracyClassHelp())
		fmt.Fprintln(stderr, "\n"+cautionText)
	}
	if ok, code := parseFlags(fs, args, stderr); !ok {
		return code
	}
	if *crs == "" {
		return fail(stderr, "init", errors.New("-crs is required: EPSG:nnnn or a PROJ string of the job's projected CRS"))
	}
	lu, err := units.ParseLengthUnit(*lengthUnit)
	if err != nil {
		return fail(stderr, "init", fmt.Errorf("-length-unit: %w", err))
	}
	au, err := units.ParseAngleUnit(*angleUnit)
	if err != nil {
		return fail(stderr, "init", fmt.Errorf("-angle-unit: %w", err))
	}
	if err := writeStarter(*dir, *crs, lu, au, *force); err != nil {
		return fail(stderr, "init", err)
	}
	job := filepath.Join(*dir, starterJob)
	fmt.Fprintf(stdout, "wrote %s, %s and %s\n", job, filepath.Join(*dir, starterPoints), filepath.Join(*dir, starterObservations))
	fmt.Fprintf(stdout, "run it: geored reduce -config %s\n", job)
	return exitOK
}

// writeStarter writes the starter job's three files into dir. They are
// made in a folder of their own inside dir and moved into place once
// all three are made, so that a failure leaves none.
func writeStarter(dir, crs string, lu units.LengthUnit, au units.AngleUnit, force bool) error {
	if !force {
		for _, name := range starterFiles {
			if _, err := os.Lstat(filepath.Join(dir, name)); err == nil {
				return fmt.Errorf("%s exists: give -force to replace it, or another -dir", filepath.Join(dir, name))
			}
		}
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	tmp, err := os.MkdirTemp(dir, ".geored-init-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)
	if err := makeStarter(tmp, crs, lu, au); err != nil {
		return err
	}
	for _, name := range starterFiles {
		if err := os.Rename(filepath.Join(tmp, name), filepath.Join(dir, name)); err != nil {
			return err
		}
	}
	return nil
}

// Example values of the starter job, in metres where a length.
var (
	// starterMarks are three invented marks: the first at the centre of
	// the CRS's area of use, the others by a geodesic of the given length
	// and azimuth from it, with invented elevations.
	starterMarks = []struct {
		id            string
		azimuth, dist float64 // degrees, metres from the first mark
		elevation     float64 // metres
	}{{"STN-1", 0, 0, 100}, {"STN-2", 60, 640, 112.5}, {"STN-3", 150, 820, 95.25}}
	// starterAir is the air of the example sights: °C, hPa, %.
	starterAir = obsfile.Weather{TemperatureC: 15, PressureHPa: 1001, HumidityPct: 60, Has: true}
)

const (
	starterInstrumentHeight = 1.55 // metres
	starterTargetHeight     = 1.60 // metres
)

// makeStarter writes the three files into dir, which is empty.
func makeStarter(dir, crsDef string, lu units.LengthUnit, au units.AngleUnit) error {
	s, err := openSession(crsDef, "", lu)
	if err != nil {
		return err
	}
	defer s.close()
	c := s.crs
	centre := areaCentre(c)
	var pts bytes.Buffer
	fmt.Fprintf(&pts, "# Example marks of the starter job (invented): replace them with the job's control.\n")
	fmt.Fprintf(&pts, "# id: the mark's name. easting, northing: grid coordinates in %s, the unit of %s.\n", s.gridUnit, crsDef)
	fmt.Fprintf(&pts, "# elevation: orthometric height (above the geoid) in %s; ellipsoid_height instead, or lat,lon\n", lu)
	fmt.Fprintf(&pts, "# instead of easting,northing, are also read; geoid_separation (N, %s) per mark is optional.\n", lu)
	fmt.Fprintf(&pts, "id,easting,northing,elevation\n")
	for _, m := range starterMarks {
		at := centre
		if m.dist > 0 {
			if at, _, err = s.geod.Direct(centre, s1.Angle(m.azimuth)*s1.Degree, m.dist); err != nil {
				return err
			}
		}
		g, err := s.proj.Forward(at)
		if err != nil {
			return err
		}
		gu := float64(s.gridUnit)
		fmt.Fprintf(&pts, "%s,%.4f,%.4f,%.4f\n", m.id, g.Easting/gu, g.Northing/gu, m.elevation/float64(lu))
	}
	text, err := starterJobText(c, crsDef, lu, au)
	if err != nil {
		return err
	}
	jobPath := filepath.Join(dir, starterJob)
	if err := os.WriteFile(filepath.Join(dir, starterPoints), pts.Bytes(), 0o644); err != nil {
		return err
	}
	if err := os.WriteFile(jobPath, text, 0o644); err != nil {
		return err
	}
	// The example sights are what an instrument with the example profile
	// would read between the marks: predicted from the job as written.
	f, err := jobconfig.ReadFile(jobPath)
	if err != nil {
		return err
	}
	f.Points = filepath.Join(dir, f.Points)
	j, err := jobconfig.Resolve(f, jobPath)
	if err != nil {
		return err
	}
	w, err := openJobWorld(j, io.Discard)
	if err != nil {
		return err
	}
	defer w.close()
	var obs bytes.Buffer
	fmt.Fprintf(&obs, "# Example observations of the starter job (predicted from the example marks and profile):\n")
	fmt.Fprintf(&obs, "# replace them with the job's own. slope_distance as the instrument stored it and heights in %s;\n", lu)
	fmt.Fprintf(&obs, "# zenith_angle in %s; temperature_c °C, pressure_hpa hPa, humidity_pct %% at the instrument.\n", au)
	fmt.Fprintf(&obs, "# Optional columns: obs_id, instrument, temperature_c_to, pressure_hpa_to, humidity_pct_to,\n")
	fmt.Fprintf(&obs, "# prism_constant_mm, field_prism_constant_mm (geored reduce -help says what each is).\n")
	fmt.Fprintf(&obs, "obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct\n")
	n := 0
	for i, a := range starterMarks {
		for _, b := range starterMarks[i+1:] {
			for _, pair := range [][2]string{{a.id, b.id}, {b.id, a.id}} {
				n++
				sg := obsfile.Sight{Line: n, From: pair[0], To: pair[1], InstrumentHeight: starterInstrumentHeight, TargetHeight: starterTargetHeight, AtInstrument: starterAir}
				p, err := w.predict("the starter job", sg)
				if err != nil {
					return err
				}
				z, err := units.FormatAngle(p.pred.Observation.Zenith, au, starterAngleDecimals(au))
				if err != nil {
					return err
				}
				l := func(m float64) string { return strconv.FormatFloat(m/float64(lu), 'f', 4, 64) }
				fmt.Fprintf(&obs, "%d,%s,%s,%s,%s,%s,%s,%g,%g,%g\n", n, pair[0], pair[1], l(p.pred.Displayed.Slope), z,
					l(starterInstrumentHeight), l(starterTargetHeight), starterAir.TemperatureC, starterAir.PressureHPa, starterAir.HumidityPct)
			}
		}
	}
	return os.WriteFile(filepath.Join(dir, starterObservations), obs.Bytes(), 0o644)
}

// starterAngleDecimals resolve 0.01″ or better in each unit.
func starterAngleDecimals(u units.AngleUnit) int {
	switch u {
	case units.PackedDMS:
		return 2 // decimals of the seconds
	case units.Radians:
		return 9
	}
	return 6
}

// areaCentre is the middle of the CRS's area of use, or, for a CRS that
// has none (a PROJ string), its projection's origin.
func areaCentre(c *geodesic.CRS) s2.LatLng {
	a := c.AreaOfUse()
	if a.Known {
		east := a.East
		if east < a.West { // across the antimeridian
			east += 360
		}
		lon := math.Remainder((a.West+east)/2, 360)
		return s2.LatLngFromDegrees((a.South+a.North)/2, lon)
	}
	return projectionOrigin(c.Projection())
}

// projectionOrigin reads the latitude and longitude of origin of a PROJ
// string (lat_0, lon_0 or lonc; a UTM zone's central meridian).
func projectionOrigin(p string) s2.LatLng {
	var lat, lon float64
	for _, tok := range strings.Fields(p) {
		k, v, _ := strings.Cut(strings.TrimPrefix(tok, "+"), "=")
		x, err := strconv.ParseFloat(v, 64)
		if err != nil {
			continue
		}
		switch k {
		case "lat_0":
			lat = x
		case "lon_0", "lonc":
			lon = x
		case "zone":
			lon = 6*x - 183
		}
	}
	return s2.LatLngFromDegrees(lat, lon)
}

// accuracyClassHelp lists the accuracy class names with what each allows.
func accuracyClassHelp() string {
	var b strings.Builder
	b.WriteString("\nAccuracy classes, for [tolerance] class = \"NAME\" or -tolerance NAME (values\nrecalled from the standards: check them against the printed documents):\n")
	for _, n := range reduce.AccuracyClasses() {
		c, _ := reduce.AccuracyClassNamed(n)
		fmt.Fprintf(&b, "  %-28s %s\n", c.Name, jobconfig.SpecText(c.Spec))
	}
	return b.String()
}

// starterJobText is the starter job file: every setting with its unit,
// its default and a line on what it does.
func starterJobText(c *geodesic.CRS, crsDef string, lu units.LengthUnit, au units.AngleUnit) ([]byte, error) {
	var classes strings.Builder
	for _, n := range reduce.AccuracyClasses() {
		cl, _ := reduce.AccuracyClassNamed(n)
		fmt.Fprintf(&classes, "#   %-28s %s\n", cl.Name, jobconfig.SpecText(cl.Spec))
	}
	var b bytes.Buffer
	err := starterTemplate.Execute(&b, map[string]any{
		"CRS": strconv.Quote(crsDef), "CRSName": c.Name(), "GridUnit": c.Unit(),
		"LengthUnit": strconv.Quote(lu.String()), "AngleUnit": strconv.Quote(au.String()),
		"Classes": classes.String(), "Critical": strconv.FormatFloat(reduce.DefaultCriticalValue, 'f', 2, 64),
		"K": jobconfig.DefaultRefractionK, "GlobalAlpha": jobconfig.DefaultGlobalTestAlpha,
		"ZenithSigma": jobconfig.DefaultZenithSigmaArcsec, "KSigma": jobconfig.DefaultRefractionKSigma,
		"Geoid": geodesic.DefaultGeoidGrid,
	})
	return b.Bytes(), err
}

var starterTemplate = template.Must(template.New("job").Parse(`# geored starter job, written by geored init. It runs as written on the
# example files beside it (geored reduce -config job.toml); replace the
# example marks, observations, instrument profile and tolerance with the
# job's own. A line that starts with # is a comment: remove the # to set
# a key. Paths are relative to this file. geored reduce -help says more.
# Results support, and do not replace, the judgement of a licensed
# surveyor; local regulations and standards govern.

# crs: the job's projected CRS, EPSG:nnnn or a PROJ string; easting and
# northing in points.csv are in its unit ({{.GridUnit}}). Required.
crs = {{.CRS}}   # {{.CRSName}}

# points: the points CSV: id with easting,northing[,elevation], or
# lat,lon[,ellipsoid_height] in degrees. Required.
points = "points.csv"

# observations: the observation CSVs, read in order. Files named on the
# command line replace this list. Required (here or on the command line).
observations = ["observations.csv"]

# delimiter: what separates the fields of points.csv and the observation
# files: "auto" (found from each file's header: the one of , ; and tab
# that splits it into the most known column names), ",", ";" or "tab".
# In a ";" or tab file a number may write its decimal mark as ',' (not
# both marks in one file, and no separator of thousands: 1.234,5 is an
# error); in a "," file it is always '.'. Default: "auto".
# delimiter = "auto"

# out: the output folder, geored's alone; a run replaces the outputs of
# an earlier run there whole, and says so. Default: geored-out.
out = "geored-out"

# length_unit: unit of slope distances, heights and printed lengths:
# m, us-ft (1200/3937 m) or intl-ft (0.3048 m). Default: "m".
length_unit = {{.LengthUnit}}

# angle_unit: unit of zenith angles: deg, dms (packed DDD.MMSS), gon or
# rad. Default: "deg".
angle_unit = {{.AngleUnit}}

# reduction_datum: "ellipsoid" (h = H + N) or "sea-level" (legacy:
# orthometric heights, the geoid). Default: "ellipsoid".
# reduction_datum = "ellipsoid"

# geoid: the geoid grid for N where a mark gives an elevation: a PROJ
# grid name or file, or "none". Default: "{{.Geoid}}" (EGM96).
# geoid = "{{.Geoid}}"

# geoid_separation_m: one geoid separation N for the whole job, metres,
# instead of a grid. Default: none (the grid).
# geoid_separation_m = 47.5

# refraction_k: coefficient of refraction, dimensionless. Default: {{.K}}.
# refraction_k = {{.K}}

# critical_value: critical |w| of each observation's standardized
# residual. Default: {{.Critical}} (α = 0.1 %, two-sided).
# critical_value = {{.Critical}}

# job_alpha: instead of critical_value, the chance of any false flag in
# the whole job (Šidák over its rows). Default: none (critical_value).
# job_alpha = 0.05

# global_test_alpha: α of the global test of the variance factor.
# Default: {{.GlobalAlpha}}.
# global_test_alpha = {{.GlobalAlpha}}

# workers: worker goroutines; 0 uses every core. Default: 0.
# workers = 0

# default_instrument: the profile of rows without an instrument column.
# Default: the one profile, when there is one.
default_instrument = "example"

# [tolerance]: the acceptance limit of a residual: an accuracy class, or
# constant_mm + ppm. Required. The example is 5 mm + 5 ppm, linear, 95 %.
[tolerance]
# class: an accuracy class instead of constant_mm and ppm, one of
{{.Classes}}# class = "fgdc-1998/1-centimeter"
# constant_mm: the constant part, mm.
constant_mm = 5
# ppm: the part proportional to the distance, ppm (mm/km).
ppm = 5
# rule: "linear" (a + b·d) or "rss" (√(a² + (b·d)²)). Default: "linear".
# rule = "linear"
# level: "95" (a 95 % limit) or "1sigma". Default: "95".
# level = "95"

# [default_atmosphere]: the air of rows that record none: °C, hPa, %.
# Default: none (each row must record its air).
# [default_atmosphere]
# temperature_c = 15
# pressure_hpa = 1013.25
# humidity_pct = 60

# [limits]: what geored takes from any one input file at most, so that a
# broken or hostile file ends with a clear error in bounded memory. The
# defaults are far beyond any real file.
# [limits]
# max_line_bytes = 1048576     # longest line, bytes
# max_field_bytes = 65536      # longest field, bytes
# max_columns = 1000           # widest header, columns
# max_points = 1000000         # most points in the points file

# [centring]: σ of setting up and of the heights. Defaults: 0 mm, and the
# values shown for zenith_arcsec and refraction_k_sigma.
# [centring]
# instrument_mm = 0.5          # σ of centring the instrument, mm
# target_mm = 0.5              # σ of centring the target, mm
# height_mm = 1                # σ of each measured height, mm
# control_mm = 0               # σ of the control coordinates, mm
# zenith_arcsec = {{.ZenithSigma}}            # σ of a zenith angle, arc-seconds
# refraction_k_sigma = {{.KSigma}}       # σ of refraction_k, dimensionless

# [instrument.NAME]: an instrument profile; rows name it in their
# instrument column. Required: at least one. The values below are an
# EXAMPLE: take yours from the instrument's manual and calibration.
[instrument.example]
# wavelength_um: carrier wavelength of the EDM, µm. Required.
wavelength_um = 0.658
# The EDM's reference for its ppm, exactly one of: reference_atmosphere
# (°C, hPa, %), reference_refractivity (N_ref, ppm), or modulation_hz (Hz)
# with unit_length_m (m). Required.
reference_atmosphere = { temperature_c = 12, pressure_hpa = 1013.25, humidity_pct = 60 }
# reference_refractivity = 286.3
# modulation_hz = 14985454
# unit_length_m = 10
# additive_constant_mm: additive constant from calibration, mm. Default: 0.
# additive_constant_mm = 0
# scale_ppm: scale correction from calibration, ppm. Default: 0.
# scale_ppm = 0
# prism_constant_mm: the targets' prism constant where a row gives none,
# mm. Default: 0.
# prism_constant_mm = 0
# field_ppm: the ppm the instrument already applied to the stored
# distances (a row's field_ppm column says it per shot). Default: 0.
# field_ppm = 0
# field_prism_constant_mm: the prism constant the instrument already
# applied, mm. Default: 0.
# field_prism_constant_mm = 0
# field_curvature_refraction: which of its horizontal and vertical
# distances (horizontal_distance, vertical_distance) the instrument
# corrected for the earth's curvature and refraction before storing them:
# "none", "vertical" or "both"; geored undoes it exactly. Default: "none".
# field_curvature_refraction = "none"
# field_refraction_k: the coefficient of refraction the instrument used
# in that correction. Required unless "none".
# field_refraction_k = 0.13
# field_earth_radius_m: the earth radius the instrument used, m; the
# default is a value commonly used by instruments: set your manual's.
# Default: 6378000.
# field_earth_radius_m = 6378000
# row_prism_constant: what a row's prism_constant_mm is: "target" (the
# target's; the instrument applied field_prism_constant_mm) or "applied"
# (the instrument applied the row's own). Default: not given.
# row_prism_constant = "target"
# spec_mm, spec_ppm: the EDM's specification a mm + b ppm. Required.
spec_mm = 1
spec_ppm = 1.5
# spec_rule: "rss" or "linear". Default: "rss".
# spec_rule = "rss"
# spec_level: "1sigma" or "95". Default: "1sigma".
# spec_level = "1sigma"
# calibrated: the day of the instrument's last calibration, YYYY-MM-DD;
# geored nightly's trend of its fits starts there. Default: not given.
# calibrated = "2026-01-15"
# serial_number: the instrument's serial number, by which a LandXML
# file's InstrumentDetails (serialNumber) pick this profile for their
# setups. Default: not given (every setup takes default_instrument).
# serial_number = "S-1234"
`))
