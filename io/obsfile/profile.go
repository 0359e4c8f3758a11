package obsfile

import (
	"fmt"
	"io"
	"math"

	"github.com/geored/geored/io/units"
)

// A ProfilePoint is one row of a profile file: ground or an obstacle under
// a line of sight. Lengths are metres.
type ProfilePoint struct {
	Line int // line in the profile file

	// Distance is from the eye along the line, 0..the line's length.
	Distance float64
	// Height is the point's height on the datum of the line's ends.
	Height float64
}

// Profile file columns.
const (
	colDistance = "distance"
	colHeight   = "height"
)

// Profile heights lie in minProfileHeight..maxProfileHeight metres.
const (
	minProfileHeight = -1e4
	maxProfileHeight = 1e5
)

var profileColumns = []string{colDistance, colHeight}

// ReadProfile reads a profile file: the columns distance (from the eye
// along the line, 0..length) and height (-10 km..100 km), both in unit;
// length is the line's length in metres. Its fields are delimited by
// delim (DelimiterAuto: found from the header), with a decimal comma in a
// semicolon or tab file, as the observation file's. It reports every bad
// row (up to 50) in one joined error; each unknown column is one warning.
func ReadProfile(r io.Reader, file string, unit units.LengthUnit, length float64, delim Delimiter) ([]ProfilePoint, []Warning, error) {
	if unit == 0 {
		return nil, nil, fmt.Errorf("%s: length unit not set", file)
	}
	if !(length > 0) || math.IsInf(length, 0) {
		return nil, nil, fmt.Errorf("%s: the line's length %g m: want a positive length", file, length)
	}
	t, warnings, err := openTable(r, file, profileColumns, DefaultLimits, csvFormat{delim: delim, numeric: profileColumns})
	if err != nil {
		return nil, nil, err
	}
	if err := t.require(profileColumns...); err != nil {
		return nil, warnings, err
	}
	u := float64(unit)
	maxD, err := unit.FromMetres(length)
	if err != nil {
		return nil, warnings, fmt.Errorf("%s: %w", file, err)
	}
	wantD := fmt.Sprintf("a distance from the eye along the line in %s, 0..%.4f (the line's length)", unit, maxD)
	wantH := fmt.Sprintf("a height in %s within %g..%g m", unit, minProfileHeight, maxProfileHeight)
	var pts []ProfilePoint
	err = t.eachRow("profile points", func() error {
		d, err := t.number(colDistance, wantD, 0, maxD)
		if err != nil {
			return err
		}
		h, err := t.number(colHeight, wantH, minProfileHeight/u, maxProfileHeight/u)
		if err != nil {
			return err
		}
		// d ≤ maxD, but d·u may pass length by a rounding
		pts = append(pts, ProfilePoint{Line: t.line, Distance: math.Min(d*u, length), Height: h * u})
		return nil
	})
	if err != nil {
		return nil, warnings, err
	}
	return pts, warnings, nil
}
