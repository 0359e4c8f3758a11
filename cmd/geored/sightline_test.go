package main

import (
	"encoding/csv"
	"encoding/xml"
	"fmt"
	"html"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
)

// An eye 1.83 m up on flat ground sees its horizon at about 4.83 km
// (sqrt(2Rh), R = 6371 km, no refraction; common practice), and a 2 m
// target 10 km away is hidden: 5.17 km beyond the horizon the Earth hides
// (5171 m)²/2R = 2.10 m of it. The line does not clear: exit 1.
func TestSightlineDirect(t *testing.T) {
	code, out, stderr := runCmd(t, "sightline", "-distance", "10000", "-eye-height", "1.83", "-target-height", "2", "-k", "0")
	require.Equal(t, exitFlagged, code, stderr)
	assert.Contains(t, out, "does NOT clear the surface")
	assert.Regexp(t, `horizon of the eye\s+48(2[5-9]|3[0-4])\.\d{4} m`, out, "about 4.83 km")
	assert.Regexp(t, `hidden by the Earth at the target\s+2\.(09|10|11)\d\d m of its 2\.0000 m`, out)
	assert.Contains(t, out, "licensed surveyor")

	// 0.0785 m per km² (common practice): 0.0785 m over 1 km at k = 0,
	// 0.0675 m at k = 0.14, both ends 1 m up: clear, exit 0
	code, out, stderr = runCmd(t, "sightline", "-distance", "1000", "-eye-height", "1", "-target-height", "1", "-k", "0")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "curvature and refraction over the line  0.0785 m")
	code, out, _ = runCmd(t, "sightline", "-distance", "1000", "-eye-height", "1", "-target-height", "1", "-k", "0.14")
	require.Equal(t, exitOK, code)
	assert.Contains(t, out, "curvature and refraction over the line  0.0675 m")
	// the lowest point of a level line is its middle, 1 − 0.0675/4 up
	assert.Contains(t, out, "lowest clearance                        0.9831 m at 500.0")
}

// A profile point within the minimum clearance is flagged, and one that
// stands above the ray blocks it, in the table, the CSV and the exit
// status; the plot files are written. Clearances by the rule of
// TestSightlineVerdictEverywhere: 3.6565, −3.4580 and 1.1565 m.
func TestSightlineProfileAndPlot(t *testing.T) {
	dir := t.TempDir()
	prof := filepath.Join(dir, "profile.csv")
	require.NoError(t, os.WriteFile(prof, []byte("# ground under the line\ndistance,height,what\n3000,5,field\n6000,12,wood\n9000,8.5,barn\n"), 0o644))
	args := []string{"sightline", "-distance", "12000", "-eye-height", "10", "-target-height", "12", "-profile", prof, "-min-clearance", "2"}
	code, out, stderr := runCmd(t, append(args, "-plot", filepath.Join(dir, "p.svg"))...)
	require.Equal(t, exitFlagged, code, stderr)
	assert.Contains(t, stderr, `warning: `+prof+`:2: unknown column "what" (column 3) is ignored`)
	assert.Equal(t, 1, strings.Count(out, flagBelowMinimum), out)
	assert.Equal(t, 1, strings.Count(out, flagBlocksRay), out)
	svg := readFile(t, filepath.Join(dir, "p.svg"))
	assert.Contains(t, svg, "<svg")
	assert.Contains(t, svg, "vertical scale exaggerated about ×")

	code, _, stderr = runCmd(t, append(args, "-plot", filepath.Join(dir, "p.html"))...)
	require.Equal(t, exitFlagged, code, stderr)
	page := readFile(t, filepath.Join(dir, "p.html"))
	assert.Contains(t, page, "<!DOCTYPE html>")
	assert.Contains(t, page, "vertical scale exaggerated about ×")
	assert.Contains(t, page, "BELOW MINIMUM")
	assert.NotContains(t, page, "<?xml", "the SVG stands inside the page")

	code, out, stderr = runCmd(t, append(args, "-csv")...)
	require.Equal(t, exitFlagged, code, stderr)
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	col := columns(recs[0])
	var below, samples int
	last := -1.0
	for _, r := range recs[1:] {
		d, err := strconv.ParseFloat(r[col["distance_m"]], 64)
		require.NoError(t, err)
		assert.GreaterOrEqual(t, d, last, "rows in order of distance")
		last = d
		if r[col["below_minimum"]] == "true" {
			below++
		}
		if r[col["kind"]] == "sample" {
			samples++
		}
	}
	assert.Equal(t, 2, below)
	assert.Equal(t, sightlineSamples+1, samples)
}

