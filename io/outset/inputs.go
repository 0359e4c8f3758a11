package outset

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
)

// A Keep is a file that a run reads, or writes beside its set, and that
// the set must never replace or carry away.
type Keep struct {
	Role string // "the points file", "the job file", ...
	Path string
}

// A ClobberError is the refusal of an output that is, holds or would
// carry away a file to keep.
type ClobberError struct {
	Out  string
	Keep Keep
	How  string // "is", "holds"
}

func (e *ClobberError) Error() string {
	if e.How == "is" {
		return fmt.Sprintf("the output %s is %s %s; name an output of its own", e.Out, e.Keep.Role, e.Keep.Path)
	}
	return fmt.Sprintf("the output folder %s holds %s %s, and a run replaces the folder whole; name a folder of its own", e.Out, e.Keep.Role, e.Keep.Path)
}

// resolve is path made absolute with every symbolic link of its existing
// part followed (the rest, not yet created, kept as given).
func resolve(path string) (string, error) {
	abs, err := filepath.Abs(path)
	if err != nil {
		return "", err
	}
	var rest []string
	for p := abs; ; {
		r, err := filepath.EvalSymlinks(p)
		if err == nil {
			return filepath.Join(append([]string{r}, rest...)...), nil
		}
		if !errors.Is(err, fs.ErrNotExist) {
			return "", err
		}
		parent := filepath.Dir(p)
		if parent == p {
			return abs, nil
		}
		rest = append([]string{filepath.Base(p)}, rest...)
		p = parent
	}
}

// within reports whether path is root or inside it, both resolved.
func within(path, root string) bool {
	rel, err := filepath.Rel(root, path)
	return err == nil && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator))
}

// CheckInputs refuses an output (a folder the run replaces whole, or a
// file) that is one of the files to keep, holds one at any depth, or
// holds the current folder. Paths are compared resolved (symbolic links
// followed) and by os.SameFile on the file and every folder above it, so
// that a hard link or a bind mount does not slip by. A file to keep that
// does not exist yet (a profile to write) is compared by its path.
func CheckInputs(out string, keep []Keep) error {
	rout, err := resolve(out)
	if err != nil {
		return err
	}
	outInfo, outErr := os.Stat(rout)
	check := func(k Keep, path string) error {
		if within(path, rout) {
			how := "holds"
			if path == rout {
				how = "is"
			}
			return &ClobberError{Out: out, Keep: k, How: how}
		}
		if outErr != nil {
			return nil
		}
		for p := path; ; p = filepath.Dir(p) {
			if st, err := os.Stat(p); err == nil && os.SameFile(st, outInfo) {
				how := "holds"
				if p == path {
					how = "is"
				}
				return &ClobberError{Out: out, Keep: k, How: how}
			}
			if filepath.Dir(p) == p {
				return nil
			}
		}
	}
	for _, k := range keep {
		if k.Path == "" {
			continue
		}
		rp, err := resolve(k.Path)
		if err != nil {
			return err
		}
		if err := check(k, rp); err != nil {
			return err
		}
	}
	if wd, err := os.Getwd(); err == nil {
		if rwd, err := resolve(wd); err == nil {
			return check(Keep{Role: "the current folder", Path: wd}, rwd)
		}
	}
	return nil
}
