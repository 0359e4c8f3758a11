package job

import (
	"math"
	"strconv"
	"sync"
	"testing"

	"github.com/golang/geo/s1"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/obsfile"
)

// A line computed from B equals the reversed line computed from A, so the
// cache may compute each line once: checked against NewReduceLine both
// ways on lines of 50 m to 30 km in several directions.
func TestReversedLineEqualsLineFromB(t *testing.T) {
	crs, err := geodesic.OpenCRS("EPSG:25832")
	require.NoError(t, err)
	p, err := crs.NewProjector()
	require.NoError(t, err)
	defer p.Close()
	g, err := geodesic.NewGeodesic(crs.Ellipsoid())
	require.NoError(t, err)
	origin := s2.LatLngFromDegrees(51.2, 10.4)
	for _, az := range []float64{0, 37, 90, 151, 180, 233, 299} {
		for _, d := range []float64{50, 1500, 30000} {
			end, _, err := g.Direct(origin, s1Deg(az), d)
			require.NoError(t, err)
			pts := []obsfile.Point{{ID: "A", LatLng: origin, HasLatLng: true}, {ID: "B", LatLng: end, HasLatLng: true}}
			c, err := ResolveControl(pts, "t", p, Separations{})
			require.NoError(t, err)
			ab, _, err := NewReduceLine(c["A"], c["B"], g, p)
			require.NoError(t, err)
			ba, _, err := NewReduceLine(c["B"], c["A"], g, p)
			require.NoError(t, err)
			r := ab.Reversed()
			name := func(q string) string { return q + " at azimuth " + ftoa(az) + "°, " + ftoa(d) + " m" }
			assert.Equal(t, ba.A, r.A)
			assert.Equal(t, ba.B, r.B)
			assert.InDelta(t, ba.Inverse.Distance, r.Inverse.Distance, 1e-9, name("distance, m"))
			assert.InDelta(t, 0, math.Remainder(float64(ba.Inverse.Azimuth1-r.Inverse.Azimuth1), 2*math.Pi), 1e-12, name("azimuth 1, rad"))
			assert.InDelta(t, 0, math.Remainder(float64(ba.Inverse.Azimuth2-r.Inverse.Azimuth2), 2*math.Pi), 1e-12, name("azimuth 2, rad"))
			assert.InDelta(t, ba.Radius, r.Radius, 1e-6, name("radius, m"))
			assert.InDelta(t, ba.CurvatureRate, r.CurvatureRate, 1e-22, name("curvature rate, 1/m²"))
			assert.InDelta(t, ba.Scale.A, r.Scale.A, 1e-15, name("k at A"))
			assert.InDelta(t, ba.Scale.B, r.Scale.B, 1e-15, name("k at B"))
			assert.InDelta(t, ba.Scale.Mid, r.Scale.Mid, 1e-12, name("k at the midpoint"))
			// The curvature comes from the circle through the projected ends
			// and midpoint: a few nanometres of rounding in the coordinates
			// move it by about 8δ/L², which on a 50 m line is 1e-11 1/m
			// and moves the grid distance (κ²L³/24) by 1e-23 m.
			assert.InDelta(t, ba.Scale.Curvature, r.Scale.Curvature, 1e-3*math.Abs(ba.Scale.Curvature)+8*2e-9/(d*d), name("curvature on the grid, 1/m"))
			assert.InDelta(t, ba.Midpoint.Lat.Degrees(), r.Midpoint.Lat.Degrees(), 1e-12, name("midpoint latitude"))
			assert.Equal(t, ba.GridDistance, r.GridDistance)
		}
	}
}

func s1Deg(d float64) s1.Angle { return s1.Angle(d) * s1.Degree }

