package obsfile

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"testing"

	"github.com/geored/geored/io/units"
)

// benchObservations is a 12-column observation file of 10,000 rows.
func benchObservations() []byte { return benchObservationsWith("", nil) }

// benchObservationsWith is benchObservations with one more column after
// prism_constant_mm, and its value (mixed targets of −30 and −34.4 mm).
func benchObservationsWith(column string, value func(i int) string) []byte {
	var buf bytes.Buffer
	extra := ""
	if column != "" {
		extra = "," + column
	}
	buf.WriteString("obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm" + extra + ",instrument\n")
	const rows = 10000
	for i := range rows {
		prism := "-30"
		if column != "" {
			prism = value(i) + "," + value(i)
		}
		fmt.Fprintf(&buf, "%d,P%05d,P%05d,%.4f,%.6f,1.%03d,1.600,%.1f,1003.2,65,%s,ts\n", i, i%9973, (i+1)%9973, 1000+float64(i)*0.37, 89+float64(i%1000)/500, i%1000, 5+float64(i%200)/10, prism)
	}
	return buf.Bytes()
}

// BenchmarkObsReader decodes a 12-column observation file with one reader
// into a reused buffer of fields; ns/row is per row.
func BenchmarkObsReader(b *testing.B) { benchReader(b, benchObservations()) }

// benchReader decodes data with one reader into a reused buffer of
// fields, and reports ns/row.
func benchReader(b *testing.B, data []byte) {
	opt := ObsOptions{LengthUnit: units.Metre, AngleUnit: units.Degrees}
	rowsRead := 0
	var fields []string
	for b.Loop() {
		r, _, err := NewObsReader(bytes.NewReader(data), "bench.csv", opt)
		if err != nil {
			b.Fatal(err)
		}
		var n int
		n, fields = drainRows(b, r, fields)
		rowsRead += n
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(rowsRead), "ns/row")
}

// BenchmarkObsReaderFieldPrism is BenchmarkObsReader on a file that also
// gives, per row, the prism constant the instrument applied
// (field_prism_constant_mm); ns/row is per row.
func BenchmarkObsReaderFieldPrism(b *testing.B) {
	data := benchObservationsWith("field_prism_constant_mm", func(i int) string {
		if i%3 == 0 {
			return "-34.4"
		}
		return "-30"
	})
	benchReader(b, data)
}

// BenchmarkObsReaderHorizontal is BenchmarkObsReader on a file with both
// pairs of distance columns, every other row giving the instrument's
// horizontal and vertical distance instead of the slope distance and
// zenith angle; ns/row is per row.
func BenchmarkObsReaderHorizontal(b *testing.B) {
	var buf bytes.Buffer
	buf.WriteString("obs_id,from,to,slope_distance,zenith_angle,horizontal_distance,vertical_distance,instrument_height,target_height,temperature_c,pressure_hpa,humidity_pct,prism_constant_mm,instrument\n")
	for i := range 10000 {
		s := 1000 + float64(i)*0.37
		pair := fmt.Sprintf("%.4f,%.6f,,", s, 89+float64(i%1000)/500)
		if i%2 == 1 {
			pair = fmt.Sprintf(",,%.4f,%.4f", s, float64(i%1000)/50-10)
		}
		fmt.Fprintf(&buf, "%d,P%05d,P%05d,%s,1.%03d,1.600,%.1f,1003.2,65,-30,ts\n", i, i%9973, (i+1)%9973, pair, i%1000, 5+float64(i%200)/10)
	}
	benchReader(b, buf.Bytes())
}

// BenchmarkObsChunks decodes the same file as a run does: split into
// chunks of 16 KB, each parsed by its own reader (plainRows, as the file
// has no quotes); ns/row is per row.
func BenchmarkObsChunks(b *testing.B) {
	data := benchObservations()
	opt := ObsOptions{LengthUnit: units.Metre, AngleUnit: units.Degrees}
	rowsRead := 0
	var fields []string
	var chunk []byte
	for b.Loop() {
		c, _, err := NewObsChunker(bytes.NewReader(data), "bench.csv", opt)
		if err != nil {
			b.Fatal(err)
		}
		for {
			var first int
			chunk, first, err = c.Next(chunk, 16<<10)
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			var n int
			n, fields = drainRows(b, c.Reader(chunk, first), fields)
			rowsRead += n
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(rowsRead), "ns/row")
}

// drainRows reads every row of r into the reused buffer fields, failing
// on a bad one, and returns how many it read and the buffer.
func drainRows(b *testing.B, r *ObsReader, fields []string) (int, []string) {
	n := 0
	for {
		var err error
		_, fields, err = r.NextAppend(fields[:0])
		if errors.Is(err, io.EOF) {
			return n, fields
		}
		if err != nil {
			b.Fatal(err)
		}
		n++
	}
}

// BenchmarkCountRows counts the rows of the same file, as a job with
// job_alpha does before its run; ns/row is per row, to set beside
// BenchmarkObsChunks's.
func BenchmarkCountRows(b *testing.B) {
	data := benchObservations()
	rows := 0
	for b.Loop() {
		n, err := CountRows(bytes.NewReader(data), "bench.csv", Limits{})
		if err != nil {
			b.Fatal(err)
		}
		rows += n
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(rows), "ns/row")
}
