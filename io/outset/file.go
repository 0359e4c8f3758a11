package outset

import (
	"bufio"
	"crypto/sha256"
	"fmt"
	"io"
	"os"
)

// A File is one file of a set being written: buffered, under its name in
// the set's temporary folder. Its errors name the file and the output
// folder, not the temporary path.
type File struct {
	*bufio.Writer
	w      fileWriter
	done   bool
	synced chan error // set by StartSync
	entry  FileEntry  // known once finished
}

// fileBuffer is a File's buffer: large writes, few system calls.
const fileBuffer = 256 << 10

// fileWriter writes to the file, counting bytes, and names the output in
// its errors.
type fileWriter struct {
	f    *os.File
	name string // in the set
	out  string // the output folder
	n    int64
}

func (w *fileWriter) Write(p []byte) (int, error) {
	n, err := w.f.Write(p)
	w.n += int64(n)
	if err != nil {
		err = w.wrap("writing", err)
	}
	return n, err
}

// wrap names the output file in err, dropping the temporary path of an
// *os.PathError.
func (w *fileWriter) wrap(doing string, err error) error {
	return fmt.Errorf("%s %s in %s: %w", doing, w.name, w.out, unwrapPath(err))
}

// StartSync ends the writing: it flushes the file, then hashes it (from
// the page cache) and syncs it to disk in the background while the caller
// goes on with other work; Commit waits for it.
func (f *File) StartSync() {
	if f.synced != nil || f.done {
		return
	}
	f.synced = make(chan error, 1)
	err := f.Flush()
	go func() {
		if err == nil {
			err = f.hashAndSync()
		}
		f.synced <- err
	}()
}

// hashAndSync reads the written file back for its SHA-256 and syncs it.
func (f *File) hashAndSync() error {
	h := sha256.New()
	n, err := io.Copy(h, io.NewSectionReader(f.w.f, 0, f.w.n))
	if err != nil {
		return f.w.wrap("reading back", err)
	}
	if n != f.w.n {
		return f.w.wrap("reading back", fmt.Errorf("%d bytes of %d", n, f.w.n))
	}
	if err := f.w.f.Sync(); err != nil {
		return f.w.wrap("syncing", err)
	}
	f.entry = FileEntry{Name: f.w.name, Bytes: n, SHA256: fmt.Sprintf("%x", h.Sum(nil))}
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

// discard closes the file, waiting for a sync in flight.
func (f *File) discard() {
	if f.done {
		return
	}
	f.done = true
	if f.synced != nil {
		<-f.synced
	}
	f.w.f.Close()
}
