package report

import (
	"html/template"
	"io"
	"slices"
)

// WriteAuditHTML writes report.html of an audit: the verdict, the
// pass/fail table with the failing values and their named cause first,
// the misclosure plot, the loops, the rejected rows and the caution.
// tolerance gives the tolerance at a length, metres, for the plot.
func WriteAuditHTML(w io.Writer, s *AuditSummary, tolerance func(float64) float64) error {
	svg, err := auditPlot(s, tolerance)
	if err != nil {
		return err
	}
	rows := slices.Clone(s.Rows)
	// Failing values first, the worst margin first; then the rest in
	// file order.
	slices.SortStableFunc(rows, func(a, b AuditRow) int {
		switch {
		case a.Failed() != b.Failed():
			if a.Failed() {
				return -1
			}
			return 1
		case a.Failed() && a.Margin != b.Margin:
			if a.Margin < b.Margin {
				return -1
			}
			return 1
		}
		return 0
	})
	caution := s.Caution
	if caution == "" {
		caution = Caution
	}
	var raw []AuditRow
	for _, r := range rows {
		if r.RawCount > 0 {
			raw = append(raw, r)
		}
	}
	return auditTemplate.Execute(w, struct {
		*AuditSummary
		Sorted  []AuditRow
		Raw     []AuditRow
		Plot    template.HTML
		Caution string
	}{s, rows, raw, template.HTML(svg), caution})
}

