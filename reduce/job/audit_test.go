package job

import (
	"bufio"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/golang/geo/r3"
	"github.com/golang/geo/s2"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/geored/geored/geodesic"
	"github.com/geored/geored/io/obsfile"
	"github.com/geored/geored/reduce"
	"github.com/geored/geored/reduce/audit"
)

// TestAuditVectorTools lays each vector of ../../testdata/audit/vectors_utm32.txt
// (ΔX = X_B − X_A from PROJ's cs2cs) from its start mark and wants its end
// at B, its ellipsoid distance GeodSolve's geodesic and its grid distance
// the plane distance between cs2cs's projected ends, to 0.1 mm. The chord
// and the tangent-plane length are not the ellipsoid distance: on the
// 28.6 km line they are metres and decimetres off.
func TestAuditVectorTools(t *testing.T) {
	f, err := os.Open("../../testdata/audit/vectors_utm32.txt")
	require.NoError(t, err)
	defer f.Close()
	p := projector(t, "EPSG:25832")
	g, err := geodesic.NewGeodesic(p.CRS().Ellipsoid())
	require.NoError(t, err)
	sc := bufio.NewScanner(f)
	n := 0
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") || strings.TrimSpace(line) == "" {
			continue
		}
		var v [17]float64
		for i, fl := range strings.Fields(line) {
			v[i], err = strconv.ParseFloat(fl, 64)
			require.NoError(t, err, line)
		}
		pts := []obsfile.Point{
			{ID: "A", LatLng: s2.LatLngFromDegrees(v[0], v[1]), HasLatLng: true, EllipsoidHeight: v[2], HasEllipsoidHeight: true},
			{ID: "B", LatLng: s2.LatLngFromDegrees(v[3], v[4]), HasLatLng: true, EllipsoidHeight: v[5], HasEllipsoidHeight: true},
		}
		ctl, err := ResolveControl(pts, "pts", p, Separations{})
		require.NoError(t, err)
		xa, xb := r3.Vector{X: v[6], Y: v[7], Z: v[8]}, r3.Vector{X: v[9], Y: v[10], Z: v[11]}
		vc, err := AuditVector(audit.Vector{Delta: xb.Sub(xa)}, ctl["A"], ctl["B"], g, p)
		require.NoError(t, err, line)
		assert.InDelta(t, 0, vc.StartECEF.Distance(xa), 1e-4, "%s: A geocentric against cs2cs, m", line)
		assert.InDelta(t, v[3], vc.End.Lat.Degrees(), 1e-9, "%s: end latitude, degrees", line)
		assert.InDelta(t, v[4], vc.End.Lng.Degrees(), 1e-9, "%s: end longitude, degrees", line)
		assert.InDelta(t, v[5], vc.EndHeight, 1e-4, "%s: end height, m", line)
		assert.InDelta(t, v[16], vc.VectorEllipsoid, 1e-4, "%s: ellipsoid distance against GeodSolve, m", line)
		assert.InDelta(t, math.Hypot(v[14]-v[12], v[15]-v[13]), vc.VectorGrid, 1e-4, "%s: grid distance against cs2cs, m", line)
		assert.InDelta(t, v[16], vc.Line.Ellipsoid, 1e-4, "%s: control geodesic, m", line)
		if v[16] > 20000 {
			chord := xb.Sub(xa).Norm()
			enu := audit.Topocentric(vc.A, xb.Sub(xa))
			assert.Greater(t, chord-v[16], 0.1, "the chord is not the ellipsoid distance")
			assert.Greater(t, math.Abs(math.Hypot(enu.X, enu.Y)-v[16]), 0.05, "nor is the tangent-plane length")
		}
		n++
	}
	require.NoError(t, sc.Err())
	assert.Equal(t, 4, n)
}

