package main

import (
	"fmt"
	"io"
	"runtime/debug"

	"github.com/twpayne/go-proj/v10"
)

// version is geored's version: the module version when built from a tagged
// module, else the VCS revision recorded by the Go toolchain.
func version() string {
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return "unknown"
	}
	if v := info.Main.Version; v != "" && v != "(devel)" {
		return v
	}
	rev, dirty := "", false
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			dirty = s.Value == "true"
		}
	}
	if rev == "" {
		return "devel"
	}
	if len(rev) > 12 {
		rev = rev[:12]
	}
	if dirty {
		rev += "+modified"
	}
	return "devel-" + rev
}

func projVersion() string {
	return fmt.Sprintf("%d.%d.%d", proj.VersionMajor, proj.VersionMinor, proj.VersionPatch)
}

func runVersion(args []string, stdout, stderr io.Writer) int {
	fmt.Fprintf(stdout, "geored %s (PROJ %s)\n", version(), projVersion())
	return exitOK
}
