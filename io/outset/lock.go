package outset

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"time"

	"golang.org/x/sys/unix"
)

// A Lock is one run's hold on a folder (an output folder, or the job
// folder of a nightly run). It is an exclusive flock(2) on the file
// .NAME.geored-lock beside the folder, which holds the holder's PID, host
// and start time while it is held. The kernel releases the flock when the
// holding process dies, however it dies, so a lock is never stale in
// effect; a lock file that still names a holder when its lock is free was
// left by a run that died, and Acquire says so as it takes it over.
//
// The lock file is kept when the lock is released (emptied), since
// removing a flocked file would let two runs hold locks on two different
// files of one name. flock(2) locks are local to the machine: two hosts
// sharing the folder over NFS are not kept apart.
type Lock struct {
	f    *os.File
	path string
}

// Holder is what a lock file says of the run that holds it.
type Holder struct {
	PID     int       `json:"pid"`
	Host    string    `json:"host"`
	Started time.Time `json:"started"`
	Folder  string    `json:"folder"`
}

func (h Holder) String() string {
	if h.PID == 0 {
		return "another run (which has not yet written its PID)"
	}
	return fmt.Sprintf("PID %d on %s, started %s", h.PID, h.Host, h.Started.Format(time.RFC3339))
}

// A HeldError is the refusal of Acquire when another run holds the lock.
type HeldError struct {
	Folder string
	Holder Holder
}

func (e *HeldError) Error() string {
	return fmt.Sprintf("%s is in use by %s (lock file %s); wait for it to end, or ask to wait (-wait)",
		e.Folder, e.Holder, lockPath(e.Folder))
}

// LockOptions say how Acquire behaves when the lock is held.
type LockOptions struct {
	// Wait waits until the holder ends (or the context is done) instead
	// of refusing.
	Wait bool
	// Log receives one line when Acquire waits and when it takes over
	// the lock file of a run that died; nil is silent.
	Log io.Writer
}

// waitPoll is how often a waiting Acquire tries the lock again: flock's
// blocking call cannot be interrupted by a context.
const waitPoll = 100 * time.Millisecond

// lockPath is the lock file of folder.
func lockPath(folder string) string {
	dir, base := filepath.Split(filepath.Clean(folder))
	return filepath.Join(dir, "."+base+".geored-lock")
}

// Acquire takes the lock of folder, whose parent folder must exist. It
// returns a *HeldError if another run holds it (unless opt.Wait).
func Acquire(ctx context.Context, folder string, opt LockOptions) (*Lock, error) {
	path := lockPath(folder)
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("locking %s: %w", folder, err)
	}
	fd := int(f.Fd())
	waiting := false
	for {
		err = unix.Flock(fd, unix.LOCK_EX|unix.LOCK_NB)
		if err == nil {
			break
		}
		if !errors.Is(err, unix.EWOULDBLOCK) {
			f.Close()
			return nil, fmt.Errorf("locking %s with %s: %w", folder, path, err)
		}
		h := readHolder(f)
		if !opt.Wait {
			f.Close()
			return nil, &HeldError{Folder: folder, Holder: h}
		}
		if !waiting && opt.Log != nil {
			fmt.Fprintf(opt.Log, "geored: waiting for %s to finish with %s\n", h, folder)
		}
		waiting = true
		select {
		case <-ctx.Done():
			f.Close()
			return nil, context.Cause(ctx)
		case <-time.After(waitPoll):
		}
	}
	if h := readHolder(f); h.PID != 0 && h.PID != os.Getpid() && opt.Log != nil {
		fmt.Fprintf(opt.Log, "geored: taking over the lock of %s from %s, which ended without releasing it\n", folder, h)
	}
	host, _ := os.Hostname()
	me, _ := json.Marshal(Holder{PID: os.Getpid(), Host: host, Started: time.Now().UTC().Truncate(time.Second), Folder: folder})
	if err := f.Truncate(0); err == nil {
		_, err = f.WriteAt(append(me, '\n'), 0)
	}
	if err != nil {
		f.Close() // releases the flock
		return nil, fmt.Errorf("writing the lock file %s: %w", path, err)
	}
	return &Lock{f: f, path: path}, nil
}

// readHolder reads the lock file; a zero Holder if it is empty or not a
// holder's record.
func readHolder(f *os.File) Holder {
	b := make([]byte, 4096)
	n, _ := f.ReadAt(b, 0)
	var h Holder
	if json.Unmarshal(b[:n], &h) != nil {
		return Holder{}
	}
	return h
}

// Release empties the lock file and frees the lock. It is safe to call
// more than once.
func (l *Lock) Release() {
	if l == nil || l.f == nil {
		return
	}
	l.f.Truncate(0)
	l.f.Close() // closing the last descriptor frees the flock
	l.f = nil
}
