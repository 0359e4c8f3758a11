package reduce_test

import (
	"go/build"
	"io/fs"
	"path/filepath"
	"strings"
	"testing"
)

// module is the project's module path (go.mod).
const module = "github.com/geored/geored"

// TestLayers checks the design's rule that layers import downward only
// (DESIGN.md, packages; DEVELOPERS.md, layout): no package under reduce
// depends on one of io/ — the readers and writers sit above the pipeline
// and the command wires them to it — and none but reduce/job, the
// pipeline's glue that opens PROJ handles for its workers, depends on
// geodesic, on go-proj or on cgo: the chain is pure functions over plain
// values. It follows the imports of the packages' own files (not their
// tests') through the module, as `go list -deps` does.
func TestLayers(t *testing.T) {
	pkgs := map[string]*build.Package{} // import path → package, read once
	load := func(path string) *build.Package {
		if p, ok := pkgs[path]; ok {
			return p
		}
		p, err := build.ImportDir(filepath.Join("..", strings.TrimPrefix(path, module)), 0)
		if err != nil {
			t.Fatalf("%s: %v", path, err)
		}
		pkgs[path] = p
		return p
	}
	// deps is every import reached from path, each with the chain of
	// imports that reaches it.
	deps := func(path string) map[string]string {
		seen := map[string]string{path: path}
		todo := []string{path}
		for len(todo) > 0 {
			p := todo[0]
			todo = todo[1:]
			pkg := load(p)
			imports := pkg.Imports
			if len(pkg.CgoFiles) > 0 {
				imports = append(imports[:len(imports):len(imports)], "C")
			}
			for _, imp := range imports {
				if _, ok := seen[imp]; ok {
					continue
				}
				seen[imp] = seen[p] + " → " + imp
				if strings.HasPrefix(imp, module+"/") {
					todo = append(todo, imp)
				}
			}
		}
		return seen
	}
	var dirs []string
	err := filepath.WalkDir(".", func(dir string, d fs.DirEntry, err error) error {
		if err != nil || !d.IsDir() {
			return err
		}
		if d.Name() == "testdata" {
			return filepath.SkipDir
		}
		if _, err := build.ImportDir(dir, 0); err == nil {
			dirs = append(dirs, dir)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(dirs) < 4 {
		t.Fatalf("found only the packages %v under reduce", dirs)
	}
	for _, dir := range dirs {
		path := module + "/reduce"
		if dir != "." {
			path += "/" + filepath.ToSlash(dir)
		}
		for imp, chain := range deps(path) {
			if strings.HasPrefix(imp, module+"/io/") {
				t.Errorf("%s imports %s, a package of io/: %s", path, imp, chain)
			}
			if path == module+"/reduce/job" {
				continue
			}
			if imp == module+"/geodesic" || strings.HasPrefix(imp, "github.com/twpayne/go-proj") || imp == "C" {
				t.Errorf("%s depends on PROJ or cgo (%s): %s", path, imp, chain)
			}
		}
	}
}