// With marks, the heights are the marks' above the geoid (or, without
// one, the ellipsoid) plus -hi and -ht, and the length is the geodesic
// between them.
func TestSightlineMarks(t *testing.T) {
	dir := predictJob(t, "from,to,instrument_height,target_height\n")
	// the flag wins over the job: heights read and written in metres
	code, out, stderr := runCmd(t, "sightline", "-config", filepath.Join(dir, "job.toml"), "-from", "A", "-to", "C", "-hi", "5", "-ht", "5", "-length-unit", "m")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "eye 333.0840 m")

	code, out, stderr = runCmd(t, "sightline", "-config", filepath.Join(dir, "job.toml"), "-from", "A", "-to", "C", "-hi", "5", "-ht", "5")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "line of sight A → C, heights above the ellipsoid: the job gives no geoid")
	// A is 328.0840 US ft (100 m) up, the eye 5 US ft above it
	assert.Contains(t, out, "eye 333.0840 us-ft")

	// With a geoid separation the clearance is above the geoid, as ground
	// and water heights are: A's h, read as 328.0840 m with -length-unit m,
	// is H = 298.0840 m for N = 30 m.
	code, out, stderr = runCmd(t, "sightline", "-config", filepath.Join(dir, "job.toml"), "-from", "A", "-to", "C", "-hi", "5", "-ht", "5",
		"-length-unit", "m", "-geoid-separation-m", "30")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "line of sight A → C, heights above the geoid (orthometric)")
	assert.Contains(t, out, "eye 303.0840 m")
}

func TestSightlineBadInput(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "profile.csv")
	require.NoError(t, os.WriteFile(bad, []byte("distance,height\n3000,5\n13000,2\n4000,abc\n"), 0o644))
	noCols := filepath.Join(dir, "nocols.csv")
	require.NoError(t, os.WriteFile(noCols, []byte("x,y\n1,2\n"), 0o644))
	jobDir := predictJob(t, "from,to,instrument_height,target_height\n")
	for _, tc := range []struct {
		args []string
		want []string
	}{
		{[]string{"sightline"}, []string{"give -from ID -to ID"}},
		{[]string{"sightline", "-distance", "1000", "-from", "A", "-to", "B"}, []string{"not both"}},
		{[]string{"sightline", "-distance", "1000", "-hi", "2"}, []string{"-hi and -ht go with -from and -to"}},
		{[]string{"sightline", "-distance", "-5", "-eye-height", "1"}, []string{"distance along the line -5"}},
		{[]string{"sightline", "-distance", "1000", "-eye-height", "NaN"}, []string{`-eye-height "NaN": want a decimal number`}},
		{[]string{"sightline", "-distance", "1000", "-k", "1.5"}, []string{"coefficient of refraction"}},
		{[]string{"sightline", "-distance", "1000", "-eye-height", "1", "-min-clearance", "-1"}, []string{"-min-clearance -1: want a clearance of zero or more, in m"}},
		{[]string{"sightline", "-distance", "1000", "-eye-height", "1", "-min-clearance", "NaN"}, []string{`-min-clearance "NaN": want a decimal number`}},
		{[]string{"sightline", "-distance", "1000", "-eye-height", "1", "-min-clearance", "1e9"}, []string{"minimum clearance 1e+09 m, want a value in [0, 100000] m"}},
		{[]string{"sightline", "-distance", "12000", "-eye-height", "10", "-profile", bad},
			[]string{`profile.csv:3:1: distance "13000": want a distance from the eye along the line in m, 0..12000.0000`, `profile.csv:4:2: height "abc"`}},
		{[]string{"sightline", "-distance", "12000", "-profile", noCols}, []string{"nocols.csv:1: header: missing required column(s) distance, height; found x, y"}},
		{[]string{"sightline", "-distance", "12000", "-plot", filepath.Join(dir, "p.png")}, []string{`-plot`, "want a file ending in .svg or .html"}},
		{[]string{"sightline", "-config", filepath.Join(jobDir, "job.toml"), "-from", "A", "-to", "Z"}, []string{`-to: target "Z" is not in`}},
		{[]string{"sightline", "-config", filepath.Join(jobDir, "job.toml"), "-from", "A"}, []string{"give -from and -to together"}},
	} {
		code, _, stderr := runCmd(t, tc.args...)
		assert.Equal(t, exitFailed, code, "%v", tc.args)
		for _, w := range tc.want {
			assert.Contains(t, stderr, w, "%v", tc.args)
		}
	}
}

