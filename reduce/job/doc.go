// Package job wires the reduction of one job: it resolves the control
// points once (grid ↔ geodetic through the CRS, heights h = H + N from the
// geoid), and computes what depends only on a line once, so that the
// per-observation path only runs the pure chain of package reduce. It is
// what the command uses, and what a library caller (a nightly service, an
// audit) uses in its place.
package job
