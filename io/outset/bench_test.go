package outset

import (
	"context"
	"path/filepath"
	"testing"
)

// BenchmarkSetCommit writes one 32 MB file into a set and commits it: the
// writes, the SHA-256 the hasher reads back beside them, the fsyncs and
// the swap. Its MB/s is the cost of a large reduced.csv.
func BenchmarkSetCommit(b *testing.B) {
	out := filepath.Join(b.TempDir(), "out")
	row := make([]byte, 200)
	for i := range row {
		row[i] = byte('0' + i%10)
	}
	row[len(row)-1] = '\n'
	const size = 32 << 20
	b.SetBytes(size)
	for b.Loop() {
		s, err := Begin(context.Background(), out, Options{})
		if err != nil {
			b.Fatal(err)
		}
		f, err := s.Create("reduced.csv")
		if err != nil {
			b.Fatal(err)
		}
		for n := 0; n < size; n += len(row) {
			f.Write(row)
		}
		if err := s.Commit(testID); err != nil {
			b.Fatal(err)
		}
	}
}
