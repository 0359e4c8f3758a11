package obsfile

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"slices"
	"testing"

	"github.com/geored/geored/io/units"
)

// The readers return errors, never panic, whatever the bytes: `go test
// ./io/obsfile -fuzz FuzzObsReader` explores further than the seeds.
func FuzzObsReader(f *testing.F) {
	for _, seed := range []string{
		"from,to,slope_distance,zenith_angle\nA,B,100,90\n",
		"\uFEFFfrom,to,slope_distance,zenith_angle,temperature_c,pressure_hpa,humidity_pct\r\nA,B,1e3,89.5,20,1000,50\r\n",
		"from,to,slope_distance,zenith_angle\n\"A,\"\"x\",B,NaN,-1\n",
		"# c\nfrom,to,slope_distance,zenith_angle,instrument_height,target_height,prism_constant_mm\nA,B,1,0,1e308,-1e308,inf\n",
		"from,to,slope_distance,zenith_angle,prism_constant_mm,field_prism_constant_mm\nA,B,100,90,-34.4,-30\nA,B,100,90,,1e-320\n",
		"from,to\n",
		"",
		"from,to,slope_distance,zenith_angle,horizontal_distance,vertical_distance\nA,B,100,90,,\nA,B,,,100,-1\nA,B,100,,,1e308\n",
		"from;to;horizontal_distance;vertical_distance\nA;B;1e-300;-1e5\n",
		"from;to;slope_distance;zenith_angle;field_ppm;observed_at\nA;B;100;90;12,5;2026-05-14 09:31:07,5+02:00\nA;B;100;90;;2026-02-29T10:00\n",
	} {
		f.Add([]byte(seed))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		r, _, err := NewObsReader(bytes.NewReader(data), "fuzz.csv", ObsOptions{LengthUnit: units.Metre, AngleUnit: units.PackedDMS})
		if err != nil {
			return
		}
		for range 10000 {
			o, err := r.Next()
			if errors.Is(err, io.EOF) {
				return
			}
			var re *RowError
			if errors.As(err, &re) {
				continue
			}
			if err != nil {
				return
			}
			if !(o.SlopeDistance > 0) || o.Zenith < 0 || o.From == "" || o.To == "" {
				t.Fatalf("accepted a bad row: %+v", o)
			}
		}
	})
}

func FuzzReadPoints(f *testing.F) {
	for _, seed := range []string{
		"id,lat,lon,ellipsoid_height\nA,52,9,100\n",
		"id,easting,northing,elevation,geoid_separation\nA,1,2,3,4\nA,1,2,3,4\n",
		"id,lat,lon\n,95,999\n",
		"\uFEFFid,lat\r\n",
	} {
		f.Add([]byte(seed))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		pts, _, err := ReadPoints(bytes.NewReader(data), "fuzz.csv", PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre})
		if err != nil {
			return
		}
		for _, p := range pts {
			if p.ID == "" || (!p.HasLatLng && !p.HasGrid) {
				t.Fatalf("accepted a bad point: %+v", p)
			}
		}
	})
}

// Split into chunks of any size, a file reads as it does whole: the same
// rows, rejects, line numbers and errors (chunk_test.go). `go test
// ./io/obsfile -fuzz FuzzObsChunker` explores further than the seeds.
func FuzzObsChunker(f *testing.F) {
	for _, seed := range []string{
		"from,to,slope_distance,zenith_angle\nA,B,100,90\nB,A,100,90\n",
		"# \"odd\n\"from\",to,slope_distance,zenith_angle\r\n\"A\nB\",B,100,90\r\n#x\"\nA,\"B\"\"\",1,2\n",
		"from,to,slope_distance,zenith_angle\nA,B\"x,100,90\nA,B,1,1\n",
		"from,to,slope_distance,zenith_angle\n\"A,B,100,90\nA,B,1,1\n",
		"from;to;slope_distance;zenith_angle\nA;B;100;90\nA;B;100,5;90\nB;A;1.5;90,1\n",
		"from\tto\tslope_distance\tzenith_angle\nA\tB\t100\t90\nA\t\"B\tC\"\t100.5\t90\nB\tA\t1,5\t90\n",
	} {
		f.Add([]byte(seed), uint8(3))
	}
	f.Fuzz(func(t *testing.T, data []byte, size uint8) {
		want, _, wantErr := readWhole(t, string(data))
		got, _, err := readChunked(t, string(data), int(size)+1)
		if fmt.Sprint(wantErr) != fmt.Sprint(err) {
			t.Fatalf("chunks of %d bytes: error %v, whole file: %v", int(size)+1, err, wantErr)
		}
		if !slices.Equal(want, got) {
			t.Fatalf("chunks of %d bytes:\n%q\nwhole file:\n%q", int(size)+1, got, want)
		}
	})
}
