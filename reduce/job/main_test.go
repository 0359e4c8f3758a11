package job

import (
	"os"
	"testing"
)

// TestMain poisons every chunk of observations once its rows have
// reached the sink, so that a row's string kept longer shows.
func TestMain(m *testing.M) {
	PoisonRecycledChunks = true
	os.Exit(m.Run())
}