// sightRun is one sightline invocation run the four ways that give its
// verdict: the table, -csv, and a plot in SVG and in HTML.
type sightRun struct {
	codes           [4]int // table, csv, svg, html
	table, headline string // the table, and the verdict on its "line of sight" row
	csvRows         [][]string
	csvStderr       string
	svg, page       string
	tableStderr     string
}

func runSightlineAll(t *testing.T, args ...string) sightRun {
	t.Helper()
	var r sightRun
	dir := t.TempDir()
	r.codes[0], r.table, r.tableStderr = runCmd(t, append([]string{"sightline"}, args...)...)
	var out string
	r.codes[1], out, r.csvStderr = runCmd(t, append([]string{"sightline", "-csv"}, args...)...)
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err, out)
	r.csvRows = recs
	svg, page := filepath.Join(dir, "p.svg"), filepath.Join(dir, "p.html")
	r.codes[2], _, _ = runCmd(t, append([]string{"sightline", "-plot", svg}, args...)...)
	r.codes[3], _, _ = runCmd(t, append([]string{"sightline", "-plot", page}, args...)...)
	r.svg, r.page = readFile(t, svg), readFile(t, page)
	m := regexp.MustCompile(`(?m)^line of sight {2,}(.+)$`).FindStringSubmatch(r.table)
	require.NotNil(t, m, r.table)
	r.headline = m[1]
	return r
}

// number returns the number that the regular expression's first group
// matches in s.
func number(t *testing.T, re, s string) float64 {
	t.Helper()
	m := regexp.MustCompile(re).FindStringSubmatch(s)
	require.NotNil(t, m, "%q in %q", re, s)
	return num(t, m[1])
}

