package outset

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"

	"golang.org/x/sys/unix"
)

// A Set is one run's output files, written into a fresh temporary folder
// beside the output folder (same parent, so on the same filesystem) and
// swapped in whole by Commit.
//
// The swap is one renameat2(RENAME_EXCHANGE) of the new folder with the
// output folder (Linux 3.15 on ext4, xfs, btrfs, tmpfs and others), or one
// rename(2) when there is no output folder yet: a reader sees the whole
// old set or the whole new one, never a mix, and after a crash the disk
// holds one or the other under the output name. Then the old set, now
// under the temporary name, is removed. The files, the new folder and the
// parent are fsynced before the swap, and the parent after it.
//
// Where the filesystem cannot exchange (EINVAL, ENOSYS, EOPNOTSUPP: some
// network and FUSE filesystems), the fallback is two renames: the old set
// to .NAME.geored-old-PID-RANDOM, then the new one to NAME. Between them
// the output folder is absent — a reader finds no set, never a mixed one
// — and a run killed there leaves the old set under the old- name, which
// the next run (Begin, under the lock) puts back as the output folder.
// Either way every complete set holds its manifest, which Verify checks.
type Set struct {
	dir     string // the output folder, resolved
	name    string // the output folder as given, for messages
	tmp     string // the temporary folder being written
	ctx     context.Context
	lock    *Lock
	files   []*File
	hook    func(stage string)
	closed  bool
	swapped bool
	// replaces is the set in the output folder when Begin looked.
	replaces *Earlier
}

// Options are a set's inputs and behaviour.
type Options struct {
	// Keep lists the files the run reads or writes beside the set
	// (inputs, profiles): an output folder that is, or holds, one of
	// them is refused before anything is written (CheckInputs).
	Keep []Keep
	// Earlier lists the file names that geored wrote into an output
	// folder before sets had a manifest: a folder holding only these
	// (and the hidden temporaries such a run left) is replaced as a set.
	Earlier []string
	// Wait waits for another run's lock instead of refusing.
	Wait bool
	// Log receives one line for each note on an earlier run: a lock
	// taken over, a temporary removed, an old set put back, an earlier
	// set that the run replaces (when it was made and its input hash).
	// nil is silent.
	Log io.Writer
	// Hook, if set, is called at the named stages of Commit, in order:
	// "written:NAME" after each file is synced, "complete" when the set
	// and its manifest are on disk before the swap, "swapped" after the
	// swap before the old set is removed (and "moved-away" between the
	// fallback's two renames). It is a test hook: geored's tests stop
	// the process there.
	Hook func(stage string)
}

// A StopError is a run stopped by its context before its set was
// swapped in: the output folder holds what it held before.
type StopError struct{ Cause error }

func (e *StopError) Error() string { return e.Cause.Error() }
func (e *StopError) Unwrap() error { return e.Cause }

// Begin starts a set for the output folder dir: it refuses a folder that
// is or holds a file to keep, takes the folder's lock (see Acquire),
// removes the temporaries of runs that were killed (under the lock no
// other run of this folder is writing: a run makes its temporaries only
// while it holds the lock, and the kernel frees a dead run's lock), puts
// back an old set that a killed fallback swap moved away, refuses a
// folder that is not a set, and makes the temporary folder. Nothing is
// written into dir itself until Commit.
//
// A folder is a set when it is empty, when it holds a manifest and
// exactly the files that manifest lists, or when it holds only
// opt.Earlier's names; anything else (someone's own files, a file added
// by hand to a set) is refused, naming the entry, since the swap would
// carry it away.
func Begin(ctx context.Context, dir string, opt Options) (*Set, error) {
	if err := CheckInputs(dir, opt.Keep); err != nil {
		return nil, err
	}
	rdir, err := resolve(dir)
	if err != nil {
		return nil, err
	}
	if err := os.MkdirAll(filepath.Dir(rdir), 0o755); err != nil {
		return nil, err
	}
	lock, err := Acquire(ctx, rdir, LockOptions{Wait: opt.Wait, Log: opt.Log})
	if err != nil {
		return nil, err
	}
	s := &Set{dir: rdir, name: dir, ctx: ctx, lock: lock, hook: opt.Hook}
	if err := s.recover(opt.Log); err != nil {
		lock.Release()
		return nil, err
	}
	mode, err := isSet(rdir, dir, opt.Earlier)
	if err != nil {
		lock.Release()
		return nil, err
	}
	s.replaces = earlierSet(rdir)
	s.sayReplaces(opt.Log)
	s.tmp = tempName(rdir, kindTmp)
	if err := os.Mkdir(s.tmp, 0o755); err != nil {
		lock.Release()
		return nil, err
	}
	if mode != 0 {
		os.Chmod(s.tmp, mode) // the new set keeps the folder's permissions
	}
	return s, nil
}

