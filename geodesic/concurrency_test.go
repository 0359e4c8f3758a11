package geodesic

import (
	"os"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

type sample struct {
	grid   GridPoint
	k      float64
	n      float64
	inv    Line
	factor Factors
}

func computeSamples(crs *CRS, g *Geodesic, pts []s2.LatLng) ([]sample, error) {
	p, err := crs.NewProjector()
	if err != nil {
		return nil, err
	}
	defer p.Close()
	geoid, err := OpenGeoid("")
	if err != nil {
		return nil, err
	}
	defer geoid.Close()
	out := make([]sample, len(pts))
	for i, ll := range pts {
		s := &out[i]
		if s.grid, err = p.Forward(ll); err != nil {
			return nil, err
		}
		if s.k, err = p.PointScaleFactor(ll); err != nil {
			return nil, err
		}
		if s.factor, err = p.Factors(ll); err != nil {
			return nil, err
		}
		if s.n, err = geoid.Separation(ll); err != nil {
			return nil, err
		}
		if s.inv, err = g.Inverse(ll, pts[(i+1)%len(pts)]); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// Workers with their own Projector and Geoid, sharing one CRS and one
// Geodesic, get exactly what one goroutine gets (run it with -race).
func TestConcurrentWorkers(t *testing.T) {
	crs, err := OpenCRS("EPSG:32633")
	require.NoError(t, err)
	g, err := NewGeodesic(crs.Ellipsoid())
	require.NoError(t, err)
	var pts []s2.LatLng
	for i := range 500 {
		pts = append(pts, s2.LatLngFromDegrees(40+float64(i%50)*0.3, 10+float64(i%41)*0.25))
	}
	want, err := computeSamples(crs, g, pts)
	require.NoError(t, err)
	const workers = 4
	got := make([][]sample, workers)
	errs := make([]error, workers)
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() { got[w], errs[w] = computeSamples(crs, g, pts) })
	}
	wg.Wait()
	for w := range workers {
		require.NoError(t, errs[w], "worker %d", w)
		assert.Equal(t, want, got[w], "worker %d", w)
	}
}

// residentBytes reads the process's resident set size from /proc.
func residentBytes(t testing.TB) int64 {
	b, err := os.ReadFile("/proc/self/statm")
	if err != nil {
		t.Skip("no /proc/self/statm:", err)
	}
	pages, err := strconv.ParseInt(strings.Fields(string(b))[1], 10, 64)
	require.NoError(t, err)
	return pages * int64(os.Getpagesize())
}

// C memory is released: 1e6 calls into PROJ through this package's own cgo
// (proj_factors and the geodesic routines), 2e5 through go-proj, and 300
// Projectors and Geoids made and closed, leave the resident size where it
// was after a warm-up.
func TestNoMemoryGrowth(t *testing.T) {
	if testing.Short() {
		t.Skip("long: 1e6 calls")
	}
	crs, err := OpenCRS("EPSG:32633")
	require.NoError(t, err)
	g, err := NewGeodesic(crs.Ellipsoid())
	require.NoError(t, err)
	round := func(calls, handles int) {
		p, err := crs.NewProjector()
		require.NoError(t, err)
		defer p.Close()
		geoid, err := OpenGeoid("")
		require.NoError(t, err)
		defer geoid.Close()
		for i := range calls {
			ll := s2.LatLngFromDegrees(40+float64(i%1000)*0.01, 12+float64(i%997)*0.006)
			if _, err := p.Factors(ll); err != nil {
				t.Fatal(err)
			}
			if _, err := g.Inverse(ll, s2.LatLngFromDegrees(45, 15)); err != nil {
				t.Fatal(err)
			}
			if i%5 == 0 {
				if _, err := p.Forward(ll); err != nil {
					t.Fatal(err)
				}
				if _, err := geoid.Separation(ll); err != nil {
					t.Fatal(err)
				}
			}
		}
		for range handles {
			q, err := crs.NewProjector()
			require.NoError(t, err)
			q.Close()
			h, err := geoid.Clone()
			require.NoError(t, err)
			h.Close()
		}
	}
	round(100_000, 30) // warm-up: PROJ's caches, the Go heap
	runtime.GC()
	before := residentBytes(t)
	round(1_000_000, 300)
	runtime.GC()
	after := residentBytes(t)
	t.Logf("resident size %d KiB before, %d KiB after", before>>10, after>>10)
	assert.Less(t, after-before, int64(8<<20), "resident size grew by %d KiB", (after-before)>>10)
}
