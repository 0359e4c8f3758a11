package main

import "html/template"

// nightlyHTML is the run's summary.html: every inbox file by name and
// hash with its outcome, the flagged lines, the alerts of the nights the run
// computed and their plots, and its notes.
var nightlyHTML = template.Must(template.New("nightly").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>geored nightly {{.Job}} {{.Night}}</title>
<style>body{font-family:sans-serif;margin:2em}figure{margin:1em 0;max-width:50em}table{border-collapse:collapse}td,th{border:1px solid #999;padding:.2em .5em;text-align:left}code{font-size:90%}</style>
</head><body>
<h1>Nightly run of {{.Job}}, night {{.Night}}</h1>
<p>Exit status <b>{{.ExitStatus}}</b>. Started {{.Started}}; geored {{.Version}}; history {{.History}}.</p>
<h2>Files</h2>
{{if .Files}}<table><tr><th>file</th><th>SHA-256</th><th>outcome</th><th>reduce status</th><th>read</th><th>reduced</th><th>why / flagged lines</th><th>results</th></tr>
{{range .Files}}<tr><td>{{.Name}}<br><code>{{.Path}}</code></td><td><code>{{.SHA256}}</code></td><td>{{.Outcome}}</td><td>{{.Exit}}</td><td>{{.Read}}</td><td>{{.Reduced}}</td><td>{{.Reason}}{{range .Flagged}}<br>{{.}}{{end}}</td><td><code>{{.Results}}</code></td></tr>
{{end}}</table>{{else}}<p>Nothing new in the inbox.</p>{{end}}
<h2>Alerts</h2>
{{if .Alerts}}<ul>{{range .Alerts}}<li><b>{{.Kind}}</b> {{.Subject}}: {{.Message}}</li>{{end}}</ul>{{else}}<p>None.</p>{{end}}
{{range .Plots}}<figure>{{.SVG}}<figcaption>{{.Title}}</figcaption></figure>
{{end}}
{{if .Notes}}<h2>Notes</h2>
<ul>{{range .Notes}}<li>{{.}}</li>{{end}}</ul>{{end}}
<p><i>{{.Caution}}</i></p>
</body></html>
`))
