package main

import (
	"fmt"
	"io"
	"os"
	"strconv"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/job"
)

// session holds the PROJ objects and control of one run on one goroutine.
type session struct {
	crs       *geodesic.CRS
	geod      *geodesic.Geodesic
	proj      *geodesic.Projector
	geoid     *geodesic.Geoid  // nil when the job uses no geoid grid
	geoidGrid string           // as opened: a grid, or "none"
	seps      job.Separations  // where N comes from
	unit      units.LengthUnit // of heights, as the job or -length-unit says
	gridUnit  units.LengthUnit // of easting and northing: the CRS's
	control   map[string]job.Control
	order     []string // point ids in file order
	pointFile string
	limits    obsfile.Limits // of the points file (zero: the defaults)
	delimiter obsfile.Delimiter
}

// openJobSession opens a job's CRS and its geoid: the named grid, none,
// or, when the job gives one N and no grid, that constant.
func openJobSession(j *jobconfig.Job) (*session, error) {
	grid := j.Geoid
	if grid == "" && j.HasConstantN {
		grid = "none"
	}
	s, err := openSession(j.CRS, grid, j.LengthUnit)
	if err != nil {
		return nil, err
	}
	s.seps.Constant, s.seps.HasConstant = j.ConstantN, j.HasConstantN
	s.limits, s.delimiter = j.Limits, j.Delimiter
	return s, nil
}

// openSession opens the CRS, the geoid ("none" for no grid, "" for the
// default) and the projector.
func openSession(crsDef, geoidGrid string, unit units.LengthUnit) (*session, error) {
	crs, err := geodesic.OpenCRS(crsDef)
	if err != nil {
		return nil, err
	}
	if !crs.Conformal() {
		return nil, fmt.Errorf("CRS %s: its projection is not conformal, so a line's scale factor depends on its direction; geored reduces to conformal grids only (transverse Mercator, Lambert conformal conic, stereographic, oblique Mercator, …)", crs)
	}
	gridUnit, err := crsGridUnit(crs)
	if err != nil {
		return nil, err
	}
	g, err := geodesic.NewGeodesic(crs.Ellipsoid())
	if err != nil {
		return nil, err
	}
	p, err := crs.NewProjector()
	if err != nil {
		return nil, err
	}
	s := &session{crs: crs, geod: g, proj: p, unit: unit, gridUnit: gridUnit, geoidGrid: geoidGrid}
	if geoidGrid != "none" {
		if s.geoid, err = geodesic.OpenGeoid(geoidGrid); err != nil {
			p.Close()
			return nil, err
		}
		s.geoidGrid = s.geoid.Grid()
		s.seps.Grid = s.geoid
	}
	return s, nil
}

// crsGridUnit is the unit of the CRS's easting and northing, recognised
// by PROJ's code for it or its length (units.AxisUnit.LengthUnit). A unit
// geored does not read is an error naming the CRS and the unit, and what
// to do instead: the same projection in metres.
func crsGridUnit(crs *geodesic.CRS) (units.LengthUnit, error) {
	u, err := units.AxisUnit{Name: crs.Unit(), Code: crs.UnitCode(), MetresPerUnit: crs.MetresPerUnit()}.LengthUnit()
	if err != nil {
		return 0, fmt.Errorf("CRS %s: %w; to use this grid, convert the points' easting and northing to metres (× %s) and give as the CRS the same projection in metres, %q",
			crs, err, strconv.FormatFloat(crs.MetresPerUnit(), 'g', -1, 64), crs.Projection())
	}
	return u, nil
}

func (s *session) close() {
	s.proj.Close()
	if s.geoid != nil {
		s.geoid.Close()
	}
}

// loadPoints reads and resolves a points file; each warning goes to warn.
// It returns the number of points.
func (s *session) loadPoints(r io.Reader, name string, warn func(obsfile.Warning)) (int, error) {
	pts, warnings, err := obsfile.ReadPoints(r, name, s.pointOptions())
	for _, w := range warnings {
		warn(w)
	}
	if err != nil {
		return 0, err
	}
	if s.control, err = job.ResolveControl(pts, name, s.proj, s.seps); err != nil {
		return 0, err
	}
	s.order = s.order[:0]
	for _, p := range pts {
		s.order = append(s.order, p.ID)
	}
	s.pointFile = name
	return len(pts), nil
}

// pointOptions are the units and limits of the session's points file.
func (s *session) pointOptions() obsfile.PointOptions {
	return obsfile.PointOptions{GridUnit: s.gridUnit, HeightUnit: s.unit, Limits: s.limits, Delimiter: s.delimiter}
}

func (s *session) loadPointFile(path string, warn func(obsfile.Warning)) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	_, err = s.loadPoints(f, path, warn)
	return err
}

// warnTo prints warnings on w.
func warnTo(w io.Writer) func(obsfile.Warning) {
	return func(wn obsfile.Warning) { fmt.Fprintf(w, "warning: %s\n", wn) }
}

// point looks a control point up by id.
func (s *session) point(id string) (job.Control, error) {
	c, ok := s.control[id]
	if !ok {
		return c, fmt.Errorf("point %q is not in %s", id, s.pointFile)
	}
	return c, nil
}
