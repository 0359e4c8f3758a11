package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A row's field_ppm is the ppm its instrument applied on that shot: each
// demo row given field_ppm = 15.3 reduces exactly as the same row does
// when the profile says field_ppm = 15.3 (the flag -field-ppm), and
// reduced.csv says where each came from. Against the row without it
// (the demo profile's 0 ppm), the instrument-corrected distance is
// shorter by the removed scale, S·15.3e-6/(1 + 15.3e-6)·(1 + scale_ppm),
// to reduced.csv's 0.01 mm (the instrument's ppm scales the measured
// distance, raw = measured·(1 + ppm·1e-6) + c: common practice).
// observed_at is carried to reduced.csv as written.
func TestFieldPPMPerRow(t *testing.T) {
	const ppm = 15.3
	var plain, both strings.Builder
	for i, line := range strings.Split(strings.TrimSpace(string(mustDemo(t, "demo/observations.csv"))), "\n") {
		if strings.HasPrefix(line, "#") {
			continue
		}
		if i == 1 {
			plain.WriteString(line + ",field_ppm,observed_at\n")
			both.WriteString(line + ",field_ppm,observed_at\n")
			continue
		}
		at := fmt.Sprintf("2026-05-14T09:%02d:07+02:00", i%60)
		plain.WriteString(line + ",," + at + "\n")
		both.WriteString(line + ",," + at + "\n")
		both.WriteString("p" + line + fmt.Sprintf(",%g,", ppm) + strings.Replace(at, "T", " ", 1) + "\n")
	}
	cfg := writeJob(t, both.String(), "")
	dir := filepath.Dir(cfg)
	code, _, stderr := runCmd(t, "reduce", "-config", cfg, "-quiet")
	require.Contains(t, []int{0, 1}, code, stderr)
	rows, col := readColumns(t, filepath.Join(dir, "out", "reduced.csv"))

	require.NoError(t, os.WriteFile(filepath.Join(dir, "observations.csv"), []byte(plain.String()), 0o644))
	code, _, stderr = runCmd(t, "reduce", "-config", cfg, "-quiet", "-out", filepath.Join(dir, "flag"), "-field-ppm", strconv.FormatFloat(ppm, 'g', -1, 64))
	require.Contains(t, []int{0, 1}, code, stderr)
	frows, fcol := readColumns(t, filepath.Join(dir, "flag", "reduced.csv"))
	byFlag := map[string][]string{}
	for _, r := range frows[1:] {
		byFlag[r[fcol["obs_id"]]] = r
		assert.Equal(t, "profile", r[fcol["field_ppm_source"]])
		assert.Equal(t, "15.300", r[fcol["field_ppm"]])
	}
	byID := map[string][]string{}
	for _, r := range rows[1:] {
		byID[r[col["obs_id"]]] = r
	}
	num := func(r []string, c int) float64 {
		v, err := strconv.ParseFloat(r[c], 64)
		require.NoError(t, err, r[c])
		return v
	}
	n := 0
	for id, p := range byID {
		if id[0] != 'p' {
			continue
		}
		n++
		o, f := byID[id[1:]], byFlag[id[1:]]
		require.NotNil(t, o, id)
		require.NotNil(t, f, id)
		assert.Equal(t, "row", p[col["field_ppm_source"]], id)
		assert.Equal(t, "15.300", p[col["field_ppm"]], id)
		assert.Equal(t, "profile", o[col["field_ppm_source"]], id)
		assert.Equal(t, "0.000", o[col["field_ppm"]], id)
		assert.Equal(t, strings.Replace(o[col["observed_at"]], "T", " ", 1), p[col["observed_at"]], id)
		assert.Regexp(t, `^2026-05-14T09:\d\d:07\+02:00$`, o[col["observed_at"]])
		for name, c := range col {
			switch name {
			case "file", "line", "obs_id", "field_ppm_source", "observed_at":
				continue
			}
			assert.Equal(t, f[fcol[name]], p[c], "%s %s: the row's field_ppm against the profile's", id, name)
		}
		raw, scale := num(o, col["slope_raw_m"]), 0.8e-6                     // the demo profile's scale_ppm
		removed := (raw + 0.030) * ppm * 1e-6 / (1 + ppm*1e-6) * (1 + scale) // c = −30 mm applied
		assert.InDelta(t, num(o, col["slope_instrument_m"])-removed, num(p, col["slope_instrument_m"]), 1.01e-5, id)
	}
	assert.Greater(t, n, 20, "demo rows reduced with field_ppm")
}
