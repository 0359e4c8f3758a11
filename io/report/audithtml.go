package report

import (
	"html"
	"html/template"
	"io"
	"slices"
	"strconv"
	"strings"
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
		PassFail, LoopRows template.HTML
		Raw                []AuditRow
		Plot               template.HTML
		Caution            string
	}{s, passFailRows(rows), loopRows(s.Loops), raw, template.HTML(svg), caution})
}

// passFailRows is the pass/fail table's rows, written directly rather
// than through the template: a network of thousands of lines spends most
// of the report's time in the template's calls, once per cell.
func passFailRows(rows []AuditRow) template.HTML {
	var b strings.Builder
	for i := range rows {
		r := &rows[i]
		v := "pass"
		if r.Failed() {
			v = "fail"
		}
		cause := r.Cause
		if r.CrossPass == "fail" {
			cause += " (disagrees with the vector by " + cell(r.CrossDiff*1e3, 1) + " mm)"
		}
		if r.RawPass == "fail" {
			cause += " (differs from our reduction of the raw observations by " + cell(r.RawDiff*1e3, 1) + " mm)"
		}
		b.WriteString(`<tr class="` + v + `"><td>` + v + `</td>`)
		for _, t := range []string{r.From, r.To, r.What, r.ID} {
			htmlCell(&b, t)
		}
		for _, n := range []string{cell(r.Delivered, 4), cell(r.Reference, 4), cell(r.Residual*1e3, 1), cell(r.PPM, 2),
			cell(r.Sigma*1e3, 1), cell(r.Tolerance*1e3, 1), cell(r.Margin*1e3, 1)} {
			b.WriteString(`<td class="n">` + n + `</td>`)
		}
		for _, t := range []string{r.Stage, cause, r.File + ":" + strconv.Itoa(r.Line)} {
			htmlCell(&b, t)
		}
		b.WriteString("</tr>\n")
	}
	return template.HTML(b.String())
}

// loopRows is the loops table's rows, as passFailRows.
func loopRows(loops []AuditLoop) template.HTML {
	var b strings.Builder
	for i := range loops {
		l := &loops[i]
		v, kind := "pass", "loop"
		if !l.Pass {
			v = "fail"
		}
		if l.Repeat {
			kind = "repeated baseline"
		}
		b.WriteString(`<tr class="` + v + `"><td>` + strconv.Itoa(l.Number) + `</td><td>` + v + `</td><td>` + kind + `</td>`)
		for _, n := range []string{cell(l.MM, 2), cell(l.PPM, 2), cell(l.Tolerance*1e3, 1), cell(l.Length, 4)} {
			b.WriteString(`<td class="n">` + n + `</td>`)
		}
		htmlCell(&b, l.Marks)
		b.WriteString("</tr>\n")
	}
	return template.HTML(b.String())
}

// htmlCell writes a table cell of text, escaped.
func htmlCell(b *strings.Builder, text string) {
	b.WriteString("<td>")
	b.WriteString(html.EscapeString(text))
	b.WriteString("</td>")
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
<p>Tolerance: <strong id="tolerance">{{.Tolerance}}</strong>; critical value {{f2 .Critical}}{{if .JobAlpha}} (Šidák's for α {{.JobAlpha}} over the audit's {{.Tests}} tests){{end}}: above it a cause is looked for, and signatures fit within it; control σ {{mm .ControlSigma}} mm.
CRS {{.CRS}} ({{.CRSName}}), {{.Ellipsoid}}; geoid {{.Geoid}}; lengths in {{.LengthUnit}}.
Read {{.Counts.Read}} rows: {{.Counts.Checked}} checked ({{.Counts.Distances}} distances, {{.Counts.Vectors}} vectors), {{.Counts.Rejected}} rejected; {{.Counts.Passed}} pass, {{.Counts.Failed}} fail.</p>
<p class="caution" role="note"><strong>Caution.</strong> {{.Caution}}</p>

<h2>Pass/fail, line by line</h2>
<table id="pass-fail">
<thead><tr><th>verdict</th><th>from</th><th>to</th><th>what</th><th>id</th><th>delivered</th><th>control</th><th>residual mm</th><th>ppm</th><th>σ mm</th><th>tolerance mm</th><th>margin mm</th><th>stage</th><th>cause</th><th>where</th></tr></thead>
<tbody>
{{.PassFail}}</tbody>
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
{{.LoopRows}}</tbody>
</table>{{end}}

{{if .Rejects}}<h2>Rejected rows</h2>
<ul id="rejects">{{range .Rejects}}<li>{{.Reason}}</li>{{end}}</ul>{{end}}
{{if .Warnings}}<h2>Warnings</h2><ul>{{range .Warnings}}<li>{{.}}</li>{{end}}</ul>{{end}}
<p>{{.Tool}} {{.Version}}, PROJ {{.ProjVersion}}.</p>
<p class="caution" role="note"><strong>Caution.</strong> {{.Caution}}</p>
</body>
</html>
`))
