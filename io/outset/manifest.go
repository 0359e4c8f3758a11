package outset

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
)

// ManifestName is the manifest's file name in a set.
const ManifestName = "manifest.json"

// manifestFormat marks a manifest as geored's, and its layout's version.
const manifestFormat = "geored output set 1"

// A Manifest lists a set's files. It holds no clock time, PID or path, so
// the same inputs and settings give the same manifest byte for byte.
type Manifest struct {
	Format string `json:"format"`
	Identity
	Files []FileEntry `json:"files"` // by name
}

// Identity is what a set is the output of.
type Identity struct {
	Tool    string `json:"tool"`
	Command string `json:"command"`
	// InputHash identifies the run's inputs and settings (for reduce,
	// summary.json's input_hash).
	InputHash string `json:"input_hash"`
}

// A FileEntry is one file of a set.
type FileEntry struct {
	Name   string `json:"name"`
	Bytes  int64  `json:"bytes"`
	SHA256 string `json:"sha256"`
}

// encode is the manifest as written: indented JSON and a line break.
func (m *Manifest) encode() []byte {
	b, _ := json.MarshalIndent(m, "", "  ")
	return append(b, '\n')
}

// ReadManifest reads the manifest of the set in dir.
func ReadManifest(dir string) (*Manifest, error) {
	b, err := os.ReadFile(filepath.Join(dir, ManifestName))
	if err != nil {
		return nil, err
	}
	var m Manifest
	d := json.NewDecoder(bytes.NewReader(b))
	d.DisallowUnknownFields()
	if err := d.Decode(&m); err != nil {
		return nil, fmt.Errorf("%s: %w", filepath.Join(dir, ManifestName), err)
	}
	if m.Format != manifestFormat {
		return nil, fmt.Errorf("%s: format %q, want %q", filepath.Join(dir, ManifestName), m.Format, manifestFormat)
	}
	return &m, nil
}

// Verify checks that dir holds the whole set its manifest lists: every
// file there with its size and SHA-256, and no other entry.
func Verify(dir string) (*Manifest, error) {
	m, err := ReadManifest(dir)
	if err != nil {
		return nil, err
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, err
	}
	if err := m.onlyListed(dir, entries); err != nil {
		return nil, err
	}
	for _, fe := range m.Files {
		path := filepath.Join(dir, fe.Name)
		f, err := os.Open(path)
		if err != nil {
			return nil, fmt.Errorf("set %s: %w", dir, err)
		}
		h := sha256.New()
		n, err := io.Copy(h, f)
		f.Close()
		if err != nil {
			return nil, fmt.Errorf("set %s: %w", dir, err)
		}
		if n != fe.Bytes {
			return nil, fmt.Errorf("set %s: %s has %d bytes, its manifest says %d", dir, fe.Name, n, fe.Bytes)
		}
		if got := hex.EncodeToString(h.Sum(nil)); got != fe.SHA256 {
			return nil, fmt.Errorf("set %s: %s has SHA-256 %s, its manifest says %s", dir, fe.Name, got, fe.SHA256)
		}
	}
	return m, nil
}

// onlyListed checks that the folder's entries are the manifest and the
// files it lists, and that every listed file is there.
func (m *Manifest) onlyListed(dir string, entries []os.DirEntry) error {
	have := map[string]bool{}
	for _, e := range entries {
		have[e.Name()] = true
		if e.Name() == ManifestName {
			continue
		}
		if !slices.ContainsFunc(m.Files, func(f FileEntry) bool { return f.Name == e.Name() }) {
			return fmt.Errorf("%s holds %s, which its %s does not list", dir, e.Name(), ManifestName)
		}
	}
	var missing []string
	for _, f := range m.Files {
		if !have[f.Name] {
			missing = append(missing, f.Name)
		}
	}
	if len(missing) > 0 {
		return fmt.Errorf("set %s lacks %s, which its %s lists", dir, strings.Join(missing, ", "), ManifestName)
	}
	return nil
}
