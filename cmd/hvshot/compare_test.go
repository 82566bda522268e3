package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// hvshot compare on the demo's invented winding shots without their setup file: the
// channels by their units (a divider in V, a current in A), the defaults of
// docs/method.md; the shot whose winding was changed is the one flagged.
func TestCompareCommand(t *testing.T) {
	dir := t.TempDir()
	code, out, stderr := runCmd("demo", "--out", dir, "--plots", "none")
	require.Equal(t, exitOK, code, out+stderr)
	caps := filepath.Join(dir, "captures")
	args := []string{"compare", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(dir, "cmp")}
	for _, f := range []string{"winding/reduced01.csv", "winding/full02.csv", "winding/full04.csv"} {
		args = append(args, filepath.Join(caps, f))
	}
	code, out, stderr = runCmd(args...)
	require.NotEqual(t, exitUsage, code, stderr)
	flagged := map[string]bool{}
	rows := 0
	for _, l := range strings.Split(strings.TrimSpace(out), "\n") {
		var r struct {
			File, Channel string
			Compared      string  `json:"compared_with"`
			Dev           float64 `json:"transfer_deviation_pct"`
			Warnings      []struct{ Code string }
		}
		require.NoError(t, json.Unmarshal([]byte(l), &r), l)
		rows++
		assert.Equal(t, "reduced01.csv", r.Compared, "%s %s: identities relative to the files' common folder", r.File, r.Channel)
		for _, w := range r.Warnings {
			if w.Code == "comparison-deviation" {
				flagged[r.File] = true
			}
		}
	}
	assert.Equal(t, 6, rows)
	assert.Equal(t, map[string]bool{"full04.csv": true}, flagged)

	code, _, stderr = runCmd("compare")
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "no captures named")
	code, _, stderr = runCmd("analyze", "--quiet", "--plots", "none", "--out", filepath.Join(dir, "x"), "--reference", "nosuch.csv", filepath.Join(caps, "winding/full02.csv"))
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "reference nosuch.csv")
}
