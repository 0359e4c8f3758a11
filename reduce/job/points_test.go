package job

import (
	"fmt"
	"runtime"
	"runtime/metrics"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/jobconfig"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/io/units"
	"github.com/geored/geored/reduce"
)

// The point table finds every id it was given, through several growths
// of its table and of the string that holds the ids, and no other.
func TestPlanPointsFind(t *testing.T) {
	ps := newPlanPoints(reduce.DatumEllipsoid, 0)
	const n = 5000
	for i := range n {
		id := fmt.Sprintf("P%d", i*7)
		_, dup := ps.find(id)
		require.False(t, dup, id)
		assert.Equal(t, int32(i), ps.add(id, planPoint{line: int32(i + 2)}))
	}
	ps.done()
	for i := range n {
		id := fmt.Sprintf("P%d", i*7)
		got, ok := ps.find(id)
		require.True(t, ok, id)
		assert.Equal(t, int32(i), got, id)
		assert.Equal(t, id, ps.id(got))
		assert.Equal(t, int32(i+2), ps.at(got).line)
	}
	for _, id := range []string{"P1", "P", "", "P34994", "P7 "} {
		_, ok := ps.find(id)
		assert.False(t, ok, "%q is not a point", id)
	}
}

// planBuilderJob is a job on the geoid (sea level) and the points file of
// TestPlanBuilderAsNewPlan.
const (
	planBuilderJob    = `reduction_datum = "sea-level"` + "\n" + runJob
	planBuilderPoints = `id,lat,lon,ellipsoid_height,elevation,geoid_separation
A,52.00,9.00,150.5,,44.25
B,52.02,9.01,,101.5,44.5
C,52.01,9.03,,,
D,52.03,9.02,180.25,,
`
)

// A plan built as the points file is read is the plan of the points read
// whole and resolved (NewPlan over ResolveControl): the same numbers,
// ids, ends, scale factors and marks.
func TestPlanBuilderAsNewPlan(t *testing.T) {
	for _, jobText := range []string{runJob, planBuilderJob} {
		j, crs, g, p := jobParts(t, jobText)
		pts, _, err := obsfile.ReadPoints(strings.NewReader(planBuilderPoints), "points.csv", metres)
		require.NoError(t, err)
		control, err := ResolveControl(pts, "points.csv", p, Separations{Constant: 40, HasConstant: true})
		require.NoError(t, err)
		want, err := NewPlan(j.Settings(), crs, g, control)
		require.NoError(t, err)

		b := NewPlanBuilder(j.Settings(), crs, g, "points.csv", p, Separations{Constant: 40, HasConstant: true})
		_, err = obsfile.EachPoint(strings.NewReader(planBuilderPoints), "points.csv", metres, b.Add)
		require.NoError(t, err)
		require.NoError(t, b.Resolved())
		got, err := b.Plan()
		require.NoError(t, err)

		require.Equal(t, want.Points(), got.Points())
		for i := range int32(got.Points()) {
			assert.Equal(t, want.PointID(i), got.PointID(i))
			assert.Equal(t, *want.pts.at(i), *got.pts.at(i), "point %s", got.PointID(i))
			// The mark as reduce makes it from the resolved point.
			wm, wok, err := markHeight(control[got.PointID(i)], j.Datum)
			require.NoError(t, err)
			gm, gok := got.Mark(got.PointID(i))
			assert.Equal(t, wok, gok)
			assert.Equal(t, wm, gm)
			assert.Equal(t, wm.Height, got.MarkHeight(i))
		}
		assert.Equal(t, len(j.Profiles), len(got.profiles))
	}
}

// The builder's errors are those of reading the file whole and then
// resolving and planning it, in that order of precedence: a repeated id
// (the file's error), then the first point that cannot be resolved, then
// the first mark without a height on the datum.
func TestPlanBuilderErrors(t *testing.T) {
	const head = "id,easting,northing,elevation\n"
	cases := []struct{ name, rows, says string }{
		{"repeated id", "A,500000,5760000,10\nB,500100,5760000,11\nA,500200,5760000,12\n", `"A" is already on line 2`},
		{"unresolvable", "A,500000,5760000,99999\nB,1e9,5760000,11\nC,2e9,5760000,99999\n", `points.csv:3: point "B"`},
		{"no height", "A,500000,5760000,10\nB,500100,5760000,99999\nC,500200,5760000,-5000\n", `point "B" (line 3)`},
	}
	j, crs, g, p := jobParts(t, runJob)
	seps := Separations{Constant: 40, HasConstant: true}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			file := head + c.rows
			var want error
			pts, _, err := obsfile.ReadPoints(strings.NewReader(file), "points.csv", metres)
			if want = err; want == nil {
				control, err := ResolveControl(pts, "points.csv", p, seps)
				if want = err; want == nil {
					_, want = NewPlan(j.Settings(), crs, g, control)
				}
			}
			require.Error(t, want)

			b := NewPlanBuilder(j.Settings(), crs, g, "points.csv", p, seps)
			_, got := obsfile.EachPoint(strings.NewReader(file), "points.csv", metres, b.Add)
			if got == nil {
				_, got = b.Plan()
			}
			require.Error(t, got)
			assert.Equal(t, want.Error(), got.Error())
			assert.Contains(t, want.Error(), c.says)
		})
	}
}

