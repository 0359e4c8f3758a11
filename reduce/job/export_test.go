package job

// ReduceOne is reduceOne, for the fuzz target that takes one row through
// the whole chain (fuzz_test.go, package job_test, which formats the
// rows with io/report).
var ReduceOne = reduceOne
