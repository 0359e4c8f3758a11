package history

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"

	"github.com/geored/geored/io/history/pgtest"
)

// benchRows are a night of 1,000,000 observations over 200,000 lines of
// one instrument, as the whole-job benchmark's synthetic job has them.
func benchRows() ([]Observation, []Line) {
	const nObs, nLines = 1_000_000, 200_000
	obs := make([]Observation, nObs)
	lines := make([]Line, nLines)
	for i := range lines {
		lines[i] = Line{Instrument: "ts-1", From: fmt.Sprintf("P%05d", i%10000), To: fmt.Sprintf("P%05d", (i*7+1)%10000), N: 5,
			Geodesic: 300 + float64(i%2000), ResidualMM: 0.1 * float64(i%31-15), SigmaMM: 0.9}
	}
	for i := range obs {
		l := &lines[i%nLines]
		obs[i] = Observation{LineNo: i + 2, ObsID: fmt.Sprint(i + 1), From: l.From, To: l.To, Instrument: l.Instrument,
			Slope: l.Geodesic + 0.05, Arc: l.Geodesic, Geodesic: l.Geodesic, ResidualMM: 0.1 * float64(i%41-20), SigmaMM: 1.6, W: 0.2}
	}
	return obs, lines
}

// BenchmarkRecord1M writes one file's history of 1,000,000 observations
// over 200,000 lines (Store.Record, one transaction) into SQLite and
// into PostgreSQL. `go test ./io/history -run '^$' -bench Record1M
// -benchtime 1x -count 5`; quote medians.
func BenchmarkRecord1M(b *testing.B) {
	obs, lines := benchRows()
	fits := []Fit{{Instrument: "ts-1", N: 200000, ConstantMM: 0.1, ConstantSigmaMM: 0.01, ScalePPM: 0.2, ScaleSigmaPPM: 0.02, Evidence: "enough"}}
	for _, kind := range []string{"sqlite", "postgres"} {
		b.Run(kind, func(b *testing.B) {
			where := filepath.Join(b.TempDir(), "history.db")
			if kind == "postgres" {
				where = pgtest.Start(b)
			}
			ctx := context.Background()
			s, err := Open(ctx, where)
			if err != nil {
				b.Fatal(err)
			}
			defer s.Close()
			r := &Run{Job: "bench", Night: "2026-12-02", Version: "bench"}
			if err := s.BeginRun(ctx, r); err != nil {
				b.Fatal(err)
			}
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				f := File{Job: "bench", SHA256: fmt.Sprint(kind, i, b.N), Name: "obs.csv", Night: r.Night, RunID: r.ID, Status: StatusReduced}
				if ok, err := s.Record(ctx, &f, obs, lines, fits); err != nil || !ok {
					b.Fatal(ok, err)
				}
			}
			b.ReportMetric(float64(len(obs)*b.N)/b.Elapsed().Seconds(), "obs/s")
		})
	}
}

// BenchmarkRecordingAdd1M streams the same night into the store as the
// nightly run does, one observation at a time (Recording.Add), from a
// generator rather than a slice, and reports the heap in use at its
// largest after a collection, sampled at every tenth batch, beyond what
// it held before: bounded by a batch, not the file.
// `go test ./io/history -run '^$' -bench RecordingAdd1M -benchtime 1x
// -count 5`.
func BenchmarkRecordingAdd1M(b *testing.B) {
	_, lines := benchRows()
	fits := []Fit{{Instrument: "ts-1", N: 200000, ConstantMM: 0.1, ConstantSigmaMM: 0.01, ScalePPM: 0.2, ScaleSigmaPPM: 0.02, Evidence: "enough"}}
	const nObs = 1_000_000
	for _, kind := range []string{"sqlite", "postgres"} {
		b.Run(kind, func(b *testing.B) {
			where := filepath.Join(b.TempDir(), "history.db")
			if kind == "postgres" {
				where = pgtest.Start(b)
			}
			ctx := context.Background()
			s, err := Open(ctx, where)
			if err != nil {
				b.Fatal(err)
			}
			defer s.Close()
			r := &Run{Job: "bench", Night: "2026-12-02", Version: "bench"}
			if err := s.BeginRun(ctx, r); err != nil {
				b.Fatal(err)
			}
			runtime.GC()
			var ms runtime.MemStats
			runtime.ReadMemStats(&ms)
			base, peak := ms.HeapAlloc, uint64(0)
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				f := File{Job: "bench", SHA256: fmt.Sprint(kind, i, b.N), Name: "obs.csv", Night: r.Night, RunID: r.ID, Status: StatusReduced}
				rec, err := s.BeginRecord(ctx, &f)
				if err != nil {
					b.Fatal(err)
				}
				for k := 0; k < nObs; k++ {
					l := &lines[k%len(lines)]
					o := Observation{LineNo: k + 2, ObsID: strconv.Itoa(k + 1), From: l.From, To: l.To, Instrument: l.Instrument,
						Slope: l.Geodesic + 0.05, Arc: l.Geodesic, Geodesic: l.Geodesic, ResidualMM: 0.1 * float64(k%41-20), SigmaMM: 1.6, W: 0.2}
					if err := rec.Add(ctx, &o); err != nil {
						b.Fatal(err)
					}
					if k%(10*RecordBatch) == RecordBatch-1 { // every tenth batch, full
						b.StopTimer()
						runtime.GC()
						runtime.ReadMemStats(&ms)
						peak = max(peak, ms.HeapAlloc)
						b.StartTimer()
					}
				}
				if ok, err := rec.Finish(ctx, lines, fits); err != nil || !ok {
					b.Fatal(ok, err)
				}
			}
			b.ReportMetric(float64(nObs*b.N)/b.Elapsed().Seconds(), "obs/s")
			b.ReportMetric(float64(peak-min(peak, base))/1e6, "live-heap-MB")
		})
	}
}