func ftoa(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// BenchmarkNewReduceLine is the once-per-line work: geodesic, midpoint,
// radius and scale factors.
func BenchmarkNewReduceLine(b *testing.B) {
	crs, err := geodesic.OpenCRS("EPSG:25832")
	require.NoError(b, err)
	p, err := crs.NewProjector()
	require.NoError(b, err)
	defer p.Close()
	g, err := geodesic.NewGeodesic(crs.Ellipsoid())
	require.NoError(b, err)
	var pts []obsfile.Point
	for i := range 64 {
		pts = append(pts, obsfile.Point{ID: strconv.Itoa(i), LatLng: s2.LatLngFromDegrees(51+float64(i%8)*0.01, 9+float64(i/8)*0.015), HasLatLng: true})
	}
	c, err := ResolveControl(pts, "bench", p, Separations{})
	require.NoError(b, err)
	i := 0
	for b.Loop() {
		a, bb := c[strconv.Itoa(i%64)], c[strconv.Itoa((i*7+3)%64)]
		if a.ID == bb.ID {
			bb = c[strconv.Itoa((i+1)%64)]
		}
		if _, _, err := NewReduceLine(a, bb, g, p); err != nil {
			b.Fatal(err)
		}
		i++
	}
}

// The plan's line cache gives every pair of points one number, either way and
// from any worker, and the line NewReduceLine gives from the lower-numbered
// point, reversed where asked the other way (less the midpoint and
// azimuths it does not keep); a line that cannot be computed (a point to
// itself) gives its error each time. Four goroutines ask for every line
// both ways in different orders; run under -race by make test.
func TestLineCache(t *testing.T) {
	plan, _ := testPlan(t, 1)
	n := int32(plan.Points())
	cache := plan.lines
	var wg sync.WaitGroup
	ids := make([]map[[2]int32]int32, 4)
	for w := range 4 {
		ids[w] = map[[2]int32]int32{}
		wg.Go(func() {
			p, err := plan.CRS.NewProjector()
			if !assert.NoError(t, err) {
				return
			}
			defer p.Close()
			for k := range n * n {
				a, b := (k+int32(w)*7)%n, (k/n+int32(w))%n
				_, id, err := cache.get(a, b, plan, p)
				if a == b {
					assert.Error(t, err, "a line from a point to itself")
					continue
				}
				assert.NoError(t, err)
				ids[w][[2]int32{a, b}] = id
			}
		})
	}
	wg.Wait()
	seen := map[int32]bool{}
	p, err := plan.CRS.NewProjector()
	require.NoError(t, err)
	defer p.Close()
	for ab, id := range ids[0] {
		for w := 1; w < 4; w++ {
			assert.Equal(t, id, ids[w][ab], "the same number from every worker")
		}
		assert.Equal(t, id, ids[0][[2]int32{ab[1], ab[0]}], "the same number either way")
		seen[id] = true
		got, _, err := cache.get(ab[0], ab[1], plan, p)
		require.NoError(t, err)
		lo, hi := min(ab[0], ab[1]), max(ab[0], ab[1])
		want, _, err := NewReduceLine(plan.pts.at(lo).control(), plan.pts.at(hi).control(), plan.Geodesic, p)
		require.NoError(t, err)
		if ab[0] != lo {
			want = want.Reversed()
		}
		want.Midpoint, want.Azimuth, want.Inverse.Azimuth1, want.Inverse.Azimuth2 = s2.LatLng{}, 0, 0, 0
		assert.Equal(t, want, got, "line %v", ab)
		known, ok := plan.KnownLine(id, ab[0], ab[1])
		assert.True(t, ok)
		assert.Equal(t, want, known, "the plan's known line %v", ab)
	}
	_, ok := plan.KnownLine(-1, 0, 1)
	assert.False(t, ok, "no line -1")
	_, ok = plan.KnownLine(cache.next.Load(), 0, 1)
	assert.False(t, ok, "no line beyond the last")
	assert.Len(t, seen, int(n*(n-1)/2), "one number for each line")
	assert.Equal(t, int32(len(seen)+int(n)), cache.next.Load(), "lines and the failed ones, numbered densely")
}
