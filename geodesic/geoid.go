package geodesic

import (
	"fmt"
	"os"

	"github.com/golang/geo/s2"
	"github.com/twpayne/go-proj/v10"
)

// DefaultGeoidGrid is the geoid used when a job names none: the EGM96
// geoid on a 15′ grid as shipped by PROJ's data package (Debian proj-data),
// interpolated bilinearly by PROJ. It differs from NGA's published
// spline-interpolated EGM96 values by up to about 6 cm; 1 m of geoid error
// changes a reduced distance by only 0.16 ppm.
const DefaultGeoidGrid = "egm96_15.gtx"

// A Geoid gives the geoid separation N = h − H (ellipsoidal minus
// orthometric height, metres) from a PROJ-readable grid (GTX or GeoTIFF).
// It owns a PROJ context: use it from one goroutine at a time (Clone one
// per worker) and Close it when done.
type Geoid struct {
	grid string
	ctx  *proj.Context
	pj   *proj.PJ
	buf  []proj.Coord
}

// OpenGeoid opens a geoid grid: a file name found in PROJ's data
// directories (e.g. DefaultGeoidGrid, used when grid is "") or a path to a
// grid file. A missing or unreadable grid is an error naming it.
func OpenGeoid(grid string) (*Geoid, error) {
	if grid == "" {
		grid = DefaultGeoidGrid
	}
	ctx := proj.NewContext()
	// The argument-list form keeps a path with spaces in one piece.
	pj, err := ctx.NewFromArgs("proj=vgridshift", "grids="+grid, "multiplier=1")
	if err != nil {
		ctx.Destroy()
		hint := "is it installed (Debian package proj-data) or is the path right?"
		if _, statErr := os.Stat(grid); statErr == nil {
			hint = "the file exists but PROJ cannot read it as a vertical grid"
		}
		return nil, fmt.Errorf("geoid grid %q: %v: %s", grid, err, hint)
	}
	return &Geoid{grid: grid, ctx: ctx, pj: pj}, nil
}

// Clone opens the same grid again with its own PROJ context, for another
// worker.
func (g *Geoid) Clone() (*Geoid, error) { return OpenGeoid(g.grid) }

// Grid is the grid's name as opened.
func (g *Geoid) Grid() string { return g.grid }

// Close releases the PROJ objects. The Geoid must not be used after.
func (g *Geoid) Close() {
	if g.pj != nil {
		g.pj.Destroy()
		g.ctx.Destroy()
		g.pj, g.ctx = nil, nil
	}
}

// Separation is the geoid separation N at p, in metres. A point outside
// the grid is an error naming the grid.
func (g *Geoid) Separation(p s2.LatLng) (float64, error) {
	if err := checkLatLng("geoid", p); err != nil {
		return 0, err
	}
	c, err := g.pj.Forward(proj.Coord{float64(p.Lng), float64(p.Lat), 0, 0})
	if err != nil || !finite(c[2]) {
		return 0, fmt.Errorf("geoid grid %q has no value at %v: %v", g.grid, p, errText(err))
	}
	return c[2], nil
}

// SeparationBulk fills out with N at each of ps (same length).
func (g *Geoid) SeparationBulk(ps []s2.LatLng, out []float64) error {
	if len(out) != len(ps) {
		return fmt.Errorf("SeparationBulk: %d points but %d outputs", len(ps), len(out))
	}
	for start := 0; start < len(ps); start += bulkChunk {
		chunk := ps[start:min(start+bulkChunk, len(ps))]
		if cap(g.buf) < len(chunk) {
			g.buf = make([]proj.Coord, len(chunk))
		}
		buf := g.buf[:len(chunk)]
		for i, p := range chunk {
			if err := checkLatLng("geoid", p); err != nil {
				return fmt.Errorf("point %d: %w", start+i, err)
			}
			buf[i] = proj.Coord{float64(p.Lng), float64(p.Lat), 0, 0}
		}
		err := g.pj.ForwardArray(buf)
		for i, c := range buf {
			if err != nil || !finite(c[2]) {
				if _, err1 := g.Separation(chunk[i]); err1 != nil {
					return fmt.Errorf("point %d: %w", start+i, err1)
				}
			}
			out[start+i] = c[2]
		}
	}
	return nil
}