// TestAuditLineKinds: the control line's ground and sea-level distances
// follow from the geodesic, the heights and N as audit.LineControl says,
// and its grid distance is the projected marks' plane distance.
func TestAuditLineKinds(t *testing.T) {
	p := projector(t, "EPSG:25832")
	g, err := geodesic.NewGeodesic(p.CRS().Ellipsoid())
	require.NoError(t, err)
	pts := []obsfile.Point{
		{ID: "A", LatLng: s2.LatLngFromDegrees(50.1, 8.6), HasLatLng: true, Elevation: 100, HasElevation: true, GeoidSeparation: 48, HasGeoidSeparation: true},
		{ID: "B", LatLng: s2.LatLngFromDegrees(50.112, 8.622), HasLatLng: true, Elevation: 140, HasElevation: true, GeoidSeparation: 48.2, HasGeoidSeparation: true},
	}
	ctl, err := ResolveControl(pts, "pts", p, Separations{})
	require.NoError(t, err)
	lc, _, err := AuditLine(ctl["A"], ctl["B"], g, p)
	require.NoError(t, err)
	require.True(t, lc.HasHeights)
	require.True(t, lc.HasSeparation)
	assert.InDelta(t, 148, lc.HeightA, 1e-9)
	assert.InDelta(t, 48.1, lc.MeanSeparation(), 1e-9)
	ga, gb := ctl["A"].Grid, ctl["B"].Grid
	assert.InDelta(t, math.Hypot(gb.Easting-ga.Easting, gb.Northing-ga.Northing), lc.Grid, 1e-9)
	assert.InDelta(t, 0.9996, lc.LineScale, 1e-3, "UTM near 9°E")
}

// TestRawLinesMeans: a line's observations in both directions are one
// line, its stages their means, its heights and N seen from the mark
// asked first; a rejected row is left out; on the sea-level datum the
// ellipsoid distance comes back from the geoid's by R/(R + N_m).
func TestRawLinesMeans(t *testing.T) {
	res := func(from, to string, arc, hFrom, hTo, nFrom, nTo float64, datum reduce.Datum) *Result {
		r := &Result{Obs: obsfile.Observation{From: from, To: to}}
		red := &r.Reduction
		red.Instrument.Raw, red.Instrument.PrismConstant = arc+0.3, -0.03
		red.SecondVelocity.Distance = arc + 0.2
		red.FirstVelocity.PPM = 20
		red.Geometry.Arc = arc
		red.Grid = reduce.GridResult{GridDistance: arc * 0.9996, LineScale: 0.9996, Radius: 6.38e6}
		red.Heights = reduce.LineHeights{Datum: datum, MeanMarkHeight: (hFrom + hTo) / 2,
			MarkA: reduce.MarkHeight{Datum: datum, Height: hFrom, Separation: reduce.Separation{N: nFrom, Source: reduce.SeparationPoint}},
			MarkB: reduce.MarkHeight{Datum: datum, Height: hTo, Separation: reduce.Separation{N: nTo, Source: reduce.SeparationPoint}}}
		return r
	}
	g := NewRawLines()
	g.Add(res("P", "Q", 1000.002, 100, 140, 47, 48, reduce.DatumEllipsoid))
	g.Add(res("Q", "P", 1000.004, 140, 100, 48, 47, reduce.DatumEllipsoid))
	bad := res("P", "Q", 999, 0, 0, 0, 0, reduce.DatumEllipsoid)
	bad.Rejected = true
	g.Add(bad)
	assert.Equal(t, 1, g.Len())
	o, ok, err := g.Ours("Q", "P")
	require.NoError(t, err)
	require.True(t, ok)
	assert.Equal(t, 2, o.Count)
	assert.InDelta(t, 1000.003, o.Line.Ellipsoid, 1e-9)
	assert.InDelta(t, 1000.003*0.9996, o.Line.Grid, 1e-9)
	assert.InDelta(t, 1000.203, o.Slope, 1e-9)
	assert.Equal(t, 140.0, o.Line.HeightA, "Q's height first")
	assert.Equal(t, 100.0, o.Line.HeightB)
	assert.Equal(t, 48.0, o.Line.SeparationA)
	assert.Equal(t, 20.0, o.PPM)
	_, ok, _ = g.Ours("P", "R")
	assert.False(t, ok)

	g.Add(res("S", "T", 2000.0, 30, 40, 47, 47, reduce.DatumSeaLevel))
	o, ok, err = g.Ours("S", "T")
	require.NoError(t, err)
	require.True(t, ok)
	assert.InDelta(t, 2000*6.38e6/(6.38e6+47), o.Line.Ellipsoid, 1e-9, "s = s_geoid R/(R + N)")
	assert.Equal(t, 77.0, o.Line.HeightA, "h = H + N")
	sea, err := o.Line.Reference(audit.SeaLevel)
	require.NoError(t, err)
	assert.InDelta(t, 2000, sea, 1e-9, "back on the geoid")
}

