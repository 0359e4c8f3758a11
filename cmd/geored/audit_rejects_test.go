package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestAuditRejectsBadInput: every bad row of a baselines file is in
// rejects.csv with reduce's columns — file, line, the row as written and
// a reason naming file:line:column, the value and what was expected — and
// the good rows are checked: read = checked + rejected.
func TestAuditRejectsBadInput(t *testing.T) {
	sc := newAuditScenario(t)
	data, err := os.ReadFile(sc.file)
	require.NoError(t, err)
	lines := strings.Split(strings.TrimSpace(string(data)), "\n")
	header, good := lines[0], lines[1]
	path := filepath.Join(sc.dir, "bad.csv")
	bad := []string{
		"b1,ALDER,BIRCH,grid,12x4.5,0.002,,,,,,,",
		"b2,ALDER,BIRCH,slope,1234.5,0.002,,,,,,,",
		"b3,ALDER,BIRCH,grid,1234.5,0,,,,,,,",
		"b4,ALDER,BIRCH,vector,,,1,2,3,0.003,,0.005,",
		"b5,ALDER,BIRCH,grid",
		"b6,ALDER,OAKWOOD,grid,1234.5,0.002,,,,,,,",
	}
	require.NoError(t, os.WriteFile(path, []byte(header+"\n"+good+"\n"+strings.Join(bad, "\n")+"\n"), 0o644))
	var stdout, stderr bytes.Buffer
	require.Equal(t, exitFlagged, run([]string{"audit", "-config", sc.config, path}, &stdout, &stderr), "stderr:\n%s", &stderr)
	rej := readCSV(t, filepath.Join(sc.dir, "out", "rejects.csv"))
	require.Equal(t, []string{"file", "line", "raw", "reason"}, rej[0])
	require.Len(t, rej, len(bad)+1, "every bad row, once")
	want := []string{
		path + `:3:5: distance "12x4.5": want a distance in m`,
		path + `:4:4: kind "slope": want grid, ellipsoid, ground, sea-level or vector`,
		path + `:5:6: sigma "0": want the distance's stated σ in m, above 0`,
		path + `:6:11: sigma_y "": want the component's σ in m`,
		path + `:7:`,
		path + `:8: end mark "OAKWOOD" is not in the points file`,
	}
	for i, w := range want {
		r := rej[i+1]
		assert.Equal(t, path, r[0], "reject %d: file", i)
		assert.Equal(t, fmt.Sprint(i+3), r[1], "reject %d: line", i)
		assert.Contains(t, r[3], w, "reject %d: reason", i)
		assert.Equal(t, bad[i], r[2], "reject %d: the row as written", i)
	}
	assert.Contains(t, rej[5][3], "wrong number of fields")
	rows, _ := readColumns(t, filepath.Join(sc.dir, "out", "audit.csv"))
	assert.Len(t, rows, 2, "the good row is checked")
}