// One verdict, whichever output is asked for: the table's headline, the
// CSV's flags (and its verdict on stderr), the plot's title, the HTML
// page and the exit status agree in every case. The clearances are
// checked against the rule hA + (hB − hA)x/L − (1 − k)x(L − x)/2R
// (common practice; REFERENCES.md §7, (1 − k)L²/2R), R = 6371008.8 m:
//
//	12 km, eye 10 m, target 12 m, k = 0.13, 0.87·x(L − x)/2R:
//	x = 3000 m: 10.5 − 1.8435 = 8.6565, over 5 m of ground 3.6565 m
//	x = 6000 m: 11.0 − 2.4580 = 8.5420, over 7 m 1.5420, over 12 m −3.4580
//	x = 9000 m: 11.5 − 1.8435 = 9.6565, over 8.5 m 1.1565
//	10 km, eye 1.83 m, target 2 m, k = 0: the vertex of the parabola at
//	x = (L − 2R·0.17/L)/2 = 4891.69 m, clearance −0.0479 m
//	1 km, both ends 1 m up, k = 0.14: 1 − 0.86·500²/2R = 0.9831 m at 500 m
func TestSightlineVerdictEverywhere(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		require.NoError(t, os.WriteFile(p, []byte(text), 0o644))
		return p
	}
	low := write("low.csv", "distance,height\n3000,5\n6000,7\n9000,8.5\n")
	obstacle := write("obstacle.csv", "distance,height\n3000,5\n6000,12\n9000,8.5\n")
	line12 := []string{"-distance", "12000", "-eye-height", "10", "-target-height", "12"}
	curved := []string{"-distance", "10000", "-eye-height", "1.83", "-target-height", "2", "-k", "0"}
	level := []string{"-distance", "1000", "-eye-height", "1", "-target-height", "1", "-k", "0.14"}
	for _, tc := range []struct {
		name    string
		args    []string
		code    int
		blocks  int      // profile rows of the CSV that block the ray
		want    []string // in the headline
		numbers func(t *testing.T, headline string)
	}{
		{name: "clears, no profile", args: level, code: exitOK, want: []string{"clears the surface"}},
		{name: "clears the surface by the minimum", args: append(level, "-min-clearance", "0.9"), code: exitOK,
			want: []string{"clears the surface by the minimum clearance of 0.9000 m"}},
		{name: "surface within the minimum", args: append(level, "-min-clearance", "1"), code: exitFlagged,
			want: []string{"does NOT clear the surface: the ray runs lowest at 500.0", " m above it, 0.0169 m short of the minimum"}},
		{name: "blocked by the Earth's curvature", args: curved, code: exitFlagged,
			want: []string{"does NOT clear the surface: the ray runs lowest at 489"},
			numbers: func(t *testing.T, h string) {
				assert.InDelta(t, 4891.69, number(t, `lowest at ([0-9.]+) m from the eye`, h), 1, "where the ray is lowest (m)")
				assert.InDelta(t, 0.0479, number(t, `([0-9.]+) m under it`, h), 0.001, "how far under the surface (m)")
			}},
		{name: "blocked by the curvature and a profile point", args: append(curved, "-profile", write("one.csv", "distance,height\n5000,0.5\n")), code: exitFlagged,
			blocks: 1, want: []string{"does NOT clear the surface: ", "; nor the profile point: at 5000.0000 m from the eye, it stands "}},
		{name: "clears the surface and the profile", args: append(line12, "-profile", low), code: exitOK,
			want: []string{"clears the surface and all 3 profile points"}},
		{name: "profile points within the minimum", args: append(line12, "-profile", low, "-min-clearance", "2"), code: exitFlagged,
			want: []string{"does NOT clear 2 of 3 profile points by the minimum clearance of 2.0000 m: the worst, at 9000.0000 m from the eye, has a clearance of 1.15"},
			numbers: func(t *testing.T, h string) {
				assert.InDelta(t, 1.1565, number(t, `has a clearance of ([0-9.]+) m`, h), 0.002, "worst clearance (m)")
				assert.InDelta(t, 0.8435, number(t, `\(([0-9.]+) m short\)`, h), 0.002, "shortfall (m)")
			}},
		{name: "a profile point above the ray", args: append(line12, "-profile", obstacle), code: exitFlagged, blocks: 1,
			want: []string{"does NOT clear 1 of 3 profile points: at 6000.0000 m from the eye, it stands 3.45"},
			numbers: func(t *testing.T, h string) {
				assert.InDelta(t, 3.4580, number(t, `it stands ([0-9.]+) m above the ray`, h), 0.002, "obstacle above the ray (m)")
			}},
		{name: "above the ray and within the minimum", args: append(line12, "-profile", obstacle, "-min-clearance", "2"), code: exitFlagged, blocks: 1,
			want: []string{"does NOT clear 2 of 3 profile points by the minimum clearance of 2.0000 m: the worst, at 6000.0000 m from the eye, stands 3.45", " m short); one of them blocks the ray"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			r := runSightlineAll(t, tc.args...)
			assert.Equal(t, [4]int{tc.code, tc.code, tc.code, tc.code}, r.codes, "exit status of the table, -csv, SVG and HTML runs\n%s", r.table)
			for _, w := range tc.want {
				assert.Contains(t, r.headline, w)
			}
			assert.Empty(t, r.tableStderr, "the table gives the verdict on stdout only")
			if tc.numbers != nil {
				tc.numbers(t, r.headline)
			}
			if tc.code == exitOK {
				assert.True(t, strings.HasPrefix(r.headline, "clears "), r.headline)
				assert.NotContains(t, r.table, flagBelowMinimum)
				assert.NotContains(t, r.table, flagBlocksRay)
				assert.Empty(t, r.csvStderr, "no verdict on stderr when the line clears")
			} else {
				assert.True(t, strings.HasPrefix(r.headline, "does NOT clear "), r.headline)
				assert.Equal(t, "geored sightline: "+r.headline+"\n", r.csvStderr, "-csv gives the verdict on stderr")
			}
			// the CSV flags a row if and only if the line does not clear
			col := columns(r.csvRows[0])
			var flagged, blocks int
			for _, row := range r.csvRows[1:] {
				if row[col["below_minimum"]] == "true" {
					flagged++
				}
				if row[col["kind"]] == "profile" && row[col["blocks_ray"]] == "true" {
					blocks++
				}
			}
			assert.Equal(t, tc.code == exitFlagged, flagged > 0, "CSV rows below the minimum: %d", flagged)
			assert.Equal(t, tc.blocks, blocks, "CSV profile rows that block the ray")
			// the plot's title and the page carry the same verdict
			title := strings.Join(svgOf(t, r.svg).titleLines(), " ")
			assert.Contains(t, title, "line of sight "+r.headline, "the SVG's title")
			assert.Contains(t, r.page, "The line of sight "+html.EscapeString(r.headline)+".", "the HTML page")
		})
	}
}

