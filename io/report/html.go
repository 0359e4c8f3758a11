package report

import (
	"bytes"
	"fmt"
	"html/template"
	"io"
	"math"
	"strconv"
	"strings"
)

// reportTemplate is the page report.html: the job, a verdict, the flagged
// lines, the residual plot, the statistics, the fit against distance,
// every line, the warnings, and the caution at top and bottom.
// Numbers are fixed decimals: 0.1 mm, 0.01 ppm, 0.1 mm in metres
// (4 decimals), 0.01 for |w|, 0.001 for k.
const reportTemplate = `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Distance reduction report: {{.Settings.CRSName}}</title>
<style>
:root { color-scheme: light; }
body { font-family: "Liberation Sans", Arial, Helvetica, sans-serif; font-size: 15px; line-height: 1.4;
       color: #111; background: #fff; margin: 1.5rem auto; max-width: 72rem; padding: 0 1rem; }
h1 { font-size: 1.6rem; margin: 0 0 .5rem; }
h2 { font-size: 1.25rem; margin: 2rem 0 .5rem; border-bottom: 1px solid #999; padding-bottom: .15rem; }
h3 { font-size: 1.05rem; margin: 1.2rem 0 .4rem; }
p { margin: .4rem 0; }
.caution { border: 2px solid #8a5a00; background: #fff6e0; padding: .5rem .75rem; margin: .75rem 0; }
.verdict { font-size: 1.1rem; padding: .5rem .75rem; border-left: 6px solid #1f4e79; background: #eef3f8; }
.verdict.status-1, .verdict.status-2 { border-left-color: #b00020; background: #fcebee; }
.verdict .status { font-weight: bold; }
.bad { color: #b00020; font-weight: bold; }
table { border-collapse: collapse; margin: .4rem 0; font-variant-numeric: tabular-nums; }
th, td { border: 1px solid #bbb; padding: .2rem .45rem; vertical-align: top; }
thead th { background: #e8e8e8; text-align: center; }
td.num { text-align: right; white-space: nowrap; }
td.id { white-space: nowrap; }
.wide { overflow-x: auto; }
td.hash { font-family: "Liberation Mono", "DejaVu Sans Mono", monospace; font-size: .85em; overflow-wrap: anywhere; }
table.kv th { text-align: left; background: #f2f2f2; font-weight: normal; width: 16rem; }
table.lines { font-size: .88rem; }
table.lines th, table.lines td { padding: .15rem .35rem; }
#flagged-lines tbody tr, #all-lines tr.flagged { background: #fcebee; }
#all-lines tr.flagged td:first-child { border-left: 4px solid #b00020; }
.flags { color: #b00020; font-weight: bold; }
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
  #flagged-lines tbody tr, #all-lines tr.flagged { background: none; }
  thead { display: table-header-group; }
  .wide { overflow: visible; }
}
</style>
</head>
<body>
<header>
<h1>Distance reduction report</h1>
<p>{{.Settings.CRSName}}{{with .Settings.CRS}} ({{.}}){{end}} · job {{.InputHash}}</p>
<p class="caution" role="note"><strong>Caution.</strong> {{.Caution}}</p>
</header>

<section id="job">
<h2>Job</h2>
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
<table class="lines" id="instruments">
<thead><tr><th>name</th><th>carrier wavelength µm</th><th>reference refractivity</th><th>additive constant mm</th><th>scale ppm</th><th>prism constant mm</th><th>ppm applied in the field</th><th>prism constant applied in the field mm</th><th>a row's prism constant read as</th><th>specification</th></tr></thead>
<tbody>
{{- range .Settings.Instruments}}
<tr><td class="id">{{.Name}}</td><td class="num">{{f .WavelengthUM 4}}</td><td class="num">{{f .ReferenceRefractivity 2}}</td><td class="num">{{mm .AdditiveConstantMM}}</td><td class="num">{{ppm .ScalePPM}}</td><td class="num">{{mm .PrismConstantMM}}</td><td class="num">{{ppm .AppliedPPM}}</td><td class="num">{{mm .AppliedPrismMM}}</td><td>{{.RowPrismConstant}}</td><td>{{.Spec}}</td></tr>
{{- end}}
</tbody>
</table>
{{- else}}
<p>No instrument profiles in this job.</p>
{{- end}}

<h3>Input files</h3>
{{- if .Inputs}}
<table class="lines" id="inputs">
<thead><tr><th>role</th><th>path</th><th>rows</th><th>SHA-256</th></tr></thead>
<tbody>
{{- range .Inputs}}
<tr><td>{{.Role}}</td><td class="id">{{.Path}}</td><td class="num">{{.Rows}}</td><td class="hash">{{.SHA256}}</td></tr>
{{- end}}
</tbody>
</table>
{{- else}}
<p>No input files recorded.</p>
{{- end}}
</section>

<section id="verdict">
<h2>Verdict</h2>
<p class="verdict status-{{.ExitStatus}}">
{{.Counts.Read}} observations read: {{.Counts.Reduced}} reduced, {{.Counts.Rejected}} rejected.
{{- if not .CountsAddUp}} <span class="bad">These counts do not add up: read should equal reduced + rejected.</span>{{end}}
{{.Counts.Flagged}} reduced observations flagged, on {{.Counts.FlaggedLines}} of {{.Counts.Lines}} lines.
<span class="status">Exit status {{.ExitStatus}}: {{.Verdict}}.</span>
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
{{- if .FirstRejects}}
<h3>Rejected rows</h3>
<ul class="rejects" id="first-rejects">
{{- range .FirstRejects}}
<li>{{.Reason}}</li>
{{- end}}
</ul>
{{- if gt .Counts.Rejected (len .FirstRejects)}}<p class="note">The first {{len .FirstRejects}} of {{.Counts.Rejected}}: rejects.csv has them all.</p>{{end}}
{{- end}}
</section>

<section id="flagged">
<h2>Flagged lines</h2>
{{- if .Flagged}}
<table class="lines" id="flagged-lines">
<thead><tr><th>from</th><th>to</th><th>count</th><th>geodesic m</th><th>mean residual mm</th><th>ppm</th><th>σ mm</th><th>max |w|</th><th>spread mm</th><th>k</th><th>flags</th></tr></thead>
<tbody>
{{- range .Flagged}}
<tr><td class="id">{{.From}}</td><td class="id">{{.To}}</td><td class="num">{{.Count}}</td><td class="num">{{m .Geodesic}}</td><td class="num">{{mm .ResidualMM}}</td><td class="num">{{ppm .ResidualPPM}}</td><td class="num">{{mm .SigmaMM}}</td><td class="num">{{w .MaxAbsW}}</td><td class="num">{{mm .SpreadMM}}</td><td class="num">{{k .K}}</td><td class="flags">{{flags .Flags}}</td></tr>
{{- end}}
</tbody>
</table>
{{- range .FlagMeanings}}
<p class="note"><strong>{{.Flag}}</strong>: {{.Meaning}}.</p>
{{- end}}
{{- else if .Counts.Lines}}
<p id="no-flagged-lines">No flagged lines: every line is within the tolerance and the critical value.</p>
{{- else}}
<p id="no-flagged-lines">No line was reduced, so none could be checked.</p>
{{- end}}
</section>

<section id="plot">
<h2>Residuals against distance</h2>
{{- if .Plot}}
<figure>
{{.Plot}}
<figcaption id="plot-caption">Residual of each line's mean reduced ellipsoid distance against the geodesic from control, in mm, plotted at the line's geodesic distance in m. Error bars are ±{{.PlotBars}}σ of the line's mean; flagged lines are red triangles labelled from–to{{if .PlotUnlabelled}} (the {{.PlotMaxLabels}} worst by |w|; {{.PlotUnlabelled}} more are not labelled){{end}}{{if .PlotOffScale}}; a flagged line far off the scale of the others is an arrow at the edge, its residual in its label{{end}}{{if .Fit}}; the dashed line is the fit constant + scale · distance{{end}}.</figcaption>
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
<table class="lines" id="statistics-table">
<thead><tr><th>residuals</th><th>n</th><th>mean mm</th><th>median mm</th><th>RMS mm</th><th>std. dev. mm</th><th>min mm</th><th>max mm</th><th>mean ppm</th><th>max |w|</th></tr></thead>
<tbody>
{{- with .Residuals.Ellipsoid}}
<tr><th scope="row">ellipsoid: reduced arc − geodesic from control</th><td class="num">{{.N}}</td><td class="num">{{mm .MeanMM}}</td><td class="num">{{mm .MedianMM}}</td><td class="num">{{mm .RMSMM}}</td><td class="num">{{mm .StdDevMM}}</td><td class="num">{{mm .MinMM}}</td><td class="num">{{mm .MaxMM}}</td><td class="num">{{ppm .MeanPPM}}</td><td class="num">{{w .MaxAbsW}}</td></tr>
{{- end}}
{{- with .Residuals.Grid}}
<tr><th scope="row">grid: reduced grid distance − grid distance from control</th><td class="num">{{.N}}</td><td class="num">{{mm .MeanMM}}</td><td class="num">{{mm .MedianMM}}</td><td class="num">{{mm .RMSMM}}</td><td class="num">{{mm .StdDevMM}}</td><td class="num">{{mm .MinMM}}</td><td class="num">{{mm .MaxMM}}</td><td class="num">{{ppm .MeanPPM}}</td><td class="num">{{w .MaxAbsW}}</td></tr>
{{- end}}
</tbody>
</table>
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
<p>Variance factor s₀² = {{f .VarianceFactor 2}} from {{.N}} lines, {{m0 .ShortestM}} m to {{m0 .LongestM}} m; largest leverage {{f .MaxLeverage 2}}.{{with .LeftOut}} Left out of the fit: {{.}}.{{end}}</p>
{{- end}}
{{- range .FitReading}}
<p>{{.}}</p>
{{- else}}
<p>No fit in this run.</p>
{{- end}}
</section>

<section id="lines">
<h2>All lines</h2>
{{- if .Lines}}
<div class="wide">
<table class="lines" id="all-lines">
<thead><tr><th>from</th><th>to</th><th>count</th><th>both ways</th><th>geodesic m</th><th>grid m</th><th>mean arc m</th><th>mean residual mm</th><th>ppm</th><th>σ mm</th><th>max |w|</th><th>spread mm</th><th>std. dev. mm</th><th>k</th><th>flags</th></tr></thead>
<tbody>
{{- range .Lines}}
<tr{{if .Flagged}} class="flagged"{{end}}><td class="id">{{.From}}</td><td class="id">{{.To}}</td><td class="num">{{.Count}}</td><td>{{yesno .Reciprocal}}</td><td class="num">{{m .Geodesic}}</td><td class="num">{{m .Grid}}</td><td class="num">{{m .MeanArc}}</td><td class="num">{{mm .ResidualMM}}</td><td class="num">{{ppm .ResidualPPM}}</td><td class="num">{{mm .SigmaMM}}</td><td class="num">{{w .MaxAbsW}}</td><td class="num">{{mm .SpreadMM}}</td><td class="num">{{mm .StdDevMM}}</td><td class="num">{{k .K}}</td><td class="flags">{{flags .Flags}}</td></tr>
{{- end}}
</tbody>
</table>
</div>
{{- if .LinesNotListed}}
<p id="lines-not-listed">{{.LinesNotListed}} of the {{.Counts.Lines}} lines are not listed here nor plotted (in a large job, the lines within tolerance and all but the worst flagged ones): lines.csv has every line.</p>
{{- end}}
{{- else}}
<p>No lines were reduced.</p>
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

<footer>
<p class="caution" role="note"><strong>Caution.</strong> {{.Caution}}</p>
</footer>
</body>
</html>
`

// page is parsed once; html/template escapes every value by its context.
var page = template.Must(template.New("report.html").Funcs(template.FuncMap{
	"m":     func(x float64) string { return fixed(x, 4) },
	"mm":    func(x float64) string { return fixed(x, 1) },
	"ppm":   func(x float64) string { return fixed(x, 2) },
	"w":     func(x float64) string { return fixed(x, 2) },
	"f":     fixed,
	"f1":    func(x float64) string { return fixed(x, 1) },
	"f3":    func(x float64) string { return fixed(x, 3) },
	"alpha": func(x float64) string { return strconv.FormatFloat(x, 'g', 3, 64) },
	"m0":    func(x float64) string { return fixed(x, 0) },
	"k":     refraction,
	"flags": func(fs []string) string { return strings.Join(fs, ", ") },
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
	// Flagged are the lines that carry a flag, in the summary's order.
	Flagged []Line
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
	v := htmlView{
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
		if l.Flagged() {
			v.Flagged = append(v.Flagged, l)
		}
		for _, f := range l.Flags {
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
