package report

import (
	"bytes"
	"fmt"
	"html/template"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/geored/geored/io/units"
)

// reportTemplate is the page report.html, what needs action first: the
// verdict, the flagged observations worst first, the rejected rows, the
// lines (flagged first); then the residual plot, the statistics, the fit
// against distance and the warnings; the job's settings, instruments,
// input files and hashes last; the caution at top and bottom.
// Numbers are fixed decimals: 0.1 mm, 0.01 ppm, distances to 4 decimals
// of the job's length unit (0.1 mm in metres), heights to 3, 0.01 for |w|,
// 0.001 for k.
const reportTemplate = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Distance reduction report: {{.Settings.CRSName}}</title>
<style>
:root { color-scheme: light; }
body { font-family: "Liberation Sans", Arial, Helvetica, sans-serif; font-size: 15px; line-height: 1.4;
       color: #111; background: #fff; margin: 1rem auto; max-width: 84rem; padding: 0 1rem; }
h1 { font-size: 1.5rem; margin: 0 0 .25rem; }
h2 { font-size: 1.2rem; margin: 1.5rem 0 .4rem; border-bottom: 1px solid #999; padding-bottom: .1rem; }
h3 { font-size: 1.05rem; margin: 1.2rem 0 .4rem; }
p { margin: .35rem 0; }
header p { margin: .2rem 0; }
.caution { border: 2px solid #8a5a00; background: #fff6e0; padding: .35rem .75rem; margin: .5rem 0; }
.verdict { font-size: 1.1rem; padding: .5rem .75rem; border-left: 6px solid #1f4e79; background: #eef3f8; margin-top: .5rem; }
.verdict.status-1, .verdict.status-2 { border-left-color: #b00020; background: #fcebee; }
.verdict .status { font-weight: bold; }
ul.reasons { margin: .3rem 0; }
.bad { color: #b00020; font-weight: bold; }
table { border-collapse: collapse; margin: .4rem 0; font-variant-numeric: tabular-nums; }
th, td { border: 1px solid #bbb; padding: .2rem .45rem; vertical-align: top; }
thead th { background: #e8e8e8; text-align: center; font-weight: bold; }
td.num { text-align: right; white-space: nowrap; }
td.id { white-space: nowrap; }
#lines-table td.id { white-space: normal; overflow-wrap: break-word; }
td.text { overflow-wrap: break-word; }
.wide { overflow-x: auto; max-width: 100%; }
td.hash, td.row { font-family: "Liberation Mono", "DejaVu Sans Mono", monospace; font-size: .85em; overflow-wrap: anywhere; }
tbody th { text-align: left; font-weight: normal; }
table.kv th { text-align: left; background: #f2f2f2; font-weight: normal; width: 16rem; }
table.lines { font-size: .88rem; }
table.lines th, table.lines td { padding: .15rem .35rem; }
table.full { width: 100%; }
#flagged-observations tbody tr, #lines-table tr.flagged { background: #fcebee; }
#lines-table tr.flagged td:first-child { border-left: 4px solid #b00020; }
.flags { color: #b00020; font-weight: bold; }
dl.flags-meaning { margin: .3rem 0; font-size: .9rem; }
dl.flags-meaning dt { display: inline; font-weight: bold; }
dl.flags-meaning dd { display: inline; margin: 0 0 0 .25rem; }
dl.flags-meaning dd::after { content: ""; display: block; }
figure { margin: .5rem 0; }
figure svg { width: 100%; height: auto; max-width: 60rem; display: block; }
figcaption { font-size: .9rem; color: #333; }
.note { font-size: .9rem; color: #333; }
footer { margin-top: 2rem; }
@page { margin: 14mm; }
@media print {
  body { font-size: 9.5pt; margin: 0; max-width: none; padding: 0; }
  table.lines { font-size: 8pt; }
  h2 { break-after: avoid; page-break-after: avoid; }
  tr, figure { break-inside: avoid; page-break-inside: avoid; }
  .caution, .verdict { background: none; }
  #flagged-observations tbody tr, #lines-table tr.flagged { background: none; }
  thead { display: table-header-group; }
  .wide { overflow: visible; }
}
</style>
</head>
<body>
<header>
<h1>Distance reduction report</h1>
<p>{{.Settings.CRSName}}{{with .Settings.CRS}} ({{.}}){{end}}; distances in {{.Unit.Words}}, residuals in mm and ppm.</p>
<p class="caution" role="note"><strong>Caution.</strong> {{.Caution}}</p>
</header>

<section id="verdict">
<h2>Verdict</h2>
<p class="verdict status-{{.ExitStatus}}" id="verdict-text">
<span class="status">Exit status {{.ExitStatus}}: {{.Verdict}}.</span>
{{.Counts.Read}} observations read: {{.Counts.Reduced}} reduced, {{.Counts.Rejected}} rejected.
{{- if not .CountsAddUp}} <span class="bad">These counts do not add up: read should equal reduced + rejected.</span>{{end}}
{{.Counts.Flagged}} reduced observations flagged, on {{.Counts.FlaggedLines}} of {{.Counts.Lines}} lines.
</p>
{{- if .Reasons}}
<ul class="reasons" id="reasons">
{{- range .Reasons}}
<li>{{.}}</li>
{{- end}}
</ul>
{{- end}}
{{- with .Testing.Global}}
<p class="note" id="global-test">Global test of the variance factor over {{.N}} reduced observations: Σw²/n = {{f3 .VarianceFactor}}, bounds {{f3 .Lower}} to {{f3 .Upper}} at α {{.Alpha}}: <strong>{{.Outcome}}</strong>{{if and (lt .UnflaggedN .N) (gt .UnflaggedN 0)}}; {{f3 .UnflaggedVarianceFactor}} without the flagged observations{{end}}.</p>
{{- end}}
<p class="note" id="chance">{{with .Testing}}{{if eq .Scope "job"}}The critical value |w| &gt; {{w .Critical}} holds α {{.JobAlpha}} for the whole job (Šidák over its {{.Tests}} observation rows): {{.Outliers}} observations over it.{{else}}Each observation is tested at |w| &gt; {{w .Critical}} (α {{alpha .AlphaPerObservation}} each): {{.Outliers}} over it, where chance alone would give about {{f1 .ExpectedByChance}}.{{end}}{{end}}</p>
{{- range .Notes}}
<p class="note">{{.}}</p>
{{- end}}
</section>

<section id="flagged">
<h2>Flagged observations, worst first</h2>
{{- if .FlaggedObservations}}
<div class="wide">
<table class="lines full" id="flagged-observations">
<thead><tr><th>#</th><th>|w|</th><th>residual mm</th><th>ppm</th><th>σ mm</th><th>line</th><th>geodesic {{.Unit.Label}}</th><th>file:line</th><th>obs id</th><th>flagged by</th><th>zenith-angle height check</th></tr></thead>
<tbody>
{{- range $i, $o := .FlaggedObservations}}
<tr><td class="num">{{inc $i}}</td><td class="num">{{w (abs .W)}}</td><td class="num">{{mm .ResidualMM}}</td><td class="num">{{ppm .ResidualPPM}}</td><td class="num">{{mm .SigmaMM}}</td><td class="text">{{.From}} → {{.To}}</td><td class="num">{{$.Len .Geodesic}}</td><td class="text">{{place .Where}}</td><td class="text">{{.ObsID}}</td><td class="flags">{{flags .Flags}}</td><td class="text">{{$.HeightSays $o}}</td></tr>
{{- end}}
</tbody>
</table>
</div>
<p class="note">Worst first by the larger of |w| and the height check's |w|. The residual is the observation's reduced ellipsoid distance − the geodesic from control.
{{- if .FlaggedObservationsNotListed}} <span id="flagged-not-listed">The worst {{len .FlaggedObservations}} of {{.Counts.Flagged}} flagged observations are listed: reduced.csv has every observation (columns outlier, out_of_tolerance, height_flagged).</span>{{end}}</p>
{{- else if .Counts.Flagged}}
<p id="no-flagged-observations">{{.Counts.Flagged}} observations are flagged; this summary does not list them: reduced.csv has them (columns outlier, out_of_tolerance, height_flagged).</p>
{{- else if .Counts.Reduced}}
<p id="no-flagged-observations">No flagged observation: every one is within the critical value and the tolerance, and every target height checked agrees with its zenith angle.</p>
{{- else}}
<p id="no-flagged-observations">No observation was reduced, so none could be checked.</p>
{{- end}}
{{- if .FlagMeanings}}
<dl class="flags-meaning">
{{- range .FlagMeanings}}
<dt>{{.Flag}}</dt><dd>{{.Meaning}}.</dd>
{{- end}}
</dl>
{{- end}}
</section>

<section id="rejected">
<h2>Rejected rows</h2>
{{- if .FirstRejects}}
<table class="lines full" id="rejected-rows">
<thead><tr><th>file:line</th><th>reason</th><th>row as written</th></tr></thead>
<tbody>
{{- range .FirstRejects}}
<tr><td class="text">{{place .File}}:{{.Line}}</td><td class="text">{{rejectReason .}}</td><td class="row">{{.Row}}</td></tr>
{{- end}}
</tbody>
</table>
{{- if gt .Counts.Rejected (len .FirstRejects)}}<p class="note" id="rejects-not-listed">The first {{len .FirstRejects}} of {{.Counts.Rejected}}: rejects.csv has them all.</p>{{end}}
{{- else if .Counts.Rejected}}
<p id="no-rejected-rows">{{.Counts.Rejected}} rows were rejected: rejects.csv has them, with their reasons.</p>
{{- else}}
<p id="no-rejected-rows">No row was rejected.</p>
{{- end}}
</section>

<section id="lines">
<h2>Lines, flagged first</h2>
{{- if .Lines}}
<div class="wide">
<table class="lines full" id="lines-table">
<thead><tr><th>from</th><th>to</th><th>flags</th><th>count</th><th>flagged observations</th><th>both ways</th><th>geodesic {{.Unit.Label}}</th><th>grid {{.Unit.Label}}</th><th>mean residual mm</th><th>without the flagged mm</th><th>ppm</th><th>σ mm</th><th>max |w|</th><th>spread mm</th><th>k</th></tr></thead>
<tbody>
{{- range .Lines}}
<tr{{if .Flagged}} class="flagged"{{end}}><td class="id">{{.From}}</td><td class="id">{{.To}}</td><td class="flags">{{flags .Flags}}</td><td class="num">{{.Count}}</td><td class="text">{{flaggedObs .}}</td><td>{{yesno .Reciprocal}}</td><td class="num">{{$.Len .Geodesic}}</td><td class="num">{{$.Len .Grid}}</td><td class="num">{{mm .ResidualMM}}</td><td class="num">{{unflaggedMM .}}</td><td class="num">{{ppm .ResidualPPM}}</td><td class="num">{{mm .SigmaMM}}</td><td class="num">{{w .MaxAbsW}}</td><td class="num">{{mm .SpreadMM}}</td><td class="num">{{k .K}}</td></tr>
{{- end}}
</tbody>
</table>
</div>
<p class="note">A line is listed once whichever way it was observed. Mean residual: the mean reduced ellipsoid distance − the geodesic from control, over all its observations; without the flagged: over those not flagged (– where all are).</p>
{{- end}}
{{- if not .Counts.Lines}}
<p id="no-flagged-lines">No line was reduced, so none could be checked.</p>
{{- else if not .Counts.FlaggedLines}}
<p id="no-flagged-lines">No flagged lines: every line is within the tolerance and the critical value.</p>
{{- end}}
{{- if .LinesNotListed}}
<p id="lines-not-listed">{{.LinesNotListed}} of the {{.Counts.Lines}} lines are not listed here nor plotted (in a large job, the lines within tolerance and all but the worst flagged ones): lines.csv has every line.</p>
{{- end}}
</section>

<section id="plot">
<h2>Residuals against distance</h2>
{{- if .Plot}}
<figure>
{{.Plot}}
<figcaption id="plot-caption">Residual of each line's mean reduced ellipsoid distance against the geodesic from control, in mm, plotted at the line's geodesic distance in {{.Unit.Label}}. Error bars are ±{{.PlotBars}}σ of the line's mean; flagged lines are red triangles labelled from–to{{if .PlotUnlabelled}} (the {{.PlotMaxLabels}} worst by |w|; {{.PlotUnlabelled}} more are not labelled){{end}}{{if .PlotOffScale}}; a flagged line far off the scale of the others is an arrow at the edge, its residual in its label{{end}}{{if .Fit}}; the dashed line is the fit constant + scale · distance{{end}}.</figcaption>
</figure>
{{- else}}
<p>No line has a residual to plot.</p>
{{- end}}
{{- if .PlotSkipped}}
<p class="note bad">{{.PlotSkipped}} lines are left out of the plot: their distance, residual or σ is not a finite number.</p>
{{- end}}
</section>

<section id="statistics">
<h2>Residual statistics</h2>
<div class="wide">
<table class="lines" id="statistics-table">
<thead><tr><th>residuals of the observations</th><th>n</th><th>median mm</th><th>robust σ mm</th><th>mean mm</th><th>RMS mm</th><th>std. dev. mm</th><th>min mm</th><th>max mm</th><th>mean ppm</th><th>max |w|</th></tr></thead>
<tbody>
{{- range .StatRows}}
<tr><th scope="row">{{.Name}}</th>{{with .Stats}}<td class="num">{{.N}}</td><td class="num">{{mm .MedianMM}}</td><td class="num">{{mm .RobustSigmaMM}}</td><td class="num">{{mm .MeanMM}}</td><td class="num">{{mm .RMSMM}}</td><td class="num">{{mm .StdDevMM}}</td><td class="num">{{mm .MinMM}}</td><td class="num">{{mm .MaxMM}}</td><td class="num">{{ppm .MeanPPM}}</td><td class="num">{{w .MaxAbsW}}</td>{{end}}</tr>
{{- end}}
</tbody>
</table>
</div>
<p class="note">Each row is over the reduced observations, one residual each: ellipsoid, the reduced ellipsoid distance − the geodesic from control; grid, the reduced grid distance − the grid distance from control; "without the flagged" leaves out the flagged observations. A blunder swamps the mean, RMS and standard deviation but hardly moves the median and the robust σ: 1.4826 × the median absolute deviation from the median, which estimates σ for normal errors (Hampel 1974; Rousseeuw &amp; Croux 1993). The median and robust σ are read from a histogram of the residuals: within 0.005 mm for residuals under 20 mm, and within 0.05 % of the value beyond.</p>
</section>

<section id="fit">
<h2>Fit of residuals against distance</h2>
<p>A weighted least-squares line through the lines' mean ellipsoid residuals: residual = constant + scale · distance.
Each line weighs as one of its observations (repeated sets share their centring, heights and control); where a line's observations disagree, its flagged ones are left out of its mean.
A significant constant suggests a wrong prism constant or additive constant; a significant scale, a wrong ppm or atmosphere setting. A diagnosis needs at least {{.FitMinLines}} lines, the longest at least {{.FitMinRatio}} times the shortest, and no line deciding the fit alone (leverage at most {{.FitMaxLeverage}}).</p>
{{- with .Fit}}
{{- if not .Enough}}
<p class="note bad" id="fit-evidence"><strong>Not enough evidence for a diagnosis:</strong> {{.EvidenceReason}}. The estimates are shown for information only and are not a diagnosis; neither term is tested.</p>
{{- end}}
<table class="lines" id="fit-table">
<thead><tr><th>term</th><th>estimate</th><th>σ</th><th>significant</th></tr></thead>
<tbody>
<tr><th scope="row">constant</th><td class="num">{{mm .ConstantMM}} mm</td><td class="num">{{mm .ConstantSigma}} mm</td><td>{{if .Enough}}{{yesno .ConstantSignificant}}{{else}}not tested{{end}}</td></tr>
<tr><th scope="row">scale</th><td class="num">{{ppm .ScalePPM}} ppm</td><td class="num">{{ppm .ScaleSigma}} ppm</td><td>{{if .Enough}}{{yesno .ScaleSignificant}}{{else}}not tested{{end}}</td></tr>
</tbody>
</table>
<p>Variance factor s₀² = {{f .VarianceFactor 2}} from {{.N}} lines, {{$.Len0 .ShortestM}} {{$.Unit.Label}} to {{$.Len0 .LongestM}} {{$.Unit.Label}}; largest leverage {{f .MaxLeverage 2}}.{{with .LeftOut}} Left out of the fit: {{.}}.{{end}}</p>
{{- end}}
{{- range .FitReading}}
<p>{{.}}</p>
{{- else}}
<p>No fit in this run.</p>
{{- end}}
</section>

<section id="warnings">
<h2>Warnings</h2>
{{- if .Warnings}}
<ul>
{{- range .Warnings}}
<li>{{.}}</li>
{{- end}}
</ul>
{{- else}}
<p>No warnings.</p>
{{- end}}
</section>

<section id="job">
<h2>Job settings, software and inputs</h2>
<table class="kv">
<tr><th>Coordinate reference system</th><td>{{.Settings.CRSName}}{{with .Settings.CRS}} ({{.}}){{end}}</td></tr>
<tr><th>Datum</th><td>{{.Settings.Datum}}</td></tr>
<tr><th>Ellipsoid</th><td>{{.Settings.Ellipsoid}}</td></tr>
<tr><th>Distances reduced to</th><td>{{.Settings.ReductionDatum}}</td></tr>
<tr><th>Geoid</th><td>{{.Settings.Geoid}}</td></tr>
<tr><th>Units of the input</th><td>lengths {{.Settings.LengthUnit}}, angles {{.Settings.AngleUnit}}{{with .Settings.GridUnit}}, easting and northing {{.}}{{end}}</td></tr>
<tr><th>Coefficient of refraction k</th><td>{{f .Settings.RefractionK 3}}</td></tr>
<tr><th>Tolerance</th><td>{{.Settings.Tolerance}}</td></tr>
<tr><th>Critical value of |w|</th><td>{{f .Settings.CriticalValue 2}}</td></tr>
<tr><th>Default atmosphere</th><td>{{.Settings.DefaultAtmos}}</td></tr>
<tr><th>Strict (a rejected row stops the run)</th><td>{{yesno .Settings.Strict}}</td></tr>
<tr><th>Software</th><td>{{with .Tool}}{{.}}{{else}}geored{{end}} {{.Version}}, PROJ {{.ProjVersion}}</td></tr>
<tr><th>Input hash (SHA-256 of the inputs and settings)</th><td class="hash">{{.InputHash}}</td></tr>
</table>

<h3>Instruments</h3>
{{- if .Settings.Instruments}}
<div class="wide">
<table class="lines" id="instruments">
<thead><tr><th>name</th><th>carrier wavelength µm</th><th>reference refractivity</th><th>additive constant mm</th><th>scale ppm</th><th>prism constant mm</th><th>ppm applied in the field</th><th>prism constant applied in the field mm</th><th>a row's prism constant read as</th><th>curvature and refraction applied in the field to horizontal and vertical distances</th><th>specification</th></tr></thead>
<tbody>
{{- range .Settings.Instruments}}
<tr><td class="id">{{.Name}}</td><td class="num">{{f .WavelengthUM 4}}</td><td class="num">{{f .ReferenceRefractivity 2}}</td><td class="num">{{mm .AdditiveConstantMM}}</td><td class="num">{{ppm .ScalePPM}}</td><td class="num">{{mm .PrismConstantMM}}</td><td class="num">{{ppm .AppliedPPM}}</td><td class="num">{{mm .AppliedPrismMM}}</td><td>{{.RowPrismConstant}}</td><td>{{.FieldCurvatureText}}</td><td>{{.Spec}}</td></tr>
{{- end}}
</tbody>
</table>
</div>
{{- else}}
<p>No instrument profiles in this job.</p>
{{- end}}

<h3>Input files</h3>
{{- if .Inputs}}
<table class="lines" id="inputs">
<thead><tr><th>role</th><th>path</th><th>rows</th><th>SHA-256</th></tr></thead>
<tbody>
{{- range .Inputs}}
<tr><td>{{.Role}}</td><td class="text">{{place .Path}}</td><td class="num">{{.Rows}}</td><td class="hash">{{.SHA256}}</td></tr>
{{- end}}
</tbody>
</table>
{{- else}}
<p>No input files recorded.</p>
{{- end}}
</section>

<footer>
<p class="caution" role="note"><strong>Caution.</strong> {{.Caution}}</p>
</footer>
</body>
</html>
`

// page is parsed once; html/template escapes every value by its context.
var page = template.Must(template.New("report.html").Funcs(template.FuncMap{
	"mm":           func(x float64) string { return fixed(x, 1) },
	"ppm":          func(x float64) string { return fixed(x, 2) },
	"w":            func(x float64) string { return fixed(x, 2) },
	"f":            fixed,
	"f1":           func(x float64) string { return fixed(x, 1) },
	"f3":           func(x float64) string { return fixed(x, 3) },
	"alpha":        func(x float64) string { return strconv.FormatFloat(x, 'g', 3, 64) },
	"k":            refraction,
	"flags":        func(fs []string) string { return strings.Join(fs, ", ") },
	"inc":          func(i int) int { return i + 1 },
	"abs":          math.Abs,
	"rejectReason": rejectReason,
	"flaggedObs":   flaggedObs,
	"place":        place,
	"unflaggedMM":  unflaggedMM,
	"yesno": func(b bool) string {
		if b {
			return "yes"
		}
		return "no"
	},
}).Parse(reportTemplate))

// htmlView is what the template reads: the summary and what is derived
// from it for the page.
type htmlView struct {
	*Summary
	// Caution is the summary's caution, or the package's Caution when the
	// summary carries none: the page never goes out without it.
	Caution string
	// Unit names the job's length unit, in which the page gives every
	// distance; length is the unit itself (Len, Len0).
	Unit   unitNames
	length reportLength
	// StatRows are the rows of the statistics table.
	StatRows []statRow
	// CountsAddUp says Read = Reduced + Rejected.
	CountsAddUp bool
	// Plot is the residual plot as an inline <svg> element; empty when no
	// line has finite values to plot. PlotSkipped counts lines left out
	// of it for a non-finite distance, residual or σ.
	Plot        template.HTML
	PlotSkipped int
	PlotBars    int
	// PlotOffScale counts flagged lines drawn as arrows at the plot's
	// edge, too far off the scale of the others to draw to it.
	PlotOffScale int
	// PlotUnlabelled counts flagged lines drawn without a label, beyond
	// the PlotMaxLabels worst.
	PlotUnlabelled, PlotMaxLabels int
	// FitReading says in plain words what the fit's terms suggest.
	FitReading []string
	// FitMinLines, FitMinRatio and FitMaxLeverage are what a diagnosis
	// needs (MinFitLines, MinFitLengthRatio, MaxFitLeverage).
	FitMinLines                 int
	FitMinRatio, FitMaxLeverage string
	// FlagMeanings explain each flag that appears on the page.
	FlagMeanings []flagMeaning
}

// unitNames are the job's length unit as the page names it.
type unitNames struct{ Label, Words string }

// statRow is a row of the statistics table: what it is over, and its
// statistics.
type statRow struct {
	Name  string
	Stats Stats
}

// Len writes m metres in the job's length unit to 4 decimals (0.1 mm
// in metres, 0.0001 ft), Len0 to none.
func (v htmlView) Len(m float64) string  { return v.length.format(m, 4) }
func (v htmlView) Len0(m float64) string { return v.length.format(m, 0) }

// HeightSays is what the zenith-angle height check says of a flagged
// observation, in words: not checked (the zenith route), or the booked
// target height against the one its zenith angle implies, with its σ
// and w, agreeing or not.
func (v htmlView) HeightSays(o FlaggedObservation) string {
	implied := "the one the zenith angle implies"
	if o.Horizontal {
		implied = "the one the horizontal and vertical distances imply"
	}
	if !o.HeightChecked {
		if o.Horizontal {
			return "not checked: the vertical distance gave the target's height (horizontal route)"
		}
		return "not checked: the zenith angle gave the target's height (zenith route)"
	}
	verdict := "agrees"
	if slices.Contains(o.Flags, FlagHeight) {
		verdict = "disagrees"
	}
	side := "above"
	if o.HeightDifference < 0 {
		side = "below"
	}
	return fmt.Sprintf("%s: the booked target height is %s %s %s %s (σ %s %s, w %s)",
		verdict, v.length.format(math.Abs(o.HeightDifference), 3), v.length.label, side, implied,
		v.length.format(o.HeightSigma, 3), v.length.label, fixed(o.HeightW, 2))
}

// rejectReason is a rejected row's reason without the file:line it
// starts with (the table gives it), a column number after it in words.
func rejectReason(r Reject) string {
	rest, ok := strings.CutPrefix(r.Reason, r.File+":"+strconv.Itoa(r.Line)+":")
	if !ok {
		return r.Reason
	}
	rest = strings.TrimSpace(rest)
	if col, tail, ok := strings.Cut(rest, ": "); ok && col != "" && strings.Trim(col, "0123456789") == "" {
		return "column " + col + ": " + tail
	}
	return rest
}

// flaggedObs says which observations of a line were flagged: their
// places, worst first, and how many more reduced.csv has; the places
// may break after each slash (place).
func flaggedObs(l Line) template.HTML {
	if l.FlaggedObservations == 0 {
		return "none"
	}
	if len(l.FlaggedAt) == 0 {
		return template.HTML(strconv.Itoa(l.FlaggedObservations) + " (reduced.csv)")
	}
	parts := make([]string, len(l.FlaggedAt))
	for i, at := range l.FlaggedAt {
		parts[i] = string(place(at))
	}
	s := strings.Join(parts, ", ")
	if more := l.FlaggedObservations - len(l.FlaggedAt); more > 0 {
		s += "; " + strconv.Itoa(more) + " more in reduced.csv"
	}
	return template.HTML(s)
}

// place is a file path or file:line, escaped, with a line break allowed
// after each slash: a long path wraps at its folders, not inside a name,
// and the table it is in stays within the window.
func place(p string) template.HTML {
	return template.HTML(strings.ReplaceAll(template.HTMLEscapeString(p), "/", "/<wbr>"))
}

// unflaggedMM is the residual of a line's mean without its flagged
// observations, or "–" where all are flagged.
func unflaggedMM(l Line) string {
	if l.FlaggedObservations >= l.Count {
		return "–"
	}
	return fixed(l.UnflaggedResidualMM, 1)
}

// flagMeaning is a line flag and what it means.
type flagMeaning struct{ Flag, Meaning string }

// flagMeanings explain the flags Line.Flags may carry.
var flagMeanings = []flagMeaning{
	{"outlier", "a standardized residual |w| is over the critical value"},
	{"tolerance", "the residual is over the job's tolerance"},
	{"spread", "the observations of the line disagree with each other"},
	{"height", "a zenith angle puts the target higher or lower than its booked height by more than its σ allows: a target height or a target booked wrong"},
}

// WriteHTML writes s as report.html: one self-contained page (inline CSS
// and SVG, no scripts, fonts or other files to fetch) that puts the lines
// needing attention first. Every value from the summary, point ids
// included, is escaped. The same summary gives the same bytes.
func WriteHTML(w io.Writer, s *Summary) error {
	if s == nil {
		return fmt.Errorf("report.html: no summary to write")
	}
	if lu := s.Settings.LengthUnit; lu != "" {
		if _, err := units.ParseLengthUnit(lu); err != nil {
			return fmt.Errorf("report.html: %w", err)
		}
	}
	length := lengthOf(s)
	r := &s.Residuals
	v := htmlView{
		Unit:   unitNames{Label: length.label, Words: length.words},
		length: length,
		StatRows: []statRow{
			{"ellipsoid, every observation", r.Ellipsoid},
			{"ellipsoid, without the flagged", r.EllipsoidUnflagged},
			{"grid, every observation", r.Grid},
			{"grid, without the flagged", r.GridUnflagged},
		},
		Summary:     s,
		Caution:     s.Caution,
		CountsAddUp: s.Counts.Read == s.Counts.Reduced+s.Counts.Rejected,
		PlotBars:    plotBars,
		FitReading:  fitReading(s),
		FitMinLines: MinFitLines, FitMinRatio: fixed(MinFitLengthRatio, 0), FitMaxLeverage: fixed(MaxFitLeverage, 1),
	}
	if v.Caution == "" {
		v.Caution = Caution
	}
	seen := map[string]bool{}
	for _, l := range s.Lines {
		for _, f := range l.Flags {
			seen[f] = true
		}
	}
	for _, o := range s.FlaggedObservations {
		for _, f := range o.Flags {
			seen[f] = true
		}
	}
	for _, fm := range flagMeanings {
		if seen[fm.Flag] {
			v.FlagMeanings = append(v.FlagMeanings, fm)
		}
	}
	svg, err := residualPlot(s)
	if err != nil {
		return fmt.Errorf("report.html: %w", err)
	}
	// The SVG comes from residualPlot, which draws numbers and point ids
	// that the SVG writer has escaped itself.
	v.Plot = template.HTML(svg)
	lay := layoutPlot(s)
	v.PlotSkipped, v.PlotOffScale, v.PlotUnlabelled, v.PlotMaxLabels = lay.Skipped, lay.OffScale.Len(), lay.Unlabelled, plotMaxLabels

	var buf bytes.Buffer
	if err := page.Execute(&buf, v); err != nil {
		return fmt.Errorf("report.html: %w", err)
	}
	_, err = buf.WriteTo(w)
	return err
}

// fitReading says in plain words what the fit of residuals against
// distance suggests, term by term.
func fitReading(s *Summary) []string {
	f := s.Fit
	if f == nil {
		return nil
	}
	if !f.Enough() {
		return []string{"No diagnosis: on this evidence a wrong prism or additive constant or a wrong ppm is neither shown nor ruled out. Observe more lines, over a wider spread of lengths, to tell."}
	}
	crit := fixed(f.Critical, 2) + " (Student's t with " + strconv.Itoa(f.N-2) + " degrees of freedom at the α of the job's critical value " +
		fixed(s.Settings.CriticalValue, 2) + ")"
	var r []string
	if f.ConstantSignificant {
		r = append(r, "The constant term differs from zero at the critical value "+crit+
			": this suggests a wrong prism constant or instrument additive constant. Check the constants entered and those the instrument applied in the field.")
	} else {
		r = append(r, "The constant term does not differ from zero at the critical value "+crit+": no sign of a wrong prism or additive constant.")
	}
	if f.ScaleSignificant {
		r = append(r, "The scale term differs from zero at the critical value "+crit+
			": this suggests a wrong ppm setting or atmosphere (temperature, pressure) in the field or in the job, or an instrument scale error.")
	} else {
		r = append(r, "The scale term does not differ from zero at the critical value "+crit+": no sign of a wrong ppm or atmosphere setting.")
	}
	return r
}

// refraction formats a coefficient of refraction to three decimals, or "–"
// where the line has none.
func refraction(k *float64) string {
	if k == nil {
		return "–"
	}
	return fixed(*k, 3)
}

// fixed formats x with the given number of decimals, without a sign on a
// value that rounds to zero ("0.0", never "-0.0"). NaN and infinities,
// which a summary should not hold, print as "NaN", "+Inf" and "-Inf" so
// that they stand out.
func fixed(x float64, decimals int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	s := strconv.FormatFloat(x, 'f', decimals, 64)
	if strings.HasPrefix(s, "-") && strings.Trim(s, "-0.") == "" {
		return s[1:]
	}
	return s
}
