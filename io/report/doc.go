// Package report writes a reduce run's outputs: reduced.csv, lines.csv,
// rejects.csv, summary.json and report.html, each to a temporary name in
// the output folder and renamed into place when complete, so a killed run
// never leaves a half file that looks complete.
package report
