// Package jobconfig reads a job's settings from a TOML file and from
// command-line flags (flags win), validates them, and turns them into the
// typed values the chain needs. Every length, angle and atmospheric value
// carries its unit in its key name (constant_mm, scale_ppm, pressure_hpa);
// nothing is guessed silently, and an unknown key is an error naming it.
package jobconfig
