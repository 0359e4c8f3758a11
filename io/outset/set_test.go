package outset

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"golang.org/x/sys/unix"
)

var testID = Identity{Tool: "geored", Command: "test", InputHash: "abc"}

// writeSet commits a set of the given files into out.
func writeSet(t *testing.T, out string, files map[string]string, opt Options) error {
	t.Helper()
	s, err := Begin(context.Background(), out, opt)
	if err != nil {
		return err
	}
	defer s.Abort()
	for _, name := range sortedKeys(files) {
		f, err := s.Create(name)
		require.NoError(t, err)
		_, err = f.WriteString(files[name])
		require.NoError(t, err)
		if name == "big.csv" {
			f.StartSync()
		}
	}
	return s.Commit(testID)
}

func sortedKeys(m map[string]string) []string {
	var k []string
	for n := range m {
		k = append(k, n)
	}
	for i := range k {
		for j := i + 1; j < len(k); j++ {
			if k[j] < k[i] {
				k[i], k[j] = k[j], k[i]
			}
		}
	}
	return k
}

// readSet returns the files of a set, checked against its manifest.
func readSet(t *testing.T, dir string) map[string]string {
	t.Helper()
	m, err := Verify(dir)
	require.NoError(t, err)
	got := map[string]string{}
	for _, f := range m.Files {
		b, err := os.ReadFile(filepath.Join(dir, f.Name))
		require.NoError(t, err)
		got[f.Name] = string(b)
	}
	return got
}

// leftovers lists the entries of the parent other than the output folder
// and its lock file.
func leftovers(t *testing.T, out string) []string {
	t.Helper()
	entries, err := os.ReadDir(filepath.Dir(out))
	require.NoError(t, err)
	var l []string
	for _, e := range entries {
		if e.Name() != filepath.Base(out) && e.Name() != "."+filepath.Base(out)+".geored-lock" {
			l = append(l, e.Name())
		}
	}
	return l
}

// A set is swapped in whole over an earlier one; the manifest lists
// every file with its size and SHA-256, and nothing is left beside it.
func TestCommitReplacesTheWholeSet(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	first := map[string]string{"big.csv": strings.Repeat("row\n", 100000), "a.json": "{}\n", "gone.txt": "only in the first", "wide.csv": strings.Repeat("x,y\n", 200000)}
	require.NoError(t, writeSet(t, out, first, Options{}))
	assert.Equal(t, first, readSet(t, out))
	require.NoError(t, os.Chmod(out, 0o750))
	second := map[string]string{"big.csv": "other\n", "a.json": "[]\n"}
	require.NoError(t, writeSet(t, out, second, Options{}))
	assert.Equal(t, second, readSet(t, out), "no file of the first set is left")
	st, err := os.Stat(out)
	require.NoError(t, err)
	assert.Equal(t, os.FileMode(0o750), st.Mode().Perm(), "the folder keeps its permissions")
	assert.Empty(t, leftovers(t, out))

	m, err := ReadManifest(out)
	require.NoError(t, err)
	assert.Equal(t, testID, m.Identity)
	// SHA-256("[]\n") from sha256sum (GNU coreutils 9.1): printf '[]\n' | sha256sum
	assert.Equal(t, FileEntry{Name: "a.json", Bytes: 3, SHA256: "37517e5f3dc66819f61f5a7bb8ace1921282415f10551d2defa5c3eb0985b570"}, m.Files[0])
	b, _ := os.ReadFile(filepath.Join(out, ManifestName))
	assert.NotContains(t, string(b), out, "the manifest holds no path")
}

// An output folder named through a symbolic link is replaced where the
// link points; the link stays, and the lock is beside the real folder.
func TestCommitThroughASymlink(t *testing.T) {
	root := t.TempDir()
	target := filepath.Join(root, "disk", "out")
	require.NoError(t, os.MkdirAll(target, 0o755))
	link := filepath.Join(root, "out")
	require.NoError(t, os.Symlink(target, link))
	require.NoError(t, writeSet(t, link, map[string]string{"a.csv": "1\n"}, Options{}))
	require.NoError(t, writeSet(t, link, map[string]string{"a.csv": "2\n"}, Options{}))
	st, err := os.Lstat(link)
	require.NoError(t, err)
	assert.True(t, st.Mode()&os.ModeSymlink != 0, "the link is kept")
	assert.Equal(t, map[string]string{"a.csv": "2\n"}, readSet(t, target))
	assert.FileExists(t, filepath.Join(root, "disk", ".out.geored-lock"))
	assert.Empty(t, leftovers(t, target))
}

