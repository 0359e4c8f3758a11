package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// loops.csv's vectors name each vector of a loop by its line in its
// baselines file, the file once before the first step and again only
// where a step comes from another file; read back, the steps are the
// delivered rows whose marks, in the loop's sense, are the marks column
// in turn. The scenario's vectors are delivered in two files here, so
// that its triangle spans both.
func TestAuditLoopsNameVectorsByLine(t *testing.T) {
	sc := newAuditScenario(t)
	all := readCSV(t, sc.file)
	head := strings.Join(all[0], ",")
	col := map[string]int{}
	for i, h := range all[0] {
		col[h] = i
	}
	more := filepath.Join(sc.dir, "more.csv")
	var first, second strings.Builder
	first.WriteString(head + "\n")
	second.WriteString(head + "\n")
	type row struct{ from, to string }
	rows := map[string]map[int]row{sc.file: {}, more: {}}
	for _, r := range all[1:] {
		w, file, n := &first, sc.file, strings.Count(first.String(), "\n")+1
		if r[col["id"]] == "v-ca" {
			w, file, n = &second, more, strings.Count(second.String(), "\n")+1
		}
		w.WriteString(strings.Join(r, ",") + "\n")
		rows[file][n] = row{r[col["from"]], r[col["to"]]}
	}
	require.NoError(t, os.WriteFile(sc.file, []byte(first.String()), 0o644))
	require.NoError(t, os.WriteFile(more, []byte(second.String()), 0o644))

	code, stdout, stderr := runCmd(t, "audit", "-config", sc.config, "-quiet", sc.file, more)
	require.Equal(t, exitFlagged, code, "%s\n%s", stdout, stderr)
	loops, lcol := readColumns(t, filepath.Join(sc.dir, "out", "loops.csv"))
	require.Len(t, loops, 3)
	files := 0
	for _, l := range loops[1:] {
		file := ""
		var marks []string
		for k, step := range strings.Split(l[lcol["vectors"]], " ") {
			step, back := strings.CutPrefix(step, "−")
			if i := strings.LastIndexByte(step, ':'); i >= 0 {
				require.NotEqual(t, step[:i], file, "a file is named again only where it changes: %s", l[lcol["vectors"]])
				file, step = step[:i], step[i+1:]
				files++
			}
			require.NotEmpty(t, file, "the first step names its file")
			n, err := strconv.Atoi(step)
			require.NoError(t, err, l[lcol["vectors"]])
			r, ok := rows[file][n]
			require.True(t, ok, "%s:%d is a delivered row", file, n)
			if back {
				r.from, r.to = r.to, r.from
			}
			if k == 0 {
				marks = append(marks, r.from)
			}
			require.Equal(t, marks[len(marks)-1], r.from, "step %d starts where the one before ends: %s", k, l[lcol["vectors"]])
			marks = append(marks, r.to)
		}
		assert.Equal(t, l[lcol["marks"]], strings.Join(marks, " → "))
	}
	assert.Equal(t, 4, files, "the triangle names its three changes of file, the repeat ALDER–BIRCH its one file once: %v", loops[1:])
}