// recover removes the temporaries that killed runs left beside the
// folder, after putting back an old set that a fallback swap had moved
// away when the folder is missing.
func (s *Set) recover(log io.Writer) error {
	temps, err := temporaries(s.dir)
	if err != nil {
		return err
	}
	note := func(format string, a ...any) {
		if log != nil {
			fmt.Fprintf(log, "geored: "+format+"\n", a...)
		}
	}
	if _, err := os.Lstat(s.dir); errors.Is(err, os.ErrNotExist) {
		for i, t := range temps {
			if t.kind != kindOld {
				continue
			}
			if err := os.Rename(t.path, s.dir); err != nil {
				return fmt.Errorf("putting back the earlier outputs %s as %s: %w", t.path, s.name, err)
			}
			note("put back the earlier outputs in %s, which a run (PID %d) stopped in its swap had moved to %s", s.name, t.pid, filepath.Base(t.path))
			temps = slices.Delete(temps, i, i+1)
			break
		}
	}
	for _, t := range temps {
		if err := os.RemoveAll(t.path); err != nil {
			return fmt.Errorf("removing %s, left by a run (PID %d) that did not finish: %w", t.path, t.pid, err)
		}
		note("removed %s, left by a run (PID %d) that did not finish", t.path, t.pid)
	}
	if len(temps) > 0 {
		return syncDir(filepath.Dir(s.dir))
	}
	return nil
}

// isSet checks that dir, if it exists, may be replaced (see Begin), and
// returns its permissions (0 if it does not exist). A mount point is
// refused: it cannot be renamed.
func isSet(dir, name string, earlier []string) (os.FileMode, error) {
	st, err := os.Lstat(dir)
	if errors.Is(err, os.ErrNotExist) {
		return 0, nil
	}
	if err != nil {
		return 0, err
	}
	if !st.IsDir() {
		return 0, fmt.Errorf("the output folder %s is a file, not a folder", name)
	}
	if pst, err := os.Stat(filepath.Dir(dir)); err == nil && !sameDevice(st, pst) {
		return 0, fmt.Errorf("the output folder %s is a mount point, and a run replaces the folder whole: name a folder inside it", name)
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		return 0, err
	}
	if len(entries) == 0 {
		return st.Mode().Perm(), nil
	}
	if m, err := ReadManifest(dir); err == nil {
		if err := m.onlyListed(name, entries); err != nil {
			return 0, fmt.Errorf("%w: a run replaces the output folder whole; move it away, or name another folder", err)
		}
		return st.Mode().Perm(), nil
	} else if !errors.Is(err, os.ErrNotExist) {
		return 0, fmt.Errorf("the output folder %s: %w", name, err)
	}
	for _, e := range entries {
		if e.Type().IsRegular() && earlierName(e.Name(), earlier) {
			continue
		}
		return 0, fmt.Errorf("the output folder %s holds %s and no %s, so it is not a set of geored's outputs; "+
			"a run replaces the folder whole: name a new or empty folder", name, e.Name(), ManifestName)
	}
	return st.Mode().Perm(), nil
}

// sameDevice reports whether two files are on one filesystem.
func sameDevice(a, b os.FileInfo) bool {
	sa, ok1 := a.Sys().(*syscall.Stat_t)
	sb, ok2 := b.Sys().(*syscall.Stat_t)
	return !ok1 || !ok2 || sa.Dev == sb.Dev
}

// earlierName reports whether name is one of earlier or a temporary that
// an earlier geored left beside one (.NAME.tmp-…).
func earlierName(name string, earlier []string) bool {
	for _, n := range earlier {
		if name == n || strings.HasPrefix(name, "."+n+".tmp-") {
			return true
		}
	}
	return false
}

