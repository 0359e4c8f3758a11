package landxml

import (
	"strings"
	"testing"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
)

// FuzzObservations: any input ends without a panic, and every
// RawObservation the reader met is one row of the stream, read by the
// CSV reader as an observation or a rejected row; each rejected row has
// its reason (read = reduced + rejected). Seeds in
// testdata/fuzz/FuzzObservations.
func FuzzObservations(f *testing.F) {
	f.Fuzz(func(t *testing.T, data []byte) {
		opt := Options{LengthUnit: units.Metre, AngleUnit: units.PackedDMS, Limits: obsfile.Limits{MaxLineBytes: 4 << 10, MaxFieldBytes: 256},
			Instruments: map[string]string{"S-1": "ts"}}
		lx := NewObservations(strings.NewReader(string(data)), "f.xml", opt)
		r, _, err := obsfile.NewObsReader(lx, "f.xml", obsfile.ObsOptions{LengthUnit: opt.LengthUnit, AngleUnit: opt.AngleUnit, Limits: opt.Limits})
		if err != nil {
			if lx.Rows() != 0 {
				t.Fatalf("the header failed after %d rows: %v", lx.Rows(), err)
			}
			return
		}
		if d := drain(lx, r); d.broken != nil {
			t.Fatal(d.broken)
		}
	})
}

// FuzzPoints: any input ends without a panic, and every CgPoint written
// is a point of the points reader, or its error.
func FuzzPoints(f *testing.F) {
	f.Fuzz(func(t *testing.T, data []byte) {
		opt := Options{LengthUnit: units.Metre, AngleUnit: units.Radians, Limits: obsfile.Limits{MaxLineBytes: 4 << 10, MaxFieldBytes: 256}}
		p := NewPoints(strings.NewReader(string(data)), "f.xml", opt, units.Metre)
		pts, _, err := obsfile.ReadPoints(p, "f.xml", obsfile.PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre, Limits: opt.Limits})
		if err == nil && len(pts) != p.Rows() {
			t.Fatalf("read %d points of %d", len(pts), p.Rows())
		}
	})
}
