package main

import (
	"encoding/csv"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

type inverseFlags struct {
	job                   jobFlags
	points                string // the job's points file, as resolved
	from, to, lines, a, b string
	csv                   bool
}

// inverseJobFlags are the job flags inverse uses: the CRS, the points,
// the geoid and the units.
var inverseJobFlags = []string{"config", "crs", "points", "length-unit", "angle-unit", "geoid", "geoid-separation-m", "delimiter"}

func (f *inverseFlags) register(fs *flag.FlagSet) {
	f.job.registerOnly(fs, inverseJobFlags...)
	fs.StringVar(&f.from, "from", "", "id of the first point (with -to)")
	fs.StringVar(&f.to, "to", "", "id of the second point (with -from)")
	fs.StringVar(&f.lines, "lines", "", "CSV of from,to point ids; default: every pair of the points file")
	fs.StringVar(&f.a, "a", "", "first point as 'lat,lon' in decimal degrees (instead of -points)")
	fs.StringVar(&f.b, "b", "", "second point as 'lat,lon' in decimal degrees (instead of -points)")
	fs.BoolVar(&f.csv, "csv", false, "print CSV with full precision instead of a table")
}

func runInverse(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("inverse", flag.ContinueOnError)
	var f inverseFlags
	f.register(fs)
	fs.Usage = func() {
		fmt.Fprintln(stderr, "Usage: geored inverse (-config job.toml | -crs CRS) (-points FILE [-from ID -to ID | -lines FILE] | -a LAT,LON -b LAT,LON) [flags]")
		fmt.Fprintln(stderr, "\nGeodesic distance and azimuths on the CRS's ellipsoid, grid distance and bearing,")
		fmt.Fprintln(stderr, "point and line scale factors (Simpson's rule) and meridian convergence. With -config,")
		fmt.Fprintln(stderr, "the job's crs, points, geoid, length_unit and angle_unit are used (flags win over")
		fmt.Fprintln(stderr, "them); lengths are printed in the length unit and angles in the angle unit (a")
		fmt.Fprintln(stderr, "table shows dms as d°m′s″).\n\nFlags:")
		fs.PrintDefaults()
		fmt.Fprintln(stderr, "\n"+cautionText)
	}
	if ok, code := parseFlags(fs, args, stderr); !ok {
		return code
	}
	if f.job.config == "" && f.job.crs == "" {
		return fail(stderr, "inverse", errors.New("-crs is required (or -config with a job file that gives crs)"))
	}
	j, err := f.job.resolve(fs)
	if err != nil {
		return fail(stderr, "inverse", err)
	}
	f.points = j.Points
	s, err := openJobSession(j)
	if err != nil {
		return fail(stderr, "inverse", err)
	}
	defer s.close()
	pairs, err := f.pairs(s, stderr)
	if err != nil {
		return fail(stderr, "inverse", err)
	}
	lines := make([]job.InverseLine, 0, len(pairs))
	for _, pr := range pairs {
		l, err := job.Inverse(pr[0], pr[1], s.geod, s.proj)
		if err != nil {
			return fail(stderr, "inverse", fmt.Errorf("%s → %s: %w", pr[0].ID, pr[1].ID, err))
		}
		lines = append(lines, l)
	}
	if f.csv {
		err = writeInverseCSV(stdout, lines, j.LengthUnit, j.AngleUnit)
	} else {
		err = writeInverseTable(stdout, s, lines, j.LengthUnit, j.AngleUnit)
	}
	if err != nil {
		return fail(stderr, "inverse", err)
	}
	return exitOK
}

// pairs returns the point pairs the flags ask for.
func (f *inverseFlags) pairs(s *session, stderr io.Writer) ([][2]job.Control, error) {
	if f.a != "" || f.b != "" {
		if f.points != "" || f.a == "" || f.b == "" {
			return nil, errors.New("give -a and -b together, without -points")
		}
		var pr [2]job.Control
		for i, text := range []string{f.a, f.b} {
			ll, err := parseLatLon(text, []string{"-a", "-b"}[i])
			if err != nil {
				return nil, err
			}
			pt := obsfile.Point{ID: []string{"A", "B"}[i], LatLng: ll, HasLatLng: true}
			c, err := job.ResolveControl([]obsfile.Point{pt}, "flag "+[]string{"-a", "-b"}[i], s.proj, job.Separations{})
			if err != nil {
				return nil, err
			}
			pr[i] = c[pt.ID]
		}
		return [][2]job.Control{pr}, nil
	}
	if f.points == "" {
		return nil, errors.New("give -points FILE, or -a and -b")
	}
	if err := s.loadPointFile(f.points, warnTo(stderr)); err != nil {
		return nil, err
	}
	var ids [][2]string
	switch {
	case f.from != "" || f.to != "":
		if f.from == "" || f.to == "" || f.lines != "" {
			return nil, errors.New("give -from and -to together, without -lines")
		}
		ids = [][2]string{{f.from, f.to}}
	case f.lines != "":
		fh, err := os.Open(f.lines)
		if err != nil {
			return nil, err
		}
		defer fh.Close()
		if ids, err = readLinePairs(fh, f.lines); err != nil {
			return nil, err
		}
	default:
		for i, a := range s.order {
			for _, b := range s.order[i+1:] {
				ids = append(ids, [2]string{a, b})
			}
		}
	}
	out := make([][2]job.Control, 0, len(ids))
	for _, id := range ids {
		a, err := s.point(id[0])
		if err != nil {
			return nil, err
		}
		b, err := s.point(id[1])
		if err != nil {
			return nil, err
		}
		out = append(out, [2]job.Control{a, b})
	}
	return out, nil
}

// readLinePairs reads a CSV with the columns from,to.
func readLinePairs(r io.Reader, name string) ([][2]string, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	var out [][2]string
	for first := true; ; first = false {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		line, _ := cr.FieldPos(0)
		if first {
			if len(rec) < 2 || strings.TrimSpace(rec[0]) != "from" || strings.TrimSpace(rec[1]) != "to" {
				return nil, fmt.Errorf("%s:%d: want the header from,to", name, line)
			}
			continue
		}
		if len(rec) < 2 || strings.TrimSpace(rec[0]) == "" || strings.TrimSpace(rec[1]) == "" {
			return nil, fmt.Errorf("%s:%d: want two point ids, from and to", name, line)
		}
		out = append(out, [2]string{strings.TrimSpace(rec[0]), strings.TrimSpace(rec[1])})
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s: no lines after the header from,to", name)
	}
	return out, nil
}

// parseLatLon reads "lat,lon" in decimal degrees.
func parseLatLon(text, flagName string) (s2.LatLng, error) {
	parts := strings.Split(text, ",")
	if len(parts) != 2 {
		return s2.LatLng{}, fmt.Errorf("%s %q: want 'lat,lon' in decimal degrees", flagName, text)
	}
	lat, err1 := units.ParseFloat(strings.TrimSpace(parts[0]))
	lon, err2 := units.ParseFloat(strings.TrimSpace(parts[1]))
	if err1 != nil || err2 != nil || lat < -90 || lat > 90 || lon < -180 || lon > 360 {
		return s2.LatLng{}, fmt.Errorf("%s %q: want 'lat,lon' in decimal degrees, lat in -90..90, lon in -180..360", flagName, text)
	}
	return s2.LatLngFromDegrees(lat, lon), nil
}

// groundFactors gives the elevation factor and ground distance at the mean
// mark height where both heights are known.
func groundFactors(l job.InverseLine) (reduce.GridResult, bool) {
	if !l.From.HasHeight() || !l.To.HasHeight() {
		return reduce.GridResult{}, false
	}
	g, err := reduce.GridDistance(l.Geodesic.Distance, l.Line.Scale, (l.From.Ellipsoidal+l.To.Ellipsoidal)/2, l.Line.Radius)
	return g, err == nil
}

func writeInverseTable(w io.Writer, s *session, lines []job.InverseLine, unit units.LengthUnit, au units.AngleUnit) error {
	u := unit.String()
	ang := func(a s1.Angle) string { return angleText(a, au, false) }
	fmt.Fprintf(w, "CRS %s — datum %s, ellipsoid %s\n", s.crs, s.crs.Datum(), s.crs.Ellipsoid())
	fmt.Fprintf(w, "lengths in %s, angles in %s; azimuths and bearings clockwise from north\n\n", u, au)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "from\tto\tgeodesic\tazimuth\tgrid\tgrid bearing\tk line\tk from\tk to\tconvergence from\tcombined factor\tground\t\n")
	for _, l := range lines {
		geo, _ := unit.FromMetres(l.Geodesic.Distance)
		grid, _ := unit.FromMetres(l.GridDistance)
		combined, ground := "—", "—"
		if g, ok := groundFactors(l); ok {
			gd, _ := unit.FromMetres(g.GroundDistance)
			combined, ground = fmt.Sprintf("%.9f", g.CombinedFactor), fmt.Sprintf("%.4f", gd)
		}
		fmt.Fprintf(tw, "%s\t%s\t%.4f\t%s\t%.4f\t%s\t%.9f\t%.9f\t%.9f\t%s\t%s\t%s\t\n",
			l.From.ID, l.To.ID, geo, ang(azimuth(l)), grid, ang(l.GridBearing),
			l.LineScale, l.Line.Scale.A, l.Line.Scale.B, ang(l.ConvergenceA), combined, ground)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintln(w, "\nk line: Simpson's rule (kA + 4 k_mid + kB)/6; ground: horizontal distance at the mean mark height;")
	fmt.Fprintln(w, "combined factor: grid / ground.")
	fmt.Fprintln(w, cautionText)
	return nil
}

// azimuth is the geodesic's forward azimuth at A in [0, 2π).
func azimuth(l job.InverseLine) s1.Angle { return geodesic.NormalizeAzimuth(l.Geodesic.Azimuth1) }

func writeInverseCSV(w io.Writer, lines []job.InverseLine, unit units.LengthUnit, au units.AngleUnit) error {
	cw := csv.NewWriter(w)
	u, a := unit.ColumnSuffix(), au.ColumnSuffix()
	cw.Write([]string{"from", "to", "geodesic_" + u, "azimuth_" + a, "back_azimuth_" + a, "grid_distance_" + u, "scaled_geodesic_" + u,
		"grid_bearing_" + a, "back_grid_bearing_" + a, "k_from", "k_mid", "k_to", "k_line", "convergence_from_" + a, "convergence_to_" + a,
		"elevation_factor", "combined_factor", "ground_distance_" + u})
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	ang := func(x s1.Angle) string { return angleText(x, au, true) }
	for _, l := range lines {
		geo, _ := unit.FromMetres(l.Geodesic.Distance)
		grid, _ := unit.FromMetres(l.GridDistance)
		scaled, _ := unit.FromMetres(l.ScaledDistance)
		elev, comb, ground := "", "", ""
		if gr, ok := groundFactors(l); ok {
			gd, _ := unit.FromMetres(gr.GroundDistance)
			elev, comb, ground = g(gr.ElevationFactor), g(gr.CombinedFactor), g(gd)
		}
		cw.Write([]string{l.From.ID, l.To.ID, g(geo), ang(azimuth(l)), ang(l.Geodesic.BackAzimuth()), g(grid), g(scaled),
			ang(l.GridBearing), ang(l.BackGridBearing()), g(l.Line.Scale.A), g(l.Line.Scale.Mid), g(l.Line.Scale.B), g(l.LineScale),
			ang(l.ConvergenceA), ang(l.ConvergenceB), elev, comb, ground})
	}
	cw.Flush()
	return cw.Error()
}