// Create starts the set's file name (a plain file name, once).
func (s *Set) Create(name string) (*File, error) {
	if s.closed {
		return nil, fmt.Errorf("%s: the set is closed", name)
	}
	if name == ManifestName || name != filepath.Base(name) || strings.HasPrefix(name, ".") ||
		slices.ContainsFunc(s.files, func(f *File) bool { return f.w.name == name }) {
		return nil, fmt.Errorf("%q: not a new plain file name for the set", name)
	}
	f, err := os.OpenFile(filepath.Join(s.tmp, name), os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return nil, err
	}
	file := &File{w: newFileWriter(f, name, s.name)}
	file.Writer = bufio.NewWriterSize(file.w, fileBuffer)
	s.files = append(s.files, file)
	return file, nil
}

// stage calls the test hook.
func (s *Set) stage(name string) {
	if s.hook != nil {
		s.hook(name)
	}
}

// stopped returns a *StopError if the set's context is done.
func (s *Set) stopped() error {
	if s.ctx.Err() != nil {
		return &StopError{Cause: context.Cause(s.ctx)}
	}
	return nil
}

// exchange swaps two paths atomically (a variable for the tests of the
// fallback).
var exchange = func(a, b string) error {
	return unix.Renameat2(unix.AT_FDCWD, a, unix.AT_FDCWD, b, unix.RENAME_EXCHANGE)
}

// Commit finishes every file, writes the manifest and swaps the set in
// for the output folder, then removes the old set and frees the lock. A
// context done before the swap makes it a *StopError, and nothing
// changes; once swapped, the set stays.
func (s *Set) Commit(id Identity) error {
	if s.closed {
		return errors.New("the set is closed")
	}
	if err := s.stopped(); err != nil {
		return err
	}
	m := Manifest{Format: manifestFormat, Identity: id}
	for _, f := range s.files {
		if err := f.finish(); err != nil {
			return err
		}
		m.Files = append(m.Files, f.entry)
		s.stage("written:" + f.w.name)
	}
	slices.SortFunc(m.Files, func(a, b FileEntry) int { return strings.Compare(a.Name, b.Name) })
	if err := writeSynced(filepath.Join(s.tmp, ManifestName), m.encode()); err != nil {
		return fmt.Errorf("writing %s in %s: %w", ManifestName, s.name, err)
	}
	parent := filepath.Dir(s.dir)
	if err := syncDir(s.tmp); err != nil {
		return err
	}
	if err := syncDir(parent); err != nil {
		return err
	}
	s.stage("complete")
	if err := s.stopped(); err != nil {
		return err
	}
	old, err := s.swap()
	if err != nil {
		return fmt.Errorf("putting the outputs in place as %s: %w", s.name, err)
	}
	s.closed, s.swapped = true, true
	if serr := syncDir(parent); serr != nil {
		err = fmt.Errorf("the outputs are in place as %s, but syncing its parent folder failed: %w", s.name, serr)
	}
	s.stage("swapped")
	if old != "" {
		if rerr := os.RemoveAll(old); rerr == nil {
			syncDir(parent)
		}
	}
	s.lock.Release()
	return err
}

// swap puts the temporary folder in place and returns where the old set
// is now ("" if there was none).
func (s *Set) swap() (string, error) {
	if _, err := os.Lstat(s.dir); errors.Is(err, os.ErrNotExist) {
		return "", os.Rename(s.tmp, s.dir)
	}
	err := exchange(s.tmp, s.dir)
	if err == nil {
		return s.tmp, nil
	}
	if !errors.Is(err, unix.EINVAL) && !errors.Is(err, unix.ENOSYS) && !errors.Is(err, unix.EOPNOTSUPP) {
		return "", err
	}
	old := tempName(s.dir, kindOld)
	if err := os.Rename(s.dir, old); err != nil {
		return "", err
	}
	s.stage("moved-away")
	if err := os.Rename(s.tmp, s.dir); err != nil {
		if os.Rename(old, s.dir) != nil {
			return "", fmt.Errorf("%w (the earlier outputs are in %s)", err, old)
		}
		return "", err
	}
	return old, nil
}

// Committed reports whether the set was swapped in (even if Commit then
// failed to sync or clean up).
func (s *Set) Committed() bool { return s.swapped }

// Abort discards the set: the temporary folder is removed and the lock
// freed; the output folder is as it was. It is safe after Commit.
func (s *Set) Abort() {
	if s.closed {
		return
	}
	s.closed = true
	for _, f := range s.files {
		f.discard()
	}
	os.RemoveAll(s.tmp)
	syncDir(filepath.Dir(s.dir))
	s.lock.Release()
}

// writeSynced writes a small file and syncs it.
func writeSynced(path string, b []byte) error {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	_, err = f.Write(b)
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	return err
}
