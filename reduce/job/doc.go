// Package job wires the reduction of one job: it resolves the control
// points once (grid ↔ geodetic through the CRS, heights h = H + N from the
// geoid), and computes what depends only on a line once, so that the
// per-observation path only runs the pure chain of package reduce. It is
// what the command uses, and what a library caller (a nightly service, an
// audit) uses in its place.
//
// It reads nothing itself and imports nothing of io/: a run takes its
// settings as values (reduce/input.Settings) and its observations through
// an Opener of ChunkSources, whose chunks the workers parse in parallel;
// the command wires files, LandXML, databases and reports to it.
package job
