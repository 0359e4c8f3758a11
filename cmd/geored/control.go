package main

import (
	"fmt"
	"io"
	"os"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce/job"
)

// session holds the PROJ objects and control of one run on one goroutine.
type session struct {
	crs       *geodesic.CRS
	geod      *geodesic.Geodesic
	proj      *geodesic.Projector
	geoid     *geodesic.Geoid // nil when the job uses no geoid grid
	unit      units.LengthUnit
	control   map[string]job.Control
	order     []string // point ids in file order
	pointFile string
}

// openSession opens the CRS, the geoid ("none" for no grid, "" for the
// default) and the projector.
func openSession(crsDef, geoidGrid string, unit units.LengthUnit) (*session, error) {
	crs, err := geodesic.OpenCRS(crsDef)
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
	s := &session{crs: crs, geod: g, proj: p, unit: unit}
	if geoidGrid != "none" {
		if s.geoid, err = geodesic.OpenGeoid(geoidGrid); err != nil {
			p.Close()
			return nil, err
		}
	}
	return s, nil
}

func (s *session) close() {
	s.proj.Close()
	if s.geoid != nil {
		s.geoid.Close()
	}
}

// loadPoints reads and resolves a points file; warnings go to stderr.
func (s *session) loadPoints(r io.Reader, name string, stderr io.Writer) error {
	pts, warnings, err := obsfile.ReadPoints(r, name, obsfile.PointOptions{
		GridUnit:   units.LengthUnit(s.crs.MetresPerUnit()),
		HeightUnit: s.unit,
	})
	for _, w := range warnings {
		fmt.Fprintf(stderr, "warning: %s\n", w)
	}
	if err != nil {
		return err
	}
	s.control, err = job.ResolveControl(pts, name, s.proj, job.Separations{Grid: s.geoid})
	if err != nil {
		return err
	}
	s.order = s.order[:0]
	for _, p := range pts {
		s.order = append(s.order, p.ID)
	}
	s.pointFile = name
	return nil
}

func (s *session) loadPointFile(path string, stderr io.Writer) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	return s.loadPoints(f, path, stderr)
}

// point looks a control point up by id.
func (s *session) point(id string) (job.Control, error) {
	c, ok := s.control[id]
	if !ok {
		return c, fmt.Errorf("point %q is not in %s", id, s.pointFile)
	}
	return c, nil
}