// metres are the points files' units in these tests.
var metres = obsfile.PointOptions{GridUnit: units.Metre, HeightUnit: units.Metre}

func jobParts(t testing.TB, jobText string) (*jobconfig.Job, *geodesic.CRS, *geodesic.Geodesic, *geodesic.Projector) {
	t.Helper()
	f, err := jobconfig.Parse([]byte(jobText), "job.toml")
	require.NoError(t, err)
	j, err := jobconfig.Resolve(f, "job.toml")
	require.NoError(t, err)
	crs, err := geodesic.OpenCRS(j.CRS)
	require.NoError(t, err)
	g, err := geodesic.NewGeodesic(crs.Ellipsoid())
	require.NoError(t, err)
	p, err := crs.NewProjector()
	require.NoError(t, err)
	t.Cleanup(p.Close)
	return j, crs, g, p
}

// BenchmarkPlanMemory reports what the plan keeps, in live heap after a
// collection (runtime/metrics): B/point for a plan of 100,000 points read
// from a file, and B/line for the line cache of 100,000 distinct lines
// between 10,000 of them (each record and its place in its lower point's
// list, while the runs go on). The run's peak is what georedbench mem
// measures; this is what the records cost, without the collector's slack.
func BenchmarkPlanMemory(b *testing.B) {
	j, crs, g, p := jobParts(b, runJob)
	const side = 316 // 99,856 points on a 100 m grid
	var file strings.Builder
	file.WriteString("id,easting,northing,elevation\n")
	for i := range side {
		for k := range side {
			fmt.Fprintf(&file, "P%06d,%d,%d,%d\n", i*side+k, 450000+100*k, 5650000+100*i, 100+i%50)
		}
	}
	seps := Separations{Constant: 40, HasConstant: true}
	b.Run("points", func(b *testing.B) {
		var plan *Plan
		var perPoint float64
		for b.Loop() {
			plan = nil
			before := liveHeap()
			pb := NewPlanBuilder(j.Settings(), crs, g, "points.csv", p, seps)
			if _, err := obsfile.EachPoint(strings.NewReader(file.String()), "points.csv", metres, pb.Add); err != nil {
				b.Fatal(err)
			}
			var err error
			if plan, err = pb.Plan(); err != nil {
				b.Fatal(err)
			}
			perPoint = float64(liveHeap()-before) / float64(plan.Points())
		}
		b.ReportMetric(perPoint, "B/point")
		runtime.KeepAlive(plan)
	})
	b.Run("lines", func(b *testing.B) {
		pb := NewPlanBuilder(j.Settings(), crs, g, "points.csv", p, seps)
		if _, err := obsfile.EachPoint(strings.NewReader(file.String()), "points.csv", metres, pb.Add); err != nil {
			b.Fatal(err)
		}
		plan, err := pb.Plan()
		if err != nil {
			b.Fatal(err)
		}
		const lineSide, perPoint = 100, 10 // lines from each of 10,000 points to its 10 neighbours ahead
		var perLine float64
		for b.Loop() {
			plan.complete() // a new, empty line cache
			before := liveHeap()
			for i := range int32(lineSide * lineSide) {
				a := (i/lineSide)*side + i%lineSide
				for k := range int32(perPoint) {
					to := a + 1 + k%5 + (k/5)*side
					if _, _, err := plan.lines.get(a, to, plan, p); err != nil {
						b.Fatal(err)
					}
				}
			}
			perLine = float64(liveHeap()-before) / float64(plan.lines.next.Load())
		}
		b.ReportMetric(perLine, "B/line")
	})
}

// liveHeap is the bytes of live heap objects after a full collection.
func liveHeap() uint64 {
	runtime.GC()
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	metrics.Read(s)
	return s[0].Value.Uint64()
}
