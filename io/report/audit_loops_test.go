package report

import (
	"bytes"
	"encoding/json"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// loops.csv names a loop's file once and each step by its line;
// summary.json keeps "file:line" for every step.
func TestLoopVectors(t *testing.T) {
	steps := []LoopStep{{"net.csv", 12, false}, {"net.csv", 40, true}, {"net.csv", 17, false}, {"more.csv", 3, true}, {"net.csv", 5, false}}
	assert.Equal(t, "net.csv:12 −40 17 −more.csv:3 net.csv:5", string(appendLoopVectors(nil, steps)))

	s := &AuditSummary{}
	s.AddLoop(AuditLoop{Number: 1, Vectors: steps[:3], Marks: "OAK → PINE → ASH → OAK", Pass: false})
	var b bytes.Buffer
	require.NoError(t, WriteLoopsCSV(&b, s))
	assert.Contains(t, b.String(), ",OAK → PINE → ASH → OAK,net.csv:12 −40 17\n")
	j, err := json.Marshal(s.FailingLoops[0].Vectors)
	require.NoError(t, err)
	assert.JSONEq(t, `["net.csv:12", "−net.csv:40", "net.csv:17"]`, string(j))
}
