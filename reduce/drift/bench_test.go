package drift

import "testing"

// BenchmarkMarkShifts: one mark's month (30 nights of four lines), as a
// nightly run tests every mark of the job each night.
func BenchmarkMarkShifts(b *testing.B) {
	nights := markNights(30, 20, [2]float64{10, 10}, "", 0, 0, []string{"P1", "P2", "P3", "P4"})
	b.ReportAllocs()
	for b.Loop() {
		MarkShifts(nights, MarkAlpha)
	}
}

// BenchmarkInstrumentTrend: one series of 30 nights.
func BenchmarkInstrumentTrend(b *testing.B) {
	s := series(30, func(i int) float64 { return 0.2 * float64(i) })
	b.ReportAllocs()
	for b.Loop() {
		InstrumentTrend(s, 1, TrendAlpha)
	}
}