// svgDoc is what the sightline tests read of an SVG written by gonum's
// vgsvg: its texts and paths in page coordinates, points from the
// bottom left (the drawing's group flips y, and each text flips back).
type svgDoc struct {
	width, height float64
	texts         []svgText
	paths         []svgPath
}

type svgText struct {
	x, y, size float64 // baseline start; font size, points
	family     string  // the first family of the style
	text       string
	rotated    bool // inside a rotated group: an axis label
}

type svgPath struct {
	pts   []svgPoint // every end point of the path's commands
	style string
}

type svgPoint struct{ x, y float64 }

// svgRect is a box in page coordinates.
type svgRect struct{ minX, minY, maxX, maxY float64 }

func (r svgRect) contains(p svgPoint) bool {
	return p.x >= r.minX && p.x <= r.maxX && p.y >= r.minY && p.y <= r.maxY
}

func (r svgRect) union(o svgRect) svgRect {
	return svgRect{math.Min(r.minX, o.minX), math.Min(r.minY, o.minY), math.Max(r.maxX, o.maxX), math.Max(r.maxY, o.maxY)}
}

var (
	svgCommand = regexp.MustCompile(`([MLAZ])([^MLAZ]*)`)
	svgNumber  = regexp.MustCompile(`-?[0-9.]+(?:e-?[0-9]+)?`)
	svgFamily  = regexp.MustCompile(`font-family:'?([^;,']+)`)
	svgSize    = regexp.MustCompile(`font-size:([0-9.]+)px`)
)

// svgOf parses an SVG document (it is XML).
func svgOf(t *testing.T, doc string) svgDoc {
	t.Helper()
	var d svgDoc
	dec := xml.NewDecoder(strings.NewReader(doc))
	var rotated []bool // per open group
	attr := func(e xml.StartElement, name string) string {
		for _, a := range e.Attr {
			if a.Name.Local == name {
				return a.Value
			}
		}
		return ""
	}
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		require.NoError(t, err, "the SVG is XML")
		switch e := tok.(type) {
		case xml.StartElement:
			switch e.Name.Local {
			case "svg":
				vb := svgNumber.FindAllString(attr(e, "viewBox"), -1)
				require.Len(t, vb, 4, "viewBox")
				d.width, d.height = num(t, vb[2]), num(t, vb[3])
			case "g":
				rotated = append(rotated, strings.Contains(attr(e, "transform"), "rotate"))
			case "text":
				var body string
				require.NoError(t, dec.DecodeElement(&body, &e))
				style := attr(e, "style")
				tx := svgText{x: num(t, attr(e, "x")), y: -num(t, attr(e, "y")), text: body, rotated: slices.Contains(rotated, true)}
				if m := svgFamily.FindStringSubmatch(style); m != nil {
					tx.family = m[1]
				}
				if m := svgSize.FindStringSubmatch(style); m != nil {
					tx.size = num(t, m[1])
				}
				d.texts = append(d.texts, tx)
			case "path":
				p := svgPath{style: attr(e, "style")}
				for _, c := range svgCommand.FindAllStringSubmatch(attr(e, "d"), -1) {
					n := svgNumber.FindAllString(c[2], -1)
					if len(n) >= 2 { // the end point is the last pair
						p.pts = append(p.pts, svgPoint{num(t, n[len(n)-2]), num(t, n[len(n)-1])})
					}
				}
				d.paths = append(d.paths, p)
			}
		case xml.EndElement:
			if e.Name.Local == "g" {
				rotated = rotated[:len(rotated)-1]
			}
		}
	}
	return d
}

