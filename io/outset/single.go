package outset

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WriteFile writes a command's one output file (a plot): it refuses a
// path that is one of the files to keep, removes the temporaries that
// killed runs left beside it (those whose PID is no longer running: one
// file takes no lock), writes data to a temporary beside it, syncs it,
// renames it over path and syncs the folder. A reader sees the whole old
// file or the whole new one; of two runs at once, the last rename wins
// whole.
func WriteFile(path string, data []byte, keep []Keep, log io.Writer) error {
	if err := CheckInputs(path, keep); err != nil {
		return err
	}
	rpath, err := resolve(path)
	if err != nil {
		return err
	}
	if st, err := os.Stat(rpath); err == nil && st.IsDir() {
		return fmt.Errorf("%s is a folder, not a file", path)
	}
	temps, err := temporaries(rpath)
	if err != nil {
		return err
	}
	for _, t := range temps {
		if t.kind == kindTmp && !alive(t.pid) && os.Remove(t.path) == nil && log != nil {
			fmt.Fprintf(log, "geored: removed %s, left by a run (PID %d) that did not finish\n", t.path, t.pid)
		}
	}
	tmp := tempName(rpath, kindTmp)
	if err := writeSynced(tmp, data); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("writing %s: %w", path, unwrapPath(err))
	}
	if err := os.Rename(tmp, rpath); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("writing %s: %w", path, unwrapPath(err))
	}
	return syncDir(filepath.Dir(rpath))
}

// unwrapPath drops the (temporary) path of an *os.PathError.
func unwrapPath(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	return err
}
