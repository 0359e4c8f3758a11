package outset

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"time"
)

// An Earlier is the set of outputs that a run replaces: what its output
// folder held when the run began.
type Earlier struct {
	// Created is when the set was made: its manifest's modification
	// time, for a folder from before manifests its newest file's.
	Created time.Time
	// Identity is what the set is the output of, from its manifest
	// (empty for a folder from before manifests).
	Identity
}

// earlierSet is the set in dir, which isSet has accepted, or nil when dir
// is missing or empty.
func earlierSet(dir string) *Earlier {
	entries, err := os.ReadDir(dir)
	if err != nil || len(entries) == 0 {
		return nil
	}
	if m, err := ReadManifest(dir); err == nil {
		if st, err := os.Stat(filepath.Join(dir, ManifestName)); err == nil {
			return &Earlier{Created: st.ModTime().UTC(), Identity: m.Identity}
		}
	}
	var e Earlier
	for _, d := range entries {
		if info, err := d.Info(); err == nil && info.ModTime().After(e.Created) {
			e.Created = info.ModTime().UTC()
		}
	}
	return &e
}

// Replaces is the set that Commit replaces, as the output folder held it
// when Begin looked, or nil when the folder was missing or empty.
func (s *Set) Replaces() *Earlier { return s.replaces }

// sayReplaces writes the one line that tells a run it replaces an
// earlier set.
func (s *Set) sayReplaces(log io.Writer) {
	e := s.replaces
	if log == nil || e == nil {
		return
	}
	what := "outputs of geored"
	if e.Command != "" {
		what = "outputs of geored " + e.Command
	}
	if e.InputHash != "" {
		h := e.InputHash
		if len(h) > 12 {
			h = h[:12]
		}
		what += " (input hash " + h + ")"
	}
	fmt.Fprintf(log, "geored: %s holds the %s made %s; this run replaces them once its own are complete\n",
		s.name, what, e.Created.Format("2006-01-02 15:04:05 MST"))
}