// The same files give the same manifest byte for byte.
func TestManifestIsDeterministic(t *testing.T) {
	files := map[string]string{"big.csv": "x,y\n1,2\n", "s.json": "{}\n"}
	a, b := filepath.Join(t.TempDir(), "a"), filepath.Join(t.TempDir(), "b")
	require.NoError(t, writeSet(t, a, files, Options{}))
	require.NoError(t, writeSet(t, b, files, Options{}))
	ma, _ := os.ReadFile(filepath.Join(a, ManifestName))
	mb, _ := os.ReadFile(filepath.Join(b, ManifestName))
	assert.Equal(t, string(ma), string(mb))
}

// Verify finds a file changed, missing or added after the commit.
func TestVerifyFindsATamperedSet(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	require.NoError(t, writeSet(t, out, map[string]string{"a.csv": "1\n", "b.csv": "2\n"}, Options{}))
	_, err := Verify(out)
	require.NoError(t, err)

	require.NoError(t, os.WriteFile(filepath.Join(out, "a.csv"), []byte("3\n"), 0o644))
	_, err = Verify(out)
	assert.ErrorContains(t, err, "a.csv has SHA-256")
	require.NoError(t, os.WriteFile(filepath.Join(out, "a.csv"), []byte("1\n\n"), 0o644))
	_, err = Verify(out)
	assert.ErrorContains(t, err, "a.csv has 3 bytes, its manifest says 2")
	require.NoError(t, os.WriteFile(filepath.Join(out, "a.csv"), []byte("1\n"), 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(out, "notes.txt"), nil, 0o644))
	_, err = Verify(out)
	assert.ErrorContains(t, err, "holds notes.txt, which its manifest.json does not list")
	require.NoError(t, os.Remove(filepath.Join(out, "notes.txt")))
	require.NoError(t, os.Remove(filepath.Join(out, "b.csv")))
	_, err = Verify(out)
	assert.ErrorContains(t, err, "lacks b.csv")
}

// An aborted set leaves the earlier one as it was and nothing beside it;
// so does a set whose context ends before the swap.
func TestAbortAndStopLeaveTheEarlierSet(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	old := map[string]string{"a.csv": "old\n"}
	require.NoError(t, writeSet(t, out, old, Options{}))

	s, err := Begin(context.Background(), out, Options{})
	require.NoError(t, err)
	f, err := s.Create("a.csv")
	require.NoError(t, err)
	f.WriteString("new\n")
	f.StartSync()
	s.Abort()
	assert.Equal(t, old, readSet(t, out))
	assert.Empty(t, leftovers(t, out))

	ctx, cancel := context.WithCancelCause(context.Background())
	s, err = Begin(ctx, out, Options{})
	require.NoError(t, err)
	f, _ = s.Create("a.csv")
	f.WriteString("new\n")
	cancel(errors.New("stopped by SIGINT"))
	err = s.Commit(testID)
	var stop *StopError
	require.ErrorAs(t, err, &stop)
	assert.EqualError(t, err, "stopped by SIGINT")
	s.Abort()
	assert.Equal(t, old, readSet(t, out))
	assert.Empty(t, leftovers(t, out))
}

// A folder that is not a set is refused, naming what it holds; an empty
// folder, a set, and a folder of an earlier geored's names are replaced.
func TestBeginRefusesAFolderThatIsNotASet(t *testing.T) {
	parent := t.TempDir()
	mine := filepath.Join(parent, "thesis")
	require.NoError(t, os.MkdirAll(mine, 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(mine, "chapter1.tex"), []byte("mine"), 0o644))
	err := writeSet(t, mine, map[string]string{"a.csv": "x"}, Options{})
	assert.ErrorContains(t, err, "the output folder "+mine+" holds chapter1.tex and no manifest.json")
	b, _ := os.ReadFile(filepath.Join(mine, "chapter1.tex"))
	assert.Equal(t, "mine", string(b))
	assert.Empty(t, leftovers(t, mine), "nothing beside the folder but its lock")

	set := filepath.Join(parent, "set")
	require.NoError(t, writeSet(t, set, map[string]string{"a.csv": "x"}, Options{}))
	require.NoError(t, os.WriteFile(filepath.Join(set, "notes.txt"), []byte("by hand"), 0o644))
	err = writeSet(t, set, map[string]string{"a.csv": "y"}, Options{})
	assert.ErrorContains(t, err, "holds notes.txt, which its manifest.json does not list")

	empty := filepath.Join(parent, "empty")
	require.NoError(t, os.Mkdir(empty, 0o755))
	require.NoError(t, writeSet(t, empty, map[string]string{"a.csv": "x"}, Options{}))

	earlier := filepath.Join(parent, "earlier")
	require.NoError(t, os.Mkdir(earlier, 0o755))
	for _, n := range []string{"reduced.csv", ".reduced.csv.tmp-123456"} {
		require.NoError(t, os.WriteFile(filepath.Join(earlier, n), []byte("old"), 0o644))
	}
	require.NoError(t, writeSet(t, earlier, map[string]string{"reduced.csv": "new"}, Options{Earlier: []string{"reduced.csv", "lines.csv"}}))
	assert.Equal(t, map[string]string{"reduced.csv": "new"}, readSet(t, earlier))

	file := filepath.Join(parent, "file")
	require.NoError(t, os.WriteFile(file, nil, 0o644))
	assert.ErrorContains(t, writeSet(t, file, map[string]string{"a": ""}, Options{}), "is a file, not a folder")
}

