package outset

import (
	"bufio"
	"crypto/sha256"
	"fmt"
	"io"
	"os"
	"sync/atomic"
)

// A File is one file of a set being written: buffered, under its name in
// the set's temporary folder. Its errors name the file and the output
// folder, not the temporary path.
//
// Its SHA-256, for the manifest, is computed while it is written by a
// goroutine that reads back (from the page cache) what has been written:
// the writer does not wait for the hash, and on a machine with a core to
// spare the hash of a large file is done when the writing is.
type File struct {
	*bufio.Writer
	w      *fileWriter
	done   bool
	synced chan error // set by StartSync
	entry  FileEntry  // known once finished
}

// fileBuffer is a File's buffer: large writes, few system calls.
const fileBuffer = 256 << 10

// hashBuffer is what the hasher reads back at a time.
const hashBuffer = 64 << 10

// fileWriter writes to the file, counting bytes, wakes the hasher, and
// names the output in its errors.
type fileWriter struct {
	f       *os.File
	name    string // in the set
	out     string // the output folder
	n       int64
	written atomic.Int64  // n, for the hasher
	wake    chan struct{} // a write since the hasher last looked
	end     chan struct{} // closed when the writing is over
	hashed  chan hashResult
}

// hashResult is the hasher's outcome.
type hashResult struct {
	sum []byte
	n   int64
	err error
}

func newFileWriter(f *os.File, name, out string) *fileWriter {
	w := &fileWriter{f: f, name: name, out: out, wake: make(chan struct{}, 1), end: make(chan struct{}), hashed: make(chan hashResult, 1)}
	go w.hash()
	return w
}

func (w *fileWriter) Write(p []byte) (int, error) {
	n, err := w.f.Write(p)
	w.n += int64(n)
	w.written.Store(w.n)
	select {
	case w.wake <- struct{}{}:
	default:
	}
	if err != nil {
		err = w.wrap("writing", err)
	}
	return n, err
}

// hash follows the writer, hashing what is written, until the end.
func (w *fileWriter) hash() {
	h := sha256.New()
	var buf []byte // made at the first write: most files of a set are small
	var off int64
	catchUp := func() error {
		for n := w.written.Load(); off < n; {
			if buf == nil {
				buf = make([]byte, hashBuffer)
			}
			k, err := w.f.ReadAt(buf[:min(int64(len(buf)), n-off)], off)
			h.Write(buf[:k])
			off += int64(k)
			if err != nil && !(err == io.EOF && off == n) {
				return err
			}
		}
		return nil
	}
	for {
		select {
		case <-w.wake:
			if err := catchUp(); err != nil {
				w.hashed <- hashResult{err: err}
				return
			}
		case <-w.end:
			err := catchUp()
			w.hashed <- hashResult{sum: h.Sum(nil), n: off, err: err}
			return
		}
	}
}

// wrap names the output file in err, dropping the temporary path of an
// *os.PathError.
func (w *fileWriter) wrap(doing string, err error) error {
	return fmt.Errorf("%s %s in %s: %w", doing, w.name, w.out, unwrapPath(err))
}

// StartSync ends the writing: it flushes the file, then waits for its
// hash and syncs it to disk in the background while the caller goes on
// with other work; Commit waits for it.
func (f *File) StartSync() {
	if f.synced != nil || f.done {
		return
	}
	f.synced = make(chan error, 1)
	err := f.Flush()
	close(f.w.end)
	go func() {
		if err == nil {
			err = f.hashAndSync()
		}
		f.synced <- err
	}()
}

// hashAndSync takes the written file's SHA-256 and syncs it.
func (f *File) hashAndSync() error {
	r := <-f.w.hashed
	if r.err != nil {
		return f.w.wrap("reading back", r.err)
	}
	if r.n != f.w.n {
		return f.w.wrap("reading back", fmt.Errorf("%d bytes of %d", r.n, f.w.n))
	}
	if err := f.w.f.Sync(); err != nil {
		return f.w.wrap("syncing", err)
	}
	f.entry = FileEntry{Name: f.w.name, Bytes: r.n, SHA256: fmt.Sprintf("%x", r.sum)}
	return nil
}

// finish flushes, hashes, syncs and closes the file.
func (f *File) finish() error {
	if f.done {
		return fmt.Errorf("%s in %s: already finished", f.w.name, f.w.out)
	}
	f.StartSync()
	f.done = true
	err := <-f.synced
	if cerr := f.w.f.Close(); err == nil && cerr != nil {
		err = f.w.wrap("closing", cerr)
	}
	return err
}

// discard closes the file, ending the hasher and waiting for a sync in
// flight.
func (f *File) discard() {
	if f.done {
		return
	}
	f.done = true
	if f.synced != nil {
		<-f.synced
	} else {
		close(f.w.end)
		<-f.w.hashed
	}
	f.w.f.Close()
}
