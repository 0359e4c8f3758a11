package reduce

import (
	"testing"

	"github.com/golang/geo/s1"
)

// benchSetup returns one realistic observation of a 2.5 km line, its job,
// line and marks.
func benchSetup(b testing.TB) (Observation, Job, Line, MarkHeight, MarkHeight) {
	job := demoJob(b)
	l := sphereLine{R: 6381000, s: 2500, hA: 151.6, hB: 212.1, k: job.K}
	obs := Observation{
		InstrumentHeight: 1.6, TargetHeight: 2.1, PrismConstant: -30 * mm,
		Meteorology: Meteorology{
			Instrument:     Atmosphere{TemperatureC: 18, PressureHPa: 995, HumidityPct: 55},
			Target:         Atmosphere{TemperatureC: 17.5, PressureHPa: 988, HumidityPct: 60},
			HaveInstrument: true, HaveTarget: true,
		},
	}
	obs.Zenith, _ = l.observedZenith()
	obs.SlopeDistance = unreduce(b, l.slope(), obs, job, l.R)
	a, _ := HeightFromEllipsoidal(DatumEllipsoid, 150, Separation{})
	m, _ := HeightFromEllipsoidal(DatumEllipsoid, 210, Separation{})
	line := Line{Radius: l.R, Inverse: Inverse{Distance: l.s}, GridDistance: l.s * 0.99965, Scale: ScaleFactors{A: 0.99962, Mid: 0.99965, B: 0.99968}}
	return obs, job, line, a, m
}

// sink keeps results alive; each iteration feeds the previous result back
// in so the compiler cannot hoist the work out of the loop.
var sink float64

func BenchmarkReduce(b *testing.B) {
	obs, job, line, a, m := benchSetup(b)
	b.ReportAllocs()
	for b.Loop() {
		r, err := Reduce(obs, job, line, a, m)
		if err != nil {
			b.Fatal(err)
		}
		obs.PrismConstant = -30*mm + r.EllipsoidResidual.Residual*1e-9
	}
	sink = obs.PrismConstant
}

func BenchmarkReduceZenithRoute(b *testing.B) {
	obs, job, line, a, _ := benchSetup(b)
	b.ReportAllocs()
	for b.Loop() {
		r, err := Reduce(obs, job, line, a, MarkHeight{})
		if err != nil {
			b.Fatal(err)
		}
		obs.PrismConstant = -30*mm + r.EllipsoidResidual.Residual*1e-9
	}
	sink = obs.PrismConstant
}

func BenchmarkInstrumentCorrection(b *testing.B) {
	obs, job, _, _, _ := benchSetup(b)
	s := obs.SlopeDistance
	b.ReportAllocs()
	for b.Loop() {
		r, err := InstrumentCorrection(s, job.Instrument, obs.PrismConstant, job.Field)
		if err != nil {
			b.Fatal(err)
		}
		s = obs.SlopeDistance + (r.Distance-obs.SlopeDistance)*1e-9
	}
	sink = s
}

func BenchmarkFirstVelocityCorrection(b *testing.B) {
	obs, job, _, _, _ := benchSetup(b)
	s := obs.SlopeDistance
	b.ReportAllocs()
	for b.Loop() {
		r, err := FirstVelocityCorrection(s, job.Carrier, obs.Meteorology, job.DefaultAtmosphere)
		if err != nil {
			b.Fatal(err)
		}
		s = obs.SlopeDistance + r.Correction*1e-9
	}
	sink = s
}

func BenchmarkSecondVelocityCorrection(b *testing.B) {
	obs, job, line, _, _ := benchSetup(b)
	s := obs.SlopeDistance
	b.ReportAllocs()
	for b.Loop() {
		r, err := SecondVelocityCorrection(s, job.K, line.Radius)
		if err != nil {
			b.Fatal(err)
		}
		s = obs.SlopeDistance + r.Correction*1e-9
	}
	sink = s
}

func BenchmarkEllipsoidDistance(b *testing.B) {
	obs, _, line, _, _ := benchSetup(b)
	s := obs.SlopeDistance
	b.ReportAllocs()
	for b.Loop() {
		g, err := EllipsoidDistance(s, 151.6, 212.1, Section{Radius: line.Radius})
		if err != nil {
			b.Fatal(err)
		}
		s = obs.SlopeDistance + (g.Arc-line.Inverse.Distance)*1e-9
	}
	sink = s
}