// box is the text's extent on the page, measured with gonum's metrics of
// its font and widened by a third for a viewer's wider font.
func (tx svgText) box() svgRect {
	variant := "Serif"
	if strings.Contains(tx.family, "Sans") {
		variant = "Sans"
	}
	sty := text.Style{Font: font.From(font.Font{Typeface: "Liberation", Variant: font.Variant(variant)}, font.Length(tx.size)), Handler: plot.DefaultTextHandler}
	w := float64(sty.Rectangle(tx.text).Size().X) * 4 / 3
	return svgRect{tx.x, tx.y - 0.3*tx.size, tx.x + w, tx.y + tx.size}
}

// frameTop is the top of the drawing's frame: the highest point of any
// path but the page's background.
func (d svgDoc) frameTop() float64 {
	top := math.Inf(-1)
	for _, p := range d.paths[1:] {
		for _, pt := range p.pts {
			top = math.Max(top, pt.y)
		}
	}
	return top
}

// titleLines are the texts above the frame, top first.
func (d svgDoc) titleLines() []string {
	var lines []string
	top := d.frameTop()
	for _, tx := range d.texts {
		if !tx.rotated && tx.y > top {
			lines = append(lines, tx.text)
		}
	}
	return lines
}

// yLabel is the vertical axis's label, its lines joined by newlines.
func (d svgDoc) yLabel() string {
	var lines []string
	for _, tx := range d.texts {
		if tx.rotated {
			lines = append(lines, tx.text)
		}
	}
	return strings.Join(lines, "\n")
}

// sightLegendNames are the names a legend of the sightline plot has
// given its entries, now and before.
var sightLegendNames = []string{"surface", "ray, k = ", "ray less the minimum clearance", "profile", "below minimum",
	"below the minimum clearance", "blocks the ray", "lowest"}

// legendBox is the extent of the legend's texts, widened on both sides
// by a thumbnail and a space (gonum draws the thumbnail on one side).
func (d svgDoc) legendBox(t *testing.T) (svgRect, []string) {
	var box svgRect
	var names []string
	for _, tx := range d.texts {
		if tx.rotated || !slices.ContainsFunc(sightLegendNames, func(n string) bool { return strings.HasPrefix(tx.text, n) }) {
			continue
		}
		b := tx.box()
		b.minX, b.maxX = b.minX-24, b.maxX+24
		if names == nil {
			box = b
		} else {
			box = box.union(b)
		}
		names = append(names, tx.text)
	}
	return box, names
}

// longestPath is the path of the most points whose style has all of want.
func (d svgDoc) longestPath(want ...string) svgPath {
	var best svgPath
	for _, p := range d.paths {
		ok := true
		for _, w := range want {
			ok = ok && strings.Contains(p.style, w)
		}
		if ok && len(p.pts) > len(best.pts) {
			best = p
		}
	}
	return best
}

// along samples a polyline at every point and nine between each pair.
func (p svgPath) along() []svgPoint {
	var out []svgPoint
	for i := range p.pts {
		out = append(out, p.pts[i])
		if i+1 < len(p.pts) {
			a, b := p.pts[i], p.pts[i+1]
			for j := 1; j < 10; j++ {
				f := float64(j) / 10
				out = append(out, svgPoint{a.x + f*(b.x-a.x), a.y + f*(b.y-a.y)})
			}
		}
	}
	return out
}

func hexColor(c color.RGBA) string { return fmt.Sprintf("#%02X%02X%02X", c.R, c.G, c.B) }

