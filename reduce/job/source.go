package job

import (
	"io"

	"github.com/geored/geored/reduce/input"
)

// A Source is one stream of observations to read, by name (the file's, in
// messages): Run hands it to its Opener when it reaches it.
type Source struct {
	Name   string
	Reader io.Reader
}

// An Opener opens a source for a run: its rows in chunks, and the
// warnings of its header. Run calls it from its reading goroutine when it
// reaches the source, after the sources before it; an error (a header
// without a required column) stops the run there. The command opens
// observation files (and LandXML, read as their CSV stream) with
// io/obsfile's ObsChunker in the job's units.
type Opener func(Source) (ChunkSource, []input.Warning, error)

// A ChunkSource splits a source's rows into chunks that the workers
// parse, each on its own, in parallel.
type ChunkSource interface {
	// Next reads the next whole rows, about size bytes of them, into buf,
	// which it reuses; firstLine is the source's line number of the
	// chunk's first line. At the end it returns io.EOF and no data. Any
	// other error ends the source and the run, after the rows before it.
	Next(buf []byte, size int) (data []byte, firstLine int, err error)
	// Rows reads a chunk from Next, on any goroutine: its observations'
	// strings may share data's memory, which the run leaves alone until
	// their results have reached the sink. An error of one row is a
	// RowError and the row is rejected; any other ends the source.
	Rows(data []byte, firstLine int) input.RowReader
}

// A RowError is a row that cannot be used: the run rejects it, with the
// error's text as its reason, and goes on (io/obsfile's *RowError).
type RowError interface {
	error
	// RejectedRow says where the row is, and the row as written.
	RejectedRow() (file string, line int, raw string)
}
