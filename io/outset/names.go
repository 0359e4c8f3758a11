package outset

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
)

// The kinds of temporary beside an output NAME: .NAME.geored-KIND-PID-RANDOM.
const (
	kindTmp = "tmp" // a set or a file being written
	kindOld = "old" // an earlier set moved away by the fallback swap
)

// tempName is a fresh temporary name of the given kind for the output
// path, in the same folder.
func tempName(path, kind string) string {
	dir, base := filepath.Split(filepath.Clean(path))
	var r [6]byte
	rand.Read(r[:])
	return filepath.Join(dir, fmt.Sprintf(".%s.geored-%s-%d-%s", base, kind, os.Getpid(), hex.EncodeToString(r[:])))
}

// A temporary is one of geored's temporaries for an output, found in its
// folder.
type temporary struct {
	path string
	kind string
	pid  int
}

// temporaries lists the temporaries of the output path in its folder.
func temporaries(path string) ([]temporary, error) {
	dir, base := filepath.Split(filepath.Clean(path))
	if dir == "" {
		dir = "."
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	prefix := "." + base + ".geored-"
	var out []temporary
	for _, e := range entries {
		rest, ok := strings.CutPrefix(e.Name(), prefix)
		if !ok {
			continue
		}
		kind, rest, ok := strings.Cut(rest, "-")
		if !ok || (kind != kindTmp && kind != kindOld) {
			continue
		}
		p, _, ok := strings.Cut(rest, "-")
		pid, err := strconv.Atoi(p)
		if !ok || err != nil || pid <= 0 {
			continue
		}
		out = append(out, temporary{path: filepath.Join(dir, e.Name()), kind: kind, pid: pid})
	}
	return out, nil
}

// alive reports whether a process of that PID runs (or runs under
// another user: kill says EPERM).
func alive(pid int) bool {
	err := syscall.Kill(pid, 0)
	return err == nil || errors.Is(err, syscall.EPERM)
}

// syncDir flushes a folder's entries (names created, renamed, removed) to
// disk.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	err = d.Sync()
	if cerr := d.Close(); err == nil {
		err = cerr
	}
	return err
}