// Where the filesystem cannot exchange two names, the fallback's two
// renames still give the whole new set; a run killed between them (the
// hook stands for the kill) leaves the old set under its old- name, which
// the next run puts back before anything else.
func TestFallbackSwap(t *testing.T) {
	saved := exchange
	defer func() { exchange = saved }()
	exchange = func(a, b string) error { return &os.LinkError{Op: "renameat2", Old: a, New: b, Err: unix.EINVAL} }

	out := filepath.Join(t.TempDir(), "out")
	old := map[string]string{"a.csv": "old\n"}
	require.NoError(t, writeSet(t, out, old, Options{}))
	require.NoError(t, writeSet(t, out, map[string]string{"a.csv": "new\n"}, Options{}))
	assert.Equal(t, map[string]string{"a.csv": "new\n"}, readSet(t, out))
	assert.Empty(t, leftovers(t, out))

	// A run that dies between the two renames.
	killed := errors.New("killed")
	var dead *Set
	func() {
		defer func() { assert.Equal(t, killed, recover()) }()
		s, err := Begin(context.Background(), out, Options{Hook: func(stage string) {
			if stage == "moved-away" {
				panic(killed)
			}
		}})
		require.NoError(t, err)
		dead = s
		f, _ := s.Create("a.csv")
		f.WriteString("newer\n")
		s.Commit(testID)
	}()
	// The panic skipped the lock's release: a dead process's lock is
	// freed by the kernel; here the test frees it.
	_, err := os.Stat(out)
	require.ErrorIs(t, err, os.ErrNotExist, "the output folder is absent between the renames")
	require.Len(t, leftovers(t, out), 2, "the old set and the new set")
	dead.lock.Release()

	var log bytes.Buffer
	s, err := Begin(context.Background(), out, Options{Log: &log})
	require.NoError(t, err)
	assert.Contains(t, log.String(), "put back the earlier outputs in "+out)
	assert.Contains(t, log.String(), "removed ")
	assert.Equal(t, map[string]string{"a.csv": "new\n"}, readSet(t, out), "the last committed set is back")
	s.Abort()
	assert.Empty(t, leftovers(t, out))
}

// Temporaries of killed runs beside the folder are removed by the next
// run, which says so; other names are left alone.
func TestBeginRemovesStaleTemporaries(t *testing.T) {
	parent := t.TempDir()
	out := filepath.Join(parent, "out")
	stale := filepath.Join(parent, ".out.geored-tmp-4194999-0a1b2c")
	require.NoError(t, os.MkdirAll(stale, 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(stale, "reduced.csv"), []byte("half"), 0o644))
	other := []string{".other.geored-tmp-4194999-0a1b2c", ".out.geored-tmp-x-y", "out.txt"}
	for _, n := range other {
		require.NoError(t, os.WriteFile(filepath.Join(parent, n), nil, 0o644))
	}
	var log bytes.Buffer
	require.NoError(t, writeSet(t, out, map[string]string{"a": "1"}, Options{Log: &log}))
	assert.Equal(t, "geored: removed "+stale+", left by a run (PID 4194999) that did not finish\n", log.String())
	assert.ElementsMatch(t, other, leftovers(t, out))
}

// The errors of a file being written name the file and the output folder,
// not the temporary path.
func TestFileErrorsNameTheOutput(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	s, err := Begin(context.Background(), out, Options{})
	require.NoError(t, err)
	defer s.Abort()
	f, err := s.Create("reduced.csv")
	require.NoError(t, err)
	f.w.f.Close() // a write now fails
	f.WriteString("row\n")
	err = f.Flush()
	require.Error(t, err)
	assert.Equal(t, "writing reduced.csv in "+out+": file already closed", err.Error())
	_, err = s.Create("reduced.csv")
	assert.Error(t, err, "a name twice")
	_, err = s.Create("../x")
	assert.Error(t, err)
	_, err = s.Create(ManifestName)
	assert.Error(t, err)
}
