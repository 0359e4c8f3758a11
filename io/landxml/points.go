package landxml

import (
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
)

// PointHeader is the first line of a Points stream: the points CSV's
// columns it fills.
const PointHeader = "id,northing,easting,elevation\n"

// Points reads the control points of a LandXML file's CgPoints as a
// points CSV (PointHeader), one row per CgPoint on its element's line:
// the point's name and its text, "northing easting [elevation]" in the
// file's linear unit, which must be the job's length unit and the unit of
// the CRS's grid (PointOptions.GridUnit). A CgPoint without a name or
// with other than two or three decimal numbers ends the stream with an
// *Error, as a bad points file stops the job. It is an io.Reader for the
// points reader.
type Points struct {
	s     *scanner
	opt   Options
	grid  units.LengthUnit
	units bool
	csvStream
	depth int
	seen  map[string][2]int // name → line and column of its CgPoint
}

// NewPoints reads r, the LandXML file named file; grid is the unit of the
// job CRS's grid.
func NewPoints(r io.Reader, file string, opt Options, grid units.LengthUnit) *Points {
	p := &Points{s: newScanner(r, file, opt.Limits), opt: opt, grid: grid, seen: map[string][2]int{}}
	p.buf, p.line, p.csvStream.fill = append(p.buf, PointHeader...), 1, p.fill
	return p
}

func (p *Points) fill(size int) error {
	s := p.s
	for len(p.buf) < size {
		tok, err := s.token(p.units)
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			name := t.Name.Local
			if p.depth >= maxDepth {
				return s.tooDeep()
			}
			switch {
			case p.depth == 0:
				if err := s.start(t); err != nil {
					return err
				}
				p.depth++
			case p.depth == 1 && name == "Units":
				if p.units {
					return s.at("Units", "", "", "one Units element: the file already has one")
				}
				ul, uc := s.line, s.col
				if _, err := s.readUnits(p.opt); err != nil {
					return err
				}
				if p.grid != p.opt.LengthUnit {
					s.line, s.col = ul, uc
					return s.at("Units", "", "", fmt.Sprintf("CgPoints in the unit of the CRS's grid, %s: the file's lengths are in %s", p.grid, p.opt.LengthUnit))
				}
				p.units = true
			case p.depth == 1 && name == "CgPoints":
				p.depth++
			case p.depth == 2 && name == "CgPoint":
				if !p.units {
					return s.at(name, "", "", "the file's Units element before its first point: units are never guessed")
				}
				if err := p.point(t); err != nil {
					return err
				}
			default:
				// Not a point: the observations' reader reads and warns
				// of the rest of the file.
				if err := s.skipQuiet(); err != nil {
					return err
				}
			}
		case xml.EndElement:
			p.depth--
		}
	}
	return nil
}

// point reads the CgPoint just opened, through its end.
func (p *Points) point(t xml.StartElement) error {
	s := p.s
	line, col := s.line, s.col
	at := func(a, v, want string) error {
		return &Error{File: s.file, Line: line, Column: col, Element: "CgPoint", Attr: a, Value: v, Want: want}
	}
	name, _ := attr(t, "name")
	name = strings.TrimSpace(name)
	lim := p.opt.Limits.OrDefault()
	if name == "" || strings.ContainsAny(name, "\r\n") || len(name) > lim.MaxFieldBytes {
		return at("name", name, fmt.Sprintf("the point's name, on one line, of at most %d bytes, which pntRef attributes name", lim.MaxFieldBytes))
	}
	if first, dup := p.seen[name]; dup {
		return at("name", name, fmt.Sprintf("a unique name: the CgPoint at line %d, column %d has it already", first[0], first[1]))
	}
	p.seen[name] = [2]int{line, col}
	var text strings.Builder
	for {
		tok, err := s.next()
		if err != nil {
			if errors.Is(err, io.EOF) {
				err = at("", "", "its end tag")
			}
			return err
		}
		switch tt := tok.(type) {
		case xml.CharData:
			text.Write(tt)
		case xml.StartElement:
			if err := s.skip(tt); err != nil {
				return err
			}
			continue
		}
		if _, ok := tok.(xml.EndElement); ok {
			break
		}
	}
	f := strings.Fields(text.String())
	if len(f) < 2 || len(f) > 3 {
		return at("", "", fmt.Sprintf("point %q: its text \"northing easting [elevation]\" in %s (%d numbers found)", obsfile.Clip(name), p.opt.LengthUnit, len(f)))
	}
	for i, v := range f {
		if x, err := units.ParseFloat(v); err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return at("", "", fmt.Sprintf("point %q: its %s %q as a decimal number in %s", obsfile.Clip(name), [...]string{"northing", "easting", "elevation"}[i], obsfile.Clip(v), p.opt.LengthUnit))
		}
	}
	p.startRow(line)
	p.buf = appendCSVField(p.buf, name)
	for _, v := range f {
		p.buf = append(p.buf, ',')
		p.buf = append(p.buf, v...)
	}
	if len(f) == 2 {
		p.buf = append(p.buf, ',')
	}
	p.buf = append(p.buf, '\n')
	return nil
}
