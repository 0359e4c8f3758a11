package geodesic

import (
	"testing"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s2"
)

// Survey-length lines around UTM zone 33N; each call gets a different
// point so that nothing is cached between calls.
func benchPoints(n int) []s2.LatLng {
	pts := make([]s2.LatLng, n)
	for i := range pts {
		pts[i] = s2.LatLngFromDegrees(47+float64(i%1013)*0.001, 13+float64(i%1019)*0.002)
	}
	return pts
}

var sinkF float64

func BenchmarkInverse(b *testing.B) {
	g, _ := NewGeodesic(WGS84)
	pts := benchPoints(4096)
	i := 0
	for b.Loop() {
		l, err := g.Inverse(pts[i&4095], pts[(i+7)&4095])
		if err != nil {
			b.Fatal(err)
		}
		sinkF += l.Distance
		i++
	}
}

func BenchmarkMidpoint(b *testing.B) {
	g, _ := NewGeodesic(WGS84)
	pts := benchPoints(4096)
	i := 0
	for b.Loop() {
		m, err := g.Midpoint(pts[i&4095], pts[(i+7)&4095])
		if err != nil {
			b.Fatal(err)
		}
		sinkF += float64(m.Lat)
		i++
	}
}

func benchProjector(b *testing.B) *Projector {
	crs, err := OpenCRS("EPSG:32633")
	if err != nil {
		b.Fatal(err)
	}
	p, err := crs.NewProjector()
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(p.Close)
	return p
}

func BenchmarkPointScaleFactor(b *testing.B) {
	p := benchProjector(b)
	pts := benchPoints(4096)
	i := 0
	for b.Loop() {
		k, err := p.PointScaleFactor(pts[i&4095])
		if err != nil {
			b.Fatal(err)
		}
		sinkF += k
		i++
	}
}

func BenchmarkForward(b *testing.B) {
	p := benchProjector(b)
	pts := benchPoints(4096)
	i := 0
	for b.Loop() {
		g, err := p.Forward(pts[i&4095])
		if err != nil {
			b.Fatal(err)
		}
		sinkF += g.Easting
		i++
	}
}

// BenchmarkForwardBulk reports ns per point for 4096 points a call.
func BenchmarkForwardBulk(b *testing.B) {
	p := benchProjector(b)
	pts := benchPoints(4096)
	out := make([]GridPoint, len(pts))
	for b.Loop() {
		if err := p.ForwardBulk(pts, out); err != nil {
			b.Fatal(err)
		}
		sinkF += out[17].Northing
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(pts)), "ns/point")
}

func BenchmarkToGeocentric(b *testing.B) {
	p := benchProjector(b)
	pts := benchPoints(4096)
	i := 0
	for b.Loop() {
		v, err := p.ToGeocentric(pts[i&4095], 250)
		if err != nil {
			b.Fatal(err)
		}
		sinkF += v.X
		i++
	}
}

func BenchmarkToGeocentricBulk(b *testing.B) {
	p := benchProjector(b)
	pts := benchPoints(4096)
	hs := make([]float64, len(pts))
	out := make([]r3.Vector, len(pts))
	for b.Loop() {
		if err := p.ToGeocentricBulk(pts, hs, out); err != nil {
			b.Fatal(err)
		}
		sinkF += out[17].Z
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(pts)), "ns/point")
}

func benchGeoid(b *testing.B) *Geoid {
	g, err := OpenGeoid("")
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(g.Close)
	return g
}

func BenchmarkGeoidSeparation(b *testing.B) {
	g := benchGeoid(b)
	pts := benchPoints(4096)
	i := 0
	for b.Loop() {
		n, err := g.Separation(pts[i&4095])
		if err != nil {
			b.Fatal(err)
		}
		sinkF += n
		i++
	}
}

func BenchmarkGeoidSeparationBulk(b *testing.B) {
	g := benchGeoid(b)
	pts := benchPoints(4096)
	out := make([]float64, len(pts))
	for b.Loop() {
		if err := g.SeparationBulk(pts, out); err != nil {
			b.Fatal(err)
		}
		sinkF += out[17]
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(pts)), "ns/point")
}

// BenchmarkOpenCRS is the once-per-job cost of reading proj.db.
func BenchmarkOpenCRS(b *testing.B) {
	for b.Loop() {
		if _, err := OpenCRS("EPSG:32633"); err != nil {
			b.Fatal(err)
		}
	}
}