// TestAuditVectorGN72 runs IOGP GN7-2's worked examples of methods 9602
// and 9836 (../../testdata/audit/gn7-2_topocentric.txt, [published],
// printed to 1 mm) through the path a delivered vector takes: the marks
// to geocentric through PROJ, the vector from the origin to the point
// laid from the origin (AuditVector) and brought back to φ, λ, h at the
// point, and its east, north, up at the origin.
func TestAuditVectorGN72(t *testing.T) {
	f, err := os.Open("../../testdata/audit/gn7-2_topocentric.txt")
	require.NoError(t, err)
	defer f.Close()
	pts := map[string][]float64{}
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fl := strings.Fields(sc.Text())
		if len(fl) == 0 || strings.HasPrefix(fl[0], "#") {
			continue
		}
		var v []float64
		for _, s := range fl[1:] {
			if strings.Contains(s, ":") {
				var deg float64
				for i, part := range strings.Split(s, ":") {
					x, err := strconv.ParseFloat(part, 64)
					require.NoError(t, err)
					deg += x / math.Pow(60, float64(i))
				}
				v = append(v, deg)
				continue
			}
			x, err := strconv.ParseFloat(s, 64)
			if err != nil {
				x = math.NaN() // "-": not printed
			}
			v = append(v, x)
		}
		pts[fl[0]] = v
	}
	require.NoError(t, sc.Err())
	o, pt, enu := pts["origin"], pts["point"], pts["topocentric"]
	require.Len(t, pt, 6)
	require.Len(t, enu, 3)
	// WGS 84 / UTM zone 31N: the geocentric frame of WGS 84.
	p := projector(t, "EPSG:32631")
	g, err := geodesic.NewGeodesic(p.CRS().Ellipsoid())
	require.NoError(t, err)
	ctl, err := ResolveControl([]obsfile.Point{
		{ID: "O", LatLng: s2.LatLngFromDegrees(o[0], o[1]), HasLatLng: true, EllipsoidHeight: o[2], HasEllipsoidHeight: true},
		{ID: "P", LatLng: s2.LatLngFromDegrees(pt[0], pt[1]), HasLatLng: true, EllipsoidHeight: pt[2], HasEllipsoidHeight: true},
	}, "gn7-2", p, Separations{})
	require.NoError(t, err)
	xp, err := p.ToGeocentric(ctl["P"].LatLng, pt[2])
	require.NoError(t, err)
	assert.InDelta(t, pt[3], xp.X, 1e-3, "X, m (GN7-2 method 9602)")
	assert.InDelta(t, pt[4], xp.Y, 1e-3, "Y, m")
	assert.InDelta(t, pt[5], xp.Z, 1e-3, "Z, m")
	xo, err := p.ToGeocentric(ctl["O"].LatLng, o[2])
	require.NoError(t, err)
	vc, err := AuditVector(audit.Vector{Delta: r3.Vector{X: pt[3], Y: pt[4], Z: pt[5]}.Sub(xo)}, ctl["O"], ctl["P"], g, p)
	require.NoError(t, err)
	// 1 mm on the ground is about 9e-9° of latitude.
	assert.InDelta(t, pt[0], vc.End.Lat.Degrees(), 1e-8, "the vector's end: latitude, degrees")
	assert.InDelta(t, pt[1], vc.End.Lng.Degrees(), 1.5e-8, "longitude, degrees")
	assert.InDelta(t, pt[2], vc.EndHeight, 1e-3, "h, m")
	got := audit.Topocentric(vc.A, vc.EndECEF.Sub(vc.StartECEF))
	assert.InDelta(t, enu[0], got.X, 1e-3, "E, m (GN7-2 method 9836)")
	assert.InDelta(t, enu[1], got.Y, 1e-3, "N, m")
	assert.InDelta(t, enu[2], got.Z, 1e-3, "U, m")
}
