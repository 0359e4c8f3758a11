package report

import (
	"math"
	"runtime"
	"runtime/metrics"
	"testing"

	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/job"
)

// BenchmarkAppendReducedRow is the write stage: one row of reduced.csv,
// 50 columns, into a reused buffer.
func BenchmarkAppendReducedRow(b *testing.B) {
	r := &job.Result{
		Obs:     obsfile.Observation{File: "observations.csv", Line: 1234, ObsID: "1233", From: "P00017", To: "P00118", SlopeDistance: 2925.7522},
		Profile: "ts",
		Line:    reduce.Line{Inverse: reduce.Inverse{Distance: 2925.61234567}, GridDistance: 2924.4434343, Radius: 6380123.4},
	}
	red := &r.Reduction
	red.Instrument = reduce.InstrumentResult{Raw: 2925.7522, FieldPrismConstant: -0.03, Measured: 2925.7822, Distance: 2925.7522, PrismConstant: -0.03}
	red.FirstVelocity = reduce.FirstVelocityResult{Atmosphere: reduce.Atmosphere{TemperatureC: 12.3, PressureHPa: 1003.4, HumidityPct: 66}, Line: 279.1234, Reference: 286.338, PPM: 7.2146, Distance: 2925.77331}
	red.SecondVelocity = reduce.SecondVelocityResult{Input: 2925.77331, Distance: 2925.773309}
	red.Geometry = reduce.GeometryResult{Route: reduce.RouteHeights, Radius: 6380123.4, Chord: 2925.60123, Arc: 2925.6123901}
	red.Heights = reduce.LineHeights{HeightA: 251.234, HeightB: 249.87, MeanMarkHeight: 249.1}
	red.Grid = reduce.GridResult{Scale: reduce.ScaleFactors{A: 0.99962341, Mid: 0.99962298, B: 0.99962255}, LineScale: 0.99962298, ElevationFactor: 0.99996095, CombinedFactor: 0.99958394, GridDistance: 2924.4441}
	red.EllipsoidResidual = reduce.ResidualResult{Residual: 0.00041, PPM: 0.14, Sigma: 0.0047, Standardized: 0.087, Tolerance: 0.0237}
	u := Units{Length: units.Metre, Angle: units.Degrees}
	buf := make([]byte, 0, 1024)
	for b.Loop() {
		buf = AppendReducedRow(buf[:0], r, u)
	}
	b.SetBytes(int64(len(buf)))
}

// BenchmarkAggregatorAdd is the summary's part of the per-row path: one
// reduced observation added to its line's record, over 200,000 lines
// (one in five flagged), as a large job meets them.
func BenchmarkAggregatorAdd(b *testing.B) {
	const lines = 200000
	a := NewAggregator(3.29, reduce.DistanceSpec{}, false, sameLine{})
	r := &job.Result{Points: [2]int32{0, 1}}
	red := &r.Reduction
	red.Geometry.Arc, red.Grid.GridDistance, red.SecondVelocity.Distance = 2925.6123901, 2924.4441, 2925.773309
	red.EllipsoidResidual = reduce.ResidualResult{Residual: 0.00041, PPM: 0.14, Sigma: 0.0047, Standardized: 0.087}
	i := 0
	for b.Loop() {
		r.LineID = int32(i % lines)
		red.EllipsoidResidual.Outlier = i%5 == 0
		a.Add(r)
		i++
	}
}

// BenchmarkAggregatorMemory reports, as B/line, what the summary's
// records cost in live heap after a collection: the heap of an aggregator
// of 50 chunks of lines less that of one of 1 chunk (the histograms and
// the other fixed parts cancel), over the 49 chunks' lines, observed once
// each (once: the record, 44 bytes, and its place in the order first
// observed, 4) or twice, once either way (twice: and the second record
// with its counts, 68 bytes). Each observation's w is (arc − D)/σ, as
// reduce.CompareDistance makes it, so a line observed once keeps none.
func BenchmarkAggregatorMemory(b *testing.B) {
	for _, c := range []struct {
		name  string
		obs   int
		limit float64 // B/line of the layout, to a byte for the chunk lists
	}{{"once", 1, 44 + 4 + 1}, {"twice", 2, 44 + 4 + 68 + 1}} {
		b.Run(c.name, func(b *testing.B) {
			r := &job.Result{}
			red := &r.Reduction
			red.Geometry.Arc, red.SecondVelocity.Distance = 2925.6123901, 2925.773309
			d := 2925.6119801 // the control's distance, sameLine's
			red.EllipsoidResidual = reduce.ResidualResult{Residual: red.Geometry.Arc - d, Sigma: 0.0047, Standardized: (red.Geometry.Arc - d) / 0.0047}
			heap := func(lines int32) (uint64, *Aggregator) {
				before := liveHeap()
				a := NewAggregator(3.29, reduce.DistanceSpec{}, false, sameLine{Inverse: reduce.Inverse{Distance: d}})
				for k := range c.obs {
					for i := range lines {
						r.LineID, r.Points = i, [2]int32{int32(k), int32(1 - k)}
						a.Add(r)
					}
				}
				return liveHeap() - before, a
			}
			var perLine float64
			for b.Loop() {
				small, a := heap(lineAccChunk)
				runtime.KeepAlive(a)
				a = nil
				large, a := heap(50 * lineAccChunk)
				runtime.KeepAlive(a)
				perLine = float64(large-small) / (49 * lineAccChunk)
			}
			b.ReportMetric(perLine, "B/line")
			if perLine > c.limit {
				b.Fatalf("%.1f bytes a line, over %.0f", perLine, c.limit)
			}
		})
	}
}

// liveHeap is the bytes of live heap objects after a full collection.
func liveHeap() uint64 {
	runtime.GC()
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	metrics.Read(s)
	return s[0].Value.Uint64()
}

// BenchmarkFitResiduals is the fit of residuals against distance with its
// evidence, over 200,000 lines of which 1 % are blunders for its test.
func BenchmarkFitResiduals(b *testing.B) {
	lines := fitLines(200000, 1, 0.5, 2, 21)
	for i := 0; i < len(lines); i += 100 {
		lines[i].ResidualMM += 50
		lines[i].UnflaggedResidualMM = lines[i].ResidualMM
	}
	var f *Fit
	for b.Loop() {
		f = FitResiduals(lines, 3.29)
	}
	if f == nil || f.LinesRejected < len(lines)/100 { // the blunders and about 0.1 % of the others
		b.Fatalf("fit %+v", f)
	}
}

// BenchmarkResidualHistogram is the robust statistics' part of the
// per-row path: one residual of a few mm counted in the histogram.
func BenchmarkResidualHistogram(b *testing.B) {
	var h residualHistogram
	var res [4096]float64 // residuals spread over ±4.5 mm, made before the timing
	for i := range res {
		res[i] = math.Mod(float64(i)*1.618, 9) - 4.5
	}
	i := 0
	for b.Loop() {
		h.add(res[i&(len(res)-1)])
		i++
	}
}

// BenchmarkHistogramMedianMAD is the median and MAD read once per set of
// residuals after the run, over its 51,200 bins.
func BenchmarkHistogramMedianMAD(b *testing.B) {
	var h residualHistogram
	for i := range 100000 {
		h.add(float64(i%997)*0.01 - 5)
	}
	h.add(258980)
	var med float64
	for b.Loop() {
		med, _ = h.medianMAD()
	}
	if math.Abs(med) > 5 {
		b.Fatalf("median %g mm", med)
	}
}
