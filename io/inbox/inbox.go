// Package inbox is the bookkeeping of a nightly run's input files: the
// files waiting in an inbox, known by the SHA-256 of their content, and
// their move to an archive once their outputs and history are written.
package inbox

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
)

// An Entry is one file waiting in the inbox.
type Entry struct {
	Path   string // as found: the inbox joined with Name
	Name   string
	SHA256 string // of the content, hex
	Size   int64
}

// Stem is the name without its extension.
func (e Entry) Stem() string { return strings.TrimSuffix(e.Name, filepath.Ext(e.Name)) }

// Key is the stem and the first 8 hex digits of the hash: the file's
// folder name in the results and its name in the archive, so that two
// files of one name but other contents never meet.
func (e Entry) Key() string { return e.Stem() + "-" + e.SHA256[:8] }

// Scan lists the regular files of dir by name, hashed. Hidden files
// (a name starting with a dot: a file still being copied in by a tool
// that renames it when done) are left for the next run.
func Scan(dir string) ([]Entry, error) {
	des, err := os.ReadDir(dir)
	if err != nil {
		return nil, fmt.Errorf("reading the inbox: %w", err)
	}
	var out []Entry
	for _, de := range des {
		if strings.HasPrefix(de.Name(), ".") || !de.Type().IsRegular() {
			continue
		}
		p := filepath.Join(dir, de.Name())
		sum, n, err := hashFile(p)
		if err != nil {
			return nil, err
		}
		out = append(out, Entry{Path: p, Name: de.Name(), SHA256: sum, Size: n})
	}
	slices.SortFunc(out, func(a, b Entry) int { return strings.Compare(a.Name, b.Name) })
	return out, nil
}

func hashFile(path string) (string, int64, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", 0, err
	}
	defer f.Close()
	h := sha256.New()
	n, err := io.Copy(h, f)
	if err != nil {
		return "", 0, fmt.Errorf("reading %s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), n, nil
}

// Move moves e into dir (created if missing) as KEY.EXT, and syncs both
// folders, so the move survives a crash. A file of that name already
// there holds the same content (the name carries the hash): the inbox's
// copy is then removed. It returns the new path.
func Move(e Entry, dir string) (string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", err
	}
	dst := filepath.Join(dir, e.Key()+filepath.Ext(e.Name))
	if _, err := os.Stat(dst); err == nil {
		if err := os.Remove(e.Path); err != nil {
			return "", err
		}
	} else if err := os.Rename(e.Path, dst); err != nil {
		return "", fmt.Errorf("moving %s to %s: %w", e.Path, dir, err)
	}
	for _, d := range []string{dir, filepath.Dir(e.Path)} {
		if err := syncDir(d); err != nil {
			return "", err
		}
	}
	return dst, nil
}

func syncDir(dir string) error {
	f, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer f.Close()
	return f.Sync()
}
