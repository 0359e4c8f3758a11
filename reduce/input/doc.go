// Package input holds the values a job's run takes in, with no I/O: the
// settings of its instrument profiles (Settings, Profile, the rules for a
// row's prism constants) and the records the readers make of the input
// files (Observation, Weather, Point, Warning).
//
// It sits under reduce/job, which runs on these values, and under the
// readers that make them (io/obsfile, io/jobconfig, io/landxml), so that
// the pipeline imports nothing of io/: layers import downward only.
package input
