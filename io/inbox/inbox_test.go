package inbox

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestScanAndMove(t *testing.T) {
	in, arch := t.TempDir(), filepath.Join(t.TempDir(), "archive")
	require.NoError(t, os.WriteFile(filepath.Join(in, "b.csv"), []byte("abc"), 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(in, "a.csv"), []byte("abc"), 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(in, ".c.csv.part"), []byte("x"), 0o644))
	es, err := Scan(in)
	require.NoError(t, err)
	require.Len(t, es, 2, "hidden files wait")
	require.Equal(t, "a.csv", es[0].Name)
	// SHA-256("abc"), FIPS 180-2 appendix B.1 [published].
	require.Equal(t, "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad", es[0].SHA256)
	require.Equal(t, "a-ba7816bf", es[0].Key())
	p, err := Move(es[0], arch)
	require.NoError(t, err)
	require.Equal(t, filepath.Join(arch, "a-ba7816bf.csv"), p)
	_, err = os.Stat(es[0].Path)
	require.True(t, os.IsNotExist(err))
}
