package report

import (
	"bufio"
	"fmt"
	"os"
	"path/filepath"
)

// An AtomicFile is written under a temporary name in its folder and
// renamed to its final name by Commit, so that a killed run never leaves a
// half-written file under the final name.
type AtomicFile struct {
	*bufio.Writer
	f      *os.File
	final  string
	done   bool
	synced chan error // set by StartSync
}

// CreateAtomic starts writing path.
func CreateAtomic(path string) (*AtomicFile, error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return nil, err
	}
	return &AtomicFile{Writer: bufio.NewWriterSize(f, 256<<10), f: f, final: path}, nil
}

// StartSync ends the writing: it flushes the file and syncs it to disk in
// the background, while the caller goes on with other work; Commit then
// waits for it.
func (a *AtomicFile) StartSync() {
	if a.synced != nil || a.done {
		return
	}
	a.synced = make(chan error, 1)
	err := a.Flush()
	go func() {
		if err == nil {
			err = a.f.Sync()
		}
		a.synced <- err
	}()
}

// Commit flushes, syncs and renames the file into place.
func (a *AtomicFile) Commit() error {
	if a.done {
		return fmt.Errorf("%s: already closed", a.final)
	}
	a.done = true
	var err error
	if a.synced != nil {
		err = <-a.synced
	} else if err = a.Flush(); err == nil {
		err = a.f.Sync()
	}
	if cerr := a.f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(a.f.Name(), a.final)
	}
	if err != nil {
		os.Remove(a.f.Name())
		return fmt.Errorf("writing %s: %w", a.final, err)
	}
	return nil
}

// Abort discards the file. It is safe after Commit.
func (a *AtomicFile) Abort() {
	if a.done {
		return
	}
	a.done = true
	if a.synced != nil {
		<-a.synced
	}
	a.f.Close()
	os.Remove(a.f.Name())
}
