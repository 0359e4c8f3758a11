package reduce

import "testing"

// Unreduce exposes the backwards chain of reduction_test.go to the external
// round-trip test.
func Unreduce(t testing.TB, s3 float64, obs Observation, job Job, radius float64) float64 {
	return unreduce(t, s3, obs, job, radius)
}

// DemoJob exposes the test job of reduction_test.go.
func DemoJob(t testing.TB) Job { return demoJob(t) }

// NewRand exposes the seeded generator of helpers_test.go.
var NewRand = newRand