// The plot tells no other story than the numbers. The legend lies off
// the ray and the profile (the old plot drew it over the ray's right
// end); the vertical axis's label states the quantity and unit the title
// states, and the title the verdict; the stated exaggeration is the
// drawing's, checked by the bulge of the surface, whose sagitta over a
// chord of L is R(1 − cos(L/2R)) ≈ L²/8R (common practice: the sagitta
// of an arc), 5.0228 m over 16 km; and each profile point that fails is
// marked where it is drawn, with a legend entry for its kind.
func TestSightlinePlotReadable(t *testing.T) {
	dir := t.TempDir()
	prof := filepath.Join(dir, "profile.csv")
	require.NoError(t, os.WriteFile(prof, []byte("distance,height\n2000,4\n5000,9\n8000,14\n11000,9\n14000,3\n"), 0o644))
	for _, tc := range []struct {
		name       string
		args       []string
		below      []int // indexes of the profile points below the minimum, and blocking the ray
		blocks     []int
		wantLegend []string
	}{
		{"obstacle and points within the minimum", []string{"-profile", prof, "-min-clearance", "2.5"}, []int{1, 3}, []int{2},
			[]string{"below the minimum clearance", "blocks the ray", "ray less the minimum clearance of 2.5000 m"}},
		{"obstacle", []string{"-profile", prof}, nil, []int{2}, []string{"blocks the ray"}},
		{"surface alone", nil, nil, nil, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			plotFile := filepath.Join(dir, "p.svg")
			args := append([]string{"sightline", "-distance", "16000", "-eye-height", "15", "-target-height", "15", "-plot", plotFile}, tc.args...)
			_, out, stderr := runCmd(t, args...)
			require.FileExists(t, plotFile, stderr)
			d := svgOf(t, readFile(t, plotFile))

			ray := d.longestPath("stroke:" + hexColor(sightRayColor))
			require.Len(t, ray.pts, sightlineSamples+1, "the ray's path")
			legend, names := d.legendBox(t)
			require.NotEmpty(t, names, "legend entries")
			for _, w := range tc.wantLegend {
				assert.Contains(t, names, w, "legend entry")
			}
			assert.True(t, legend.minX >= 0 && legend.maxX <= d.width && legend.minY >= 0 && legend.maxY <= d.height,
				"the legend %+v lies within the page %g × %g", legend, d.width, d.height)
			curves := map[string]svgPath{"ray": ray, "surface": d.longestPath("stroke:" + hexColor(sightSurfaceColor))}
			if tc.args != nil {
				curves["profile"] = d.longestPath("stroke:" + hexColor(sightGroundColor))
				require.Len(t, curves["profile"].pts, 5, "the profile's path")
			}
			for name, c := range curves {
				for _, p := range c.along() {
					if legend.contains(p) {
						t.Errorf("the legend %+v covers the %s at (%.1f, %.1f)", legend, name, p.x, p.y)
						break
					}
				}
			}

			title := strings.Join(d.titleLines(), " ")
			label := d.yLabel()
			require.NotEmpty(t, label, "the vertical axis's label")
			for _, l := range strings.Split(label, "\n") {
				assert.Contains(t, title, l, "the title states what the vertical axis's label states")
			}
			assert.Contains(t, label, "(m)", "the label gives the unit")
			headline := regexp.MustCompile(`(?m)^line of sight {2,}(.+)$`).FindStringSubmatch(out)
			require.NotNil(t, headline, out)
			assert.Contains(t, title, "line of sight "+headline[1], "the title carries the verdict")

			surface := curves["surface"]
			x0, x1 := surface.pts[0], surface.pts[len(surface.pts)-1]
			top := math.Inf(-1)
			for _, p := range surface.pts {
				top = math.Max(top, p.y)
			}
			sagitta := 16000.0 * 16000 / (8 * meanEarthRadius) // 5.0228 m
			drawn := (16000 / (x1.x - x0.x)) / (sagitta / (top - (x0.y+x1.y)/2))
			stated := number(t, `vertical scale exaggerated about ×([0-9.]+)`, title)
			assert.InDelta(t, drawn, stated, 0.05*drawn, "the stated exaggeration against the drawing's")

			profile := curves["profile"]
			flagged := func(want []int, style ...string) {
				var centres []svgPoint
				for _, p := range d.paths {
					if len(p.pts) < 2 || len(p.pts) > 4 || !slices.ContainsFunc(style, func(s string) bool { return strings.Contains(p.style, s) }) {
						continue
					}
					var b svgRect
					for i, pt := range p.pts {
						if r := (svgRect{pt.x, pt.y, pt.x, pt.y}); i == 0 {
							b = r
						} else {
							b = b.union(r)
						}
					}
					if !legend.contains(svgPoint{b.minX, b.minY}) {
						centres = append(centres, svgPoint{(b.minX + b.maxX) / 2, (b.minY + b.maxY) / 2})
					}
				}
				for _, i := range want {
					at := profile.pts[i]
					assert.Truef(t, slices.ContainsFunc(centres, func(c svgPoint) bool { return math.Hypot(c.x-at.x, c.y-at.y) < 4 }),
						"profile point %d is marked %v where it is drawn, (%.1f, %.1f); marks at %v", i, style, at.x, at.y, centres)
				}
			}
			red := hexColor(sightFlagColor)
			flagged(tc.below, "stroke:"+red)
			flagged(tc.blocks, "fill:"+red)
		})
	}
}