func BenchmarkEllipsoidDistanceFromZenith(b *testing.B) {
	obs, job, line, _, _ := benchSetup(b)
	z := obs.Zenith
	b.ReportAllocs()
	for b.Loop() {
		g, err := EllipsoidDistanceFromZenith(obs.SlopeDistance, z, 151.6, job.K, line.Radius)
		if err != nil {
			b.Fatal(err)
		}
		z = obs.Zenith + s1.Angle(g.Arc-line.Inverse.Distance)*1e-12
	}
	sink = float64(z)
}

// BenchmarkCheckTargetHeight is the heights route's check of the
// reflector's height against the zenith angle, run on every row.
func BenchmarkCheckTargetHeight(b *testing.B) {
	obs, job, line, a, m := benchSetup(b)
	r, err := Reduce(obs, job, line, a, m)
	if err != nil {
		b.Fatal(err)
	}
	g := r.Geometry
	c := HeightCheck{Zenith: obs.Zenith, K: job.K, SigmaSlope: r.Uncertainty.Instrument}
	b.ReportAllocs()
	for b.Loop() {
		h, err := CheckTargetHeight(&g, &c, &job.Budget, &job.Test)
		if err != nil {
			b.Fatal(err)
		}
		c.Zenith = obs.Zenith + s1.Angle(h.Difference)*1e-12
	}
	sink = float64(c.Zenith)
}

func BenchmarkReciprocal(b *testing.B) {
	l := sphereLine{R: 6381000, s: 2500, hA: 151.6, hB: 212.1, k: 0.13}
	z12, z21 := l.observedZenith()
	S := l.slope()
	b.ReportAllocs()
	for b.Loop() {
		r, err := Reciprocal(S, z12, z21, l.hA, l.R)
		if err != nil {
			b.Fatal(err)
		}
		S = l.slope() + (r.HeightDifference-(l.hB-l.hA))*1e-9
	}
	sink = S
}

func BenchmarkGridDistance(b *testing.B) {
	_, _, line, _, _ := benchSetup(b)
	arc := line.Inverse.Distance
	b.ReportAllocs()
	for b.Loop() {
		g, err := GridDistance(arc, line.Scale, 180, line.Radius)
		if err != nil {
			b.Fatal(err)
		}
		arc = line.Inverse.Distance + (g.GridDistance-line.GridDistance)*1e-9
	}
	sink = arc
}

func BenchmarkDistanceUncertainty(b *testing.B) {
	_, job, line, _, _ := benchSetup(b)
	g, err := EllipsoidDistance(2500.8, 151.6, 212.1, Section{Radius: line.Radius})
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		u, err := DistanceUncertainty(job.Budget, g)
		if err != nil {
			b.Fatal(err)
		}
		g.Slope = 2500.8 + u.Total*1e-9
	}
	sink = g.Slope
}

func BenchmarkCompareDistance(b *testing.B) {
	_, job, _, _, _ := benchSetup(b)
	obs := 2500.0042
	b.ReportAllocs()
	for b.Loop() {
		r, err := CompareDistance(obs, 2500, 2*mm, job.Test)
		if err != nil {
			b.Fatal(err)
		}
		obs = 2500.0042 + r.Standardized*1e-12
	}
	sink = obs
}

// BenchmarkSightlineCheck is the verdict on a 12 km sight over a profile
// of 100 points: the lowest point's search, the horizons and the points.
func BenchmarkSightlineCheck(b *testing.B) {
	s, err := NewSightline(12000, 10, 12, meanRadius, 0.13)
	if err != nil {
		b.Fatal(err)
	}
	pts := make([]ProfilePoint, 100)
	for i := range pts {
		pts[i] = ProfilePoint{Distance: 120 * float64(i), Height: 5 + float64(i%7)}
	}
	minClearance := 2.0
	b.ReportAllocs()
	for b.Loop() {
		c, err := s.Check(pts, minClearance)
		if err != nil {
			b.Fatal(err)
		}
		minClearance = 2 + c.LowestClearance*1e-12
	}
	sink = minClearance
}