var auditTemplate = template.Must(template.New("audit").Funcs(template.FuncMap{
	"mm":  func(x float64) string { return cell(x*1e3, 1) },
	"m":   func(x float64) string { return cell(x, 4) },
	"f2":  func(x float64) string { return cell(x, 2) },
	"inc": func(i int) int { return i + 1 },
}).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>geored audit: {{.Verdict}}</title>
<style>
body { font-family: system-ui, sans-serif; margin: 1.5rem auto; max-width: 72rem; padding: 0 1rem; color: #1a1a1a; }
table { border-collapse: collapse; font-size: 0.9rem; margin: 0.5rem 0 1.5rem; }
th, td { border-bottom: 1px solid #ddd; padding: 0.25rem 0.5rem; text-align: left; vertical-align: top; }
td.n { text-align: right; font-variant-numeric: tabular-nums; }
tr.fail td { background: #fdecec; }
.verdict { font-size: 1.2rem; font-weight: 600; }
.caution { border-left: 4px solid #b58900; padding: 0.5rem 1rem; background: #fdf6e3; }
figure { margin: 0; } figure svg { width: 100%; height: auto; }
</style>
</head>
<body>
<h1>Audit of delivered baselines</h1>
<p class="verdict" id="verdict">Exit status {{.ExitStatus}}: {{.Verdict}}</p>
{{if .Reasons}}<ul id="reasons">{{range .Reasons}}<li>{{.}}</li>{{end}}</ul>{{end}}
<p>Tolerance: <strong id="tolerance">{{.Tolerance}}</strong>; signatures fit within {{f2 .Critical}} σ; control σ {{mm .ControlSigma}} mm.
CRS {{.CRS}} ({{.CRSName}}), {{.Ellipsoid}}; geoid {{.Geoid}}; lengths in {{.LengthUnit}}.
Read {{.Counts.Read}} rows: {{.Counts.Checked}} checked ({{.Counts.Distances}} distances, {{.Counts.Vectors}} vectors), {{.Counts.Rejected}} rejected; {{.Counts.Passed}} pass, {{.Counts.Failed}} fail.</p>
<p class="caution" role="note"><strong>Caution.</strong> {{.Caution}}</p>

<h2>Pass/fail, line by line</h2>
<table id="pass-fail">
<thead><tr><th>verdict</th><th>from</th><th>to</th><th>what</th><th>id</th><th>delivered</th><th>control</th><th>residual mm</th><th>ppm</th><th>σ mm</th><th>tolerance mm</th><th>margin mm</th><th>stage</th><th>cause</th><th>where</th></tr></thead>
<tbody>
{{range .Sorted}}<tr class="{{if .Failed}}fail{{else}}pass{{end}}"><td>{{if .Failed}}fail{{else}}pass{{end}}</td><td>{{.From}}</td><td>{{.To}}</td><td>{{.What}}</td><td>{{.ID}}</td><td class="n">{{m .Delivered}}</td><td class="n">{{m .Reference}}</td><td class="n">{{mm .Residual}}</td><td class="n">{{f2 .PPM}}</td><td class="n">{{mm .Sigma}}</td><td class="n">{{mm .Tolerance}}</td><td class="n">{{mm .Margin}}</td><td>{{.Stage}}</td><td>{{.Cause}}{{if eq .CrossPass "fail"}} (disagrees with the vector by {{mm .CrossDiff}} mm){{end}}{{if eq .RawPass "fail"}} (differs from our reduction of the raw observations by {{mm .RawDiff}} mm){{end}}</td><td>{{.File}}:{{.Line}}</td></tr>
{{end}}</tbody>
</table>
<p>A distance's residual is delivered − control of its own kind; a vector's is the 3-D misclosure of its end laid from the start mark (its east, north and up parts are in audit.csv).</p>

{{if .Raw}}<h2>Delivered beside our reduction of the raw observations</h2>
<p>Each distance whose line the subcontractor's raw observations cover, beside our own reduction of them with the job's settings (the mean of the line's observations, either direction), stage by stage. The difference delivered − ours is matched against the usual errors with our stage values; the stage named is where the fitting error is made.</p>
<table id="raw">
<thead><tr><th>verdict</th><th>from</th><th>to</th><th>what</th><th>observations</th><th>delivered</th><th>ours, this kind</th><th>delivered − ours mm</th><th>tolerance mm</th><th>our slope</th><th>our horizontal</th><th>our ellipsoid</th><th>our sea level</th><th>our grid</th><th>our ppm</th><th>stage</th><th>cause</th><th>where</th></tr></thead>
<tbody>
{{range .Raw}}<tr class="{{if eq .RawPass "pass"}}pass{{else}}fail{{end}}"><td>{{.RawPass}}</td><td>{{.From}}</td><td>{{.To}}</td><td>{{.What}}</td><td class="n">{{.RawCount}}</td><td class="n">{{m .Delivered}}</td><td class="n">{{m .OurValue}}</td><td class="n">{{mm .RawDiff}}</td><td class="n">{{mm .RawTolerance}}</td><td class="n">{{m .OurSlope}}</td><td class="n">{{m .OurHorizontal}}</td><td class="n">{{m .OurEllipsoid}}</td><td class="n">{{m .OurSeaLevel}}</td><td class="n">{{m .OurGrid}}</td><td class="n">{{f2 .OurPPM}}</td><td>{{.RawStage}}</td><td>{{.RawCause}}</td><td>{{.File}}:{{.Line}}</td></tr>
{{end}}</tbody>
</table>{{end}}

{{if .Plot}}<figure id="plot">{{.Plot}}<figcaption id="plot-caption">|misclosure| of each delivered value and loop against its length, with the tolerance.</figcaption></figure>{{end}}

{{if .Loops}}<h2>Loops and repeated baselines</h2>
<table id="loops">
<thead><tr><th>loop</th><th>verdict</th><th>kind</th><th>misclosure mm</th><th>ppm</th><th>tolerance mm</th><th>length m</th><th>marks</th></tr></thead>
<tbody>
{{range .Loops}}<tr class="{{if .Pass}}pass{{else}}fail{{end}}"><td>{{.Number}}</td><td>{{if .Pass}}pass{{else}}fail{{end}}</td><td>{{if .Repeat}}repeated baseline{{else}}loop{{end}}</td><td class="n">{{f2 .MM}}</td><td class="n">{{f2 .PPM}}</td><td class="n">{{mm .Tolerance}}</td><td class="n">{{m .Length}}</td><td>{{.Marks}}</td></tr>
{{end}}</tbody>
</table>{{end}}

{{if .Rejects}}<h2>Rejected rows</h2>
<ul id="rejects">{{range .Rejects}}<li>{{.Reason}}</li>{{end}}</ul>{{end}}
{{if .Warnings}}<h2>Warnings</h2><ul>{{range .Warnings}}<li>{{.}}</li>{{end}}</ul>{{end}}
<p>{{.Tool}} {{.Version}}, PROJ {{.ProjVersion}}.</p>
<p class="caution" role="note"><strong>Caution.</strong> {{.Caution}}</p>
</body>
</html>
`))