// The numbers the command prints, against the trade's rules of thumb
// (common practice; REFERENCES.md §7), R = 6371008.8 m:
//
//	horizon sqrt(2Rh/(1 − k)): h = 10 m, k = 0.13 → 12102.06 m; 12 m → 13257.14 m
//	hidden height (L − sqrt(2R'h))²/2R', R' = R/(1 − k): eye 1.83 m, 10 km,
//	  k = 0.13 → (10000 − 5177.08)²/(2·7323006.7) = 1.588 m
//	curvature and refraction 0.0675 m per km² at k = 0.14: 6.75 m at 10 km
//	in feet, 0.0206 M² ft (M thousands of feet, k ≈ 0.14; Wolf & Ghilani,
//	  Elementary Surveying [memory]): 0.515 ft at 5000 ft
//	the ray along the line hA + (hB − hA)x/L − (1 − k)x(L − x)/2R
func TestSightlineRulesOfThumb(t *testing.T) {
	const r = meanEarthRadius
	line := func(t *testing.T, out, name string) float64 {
		t.Helper()
		return number(t, `(?m)^`+regexp.QuoteMeta(name)+` {2,}(-?[0-9.]+) `, out)
	}
	code, out, stderr := runCmd(t, "sightline", "-distance", "12000", "-eye-height", "10", "-target-height", "12")
	require.Equal(t, exitOK, code, stderr)
	for _, tc := range []struct {
		row string
		h   float64
	}{{"horizon of the eye", 10}, {"horizon of the target", 12}} {
		rule := math.Sqrt(2 * r * tc.h / (1 - 0.13))
		// the rule drops terms of order h/R: a centimetre at 12 km
		assert.InDeltaf(t, rule, line(t, out, tc.row), 1e-6*rule, "%s against sqrt(2Rh/(1 − k)) (m)", tc.row)
	}

	// refraction lifts the ray 0.2 m clear of the surface (the same line
	// with k = 0 is blocked, TestSightlineVerdictEverywhere)
	code, out, stderr = runCmd(t, "sightline", "-distance", "10000", "-eye-height", "1.83", "-target-height", "2")
	require.Equal(t, exitOK, code, stderr)
	re := r / (1 - 0.13)
	beyond := 10000 - math.Sqrt(2*re*1.83)
	assert.InDelta(t, beyond*beyond/(2*re), line(t, out, "hidden by the Earth at the target"), 5*mm, "hidden height against the effective-radius rule (m)")

	code, out, stderr = runCmd(t, "sightline", "-distance", "10000", "-eye-height", "10", "-target-height", "10", "-k", "0.14")
	require.Equal(t, exitOK, code, stderr)
	assert.InDelta(t, 0.0675*10*10, line(t, out, "curvature and refraction over the line"), 0.00005*100, "0.0675 m per km² over 10 km (m)")

	code, out, stderr = runCmd(t, "sightline", "-distance", "5000", "-eye-height", "10", "-target-height", "10", "-k", "0.14", "-length-unit", "intl-ft")
	require.Equal(t, exitOK, code, stderr)
	assert.Contains(t, out, "curvature and refraction over the line  0.51")
	assert.InDelta(t, 0.0206*5*5, line(t, out, "curvature and refraction over the line"), 0.002*0.515, "0.0206 M² ft over 5000 ft (ft)")

	// the ray along the 12 km line, in the CSV
	code, out, stderr = runCmd(t, "sightline", "-distance", "12000", "-eye-height", "10", "-target-height", "12", "-csv")
	require.Equal(t, exitOK, code, stderr)
	recs, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	require.NoError(t, err)
	col := columns(recs[0])
	for _, row := range recs[1:] {
		x := num(t, row[col["distance_m"]])
		want := 10 + 2*x/12000 - 0.87*x*(12000-x)/(2*r)
		assert.InDeltaf(t, want, num(t, row[col["ray_height_m"]]), 2*mm, "%s row at %g m: ray height against the parabola (m)", row[col["kind"]], x)
	}
}
