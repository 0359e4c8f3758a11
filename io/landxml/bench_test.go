package landxml

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
)

const benchObservations = 1_000_000

// writeBenchFile writes n synthetic observations (invented names and
// values: ten to a setup) as LandXML, or as the CSV of the same values.
func writeBenchFile(b *testing.B, n int, asXML bool) string {
	b.Helper()
	path := filepath.Join(b.TempDir(), "obs.csv")
	if asXML {
		path = filepath.Join(filepath.Dir(path), "obs.xml")
	}
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	if asXML {
		fmt.Fprint(w, head, "<Survey>\n")
	} else {
		fmt.Fprint(w, "obs_id,from,to,slope_distance,zenith_angle,instrument_height,target_height\n")
	}
	for i := range n {
		st, hi := fmt.Sprintf("ST%d", i/10), fmt.Sprintf("1.%03d", i%1000)
		sd, za, ht := fmt.Sprintf("%d.%04d", 100+i%5000, i%10000), fmt.Sprintf("%d.%02d%02d", 85+i%10, i%60, (i/60)%60), "1.600"
		to := fmt.Sprintf("TG%d", i%997)
		if !asXML {
			fmt.Fprintf(w, "%d,%s,%s,%s,%s,%s,%s\n", i, st, to, sd, za, hi, ht)
			continue
		}
		if i%10 == 0 {
			if i > 0 {
				fmt.Fprint(w, "  </InstrumentSetup>\n")
			}
			fmt.Fprintf(w, "  <InstrumentSetup id=\"s%d\" stationName=%q instrumentHeight=%q>\n    <InstrumentPoint pntRef=%q/>\n", i/10, st, hi, st)
		}
		fmt.Fprintf(w, "    <RawObservation setupID=\"s%d\" name=\"%d\" slopeDistance=%q zenithAngle=%q targetHeight=%q>\n      <TargetPoint pntRef=%q/>\n    </RawObservation>\n", i/10, i, sd, za, ht, to)
	}
	if asXML {
		fmt.Fprint(w, "  </InstrumentSetup>\n</Survey></LandXML>\n")
	}
	if err := w.Flush(); err != nil {
		b.Fatal(err)
	}
	if err := f.Close(); err != nil {
		b.Fatal(err)
	}
	return path
}

// benchRead reads the file's observations as the pipeline's reader does
// (one row at a time, the fields into a reused buffer) and reports the
// peak live heap, sampled every 50,000 rows.
func benchRead(b *testing.B, asXML bool) {
	path := writeBenchFile(b, benchObservations, asXML)
	opt := Options{LengthUnit: units.Metre, AngleUnit: units.PackedDMS}
	runtime.GC()
	var base runtime.MemStats
	runtime.ReadMemStats(&base)
	var peak uint64
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		f, err := os.Open(path)
		if err != nil {
			b.Fatal(err)
		}
		var in io.Reader = f
		var lx *Observations
		if asXML {
			lx = NewObservations(f, path, opt)
			in = lx
		}
		r, _, err := obsfile.NewObsReader(in, path, obsfile.ObsOptions{LengthUnit: opt.LengthUnit, AngleUnit: opt.AngleUnit})
		if err != nil {
			b.Fatal(err)
		}
		var fields []string
		rows := 0
		for {
			_, fl, err := r.NextAppend(fields[:0])
			fields = fl
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			if rows++; rows%50_000 == 0 {
				var m runtime.MemStats
				runtime.ReadMemStats(&m)
				peak = max(peak, m.HeapInuse)
			}
		}
		f.Close()
		if rows != benchObservations || (lx != nil && lx.Rows() != rows) {
			b.Fatalf("read %d rows of %d", rows, benchObservations)
		}
	}
	b.StopTimer()
	b.ReportMetric(float64(peak)/(1<<20), "peak-heap-MB")
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchObservations, "ns/obs")
}

// BenchmarkObservations1M reads 1,000,000 LandXML observations; beside
// it BenchmarkCSV1M reads the same as the observation CSV.
func BenchmarkObservations1M(b *testing.B) { benchRead(b, true) }

// BenchmarkCSV1M is the CSV path that BenchmarkObservations1M is set
// beside.
func BenchmarkCSV1M(b *testing.B) { benchRead(b, false) }
