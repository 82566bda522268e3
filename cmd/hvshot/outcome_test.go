package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/shot"
)

// A withstand test by procedure B (IEC 60060-1:2010 clause 7, from memory: 15 impulses,
// at most 2 disruptive discharges) through analyze, on invented captures: 15 impulses at
// the specified 300 kV, with 0, 2 or 3 of them discharged (a collapse on the tail, or one
// marked by hand in the setup), and two setting-up impulses at 60 % that are listed and
// not counted.
func TestWithstandProcedureB(t *testing.T) {
	for _, c := range []struct {
		discharged []int // shots whose record collapses on the tail
		marked     []int // shots marked discharged in the setup
		settingUp  bool
		verdict    string
		status     int
		discharges int
	}{
		{nil, nil, false, "passed", exitOK, 0},
		{[]int{4}, []int{9}, true, "passed", exitOutOfTol, 2}, // the discharged shot is out of the full impulse's shape
		{[]int{4, 11}, []int{9}, true, "failed", exitTestFailed, 3},
	} {
		t.Run(fmt.Sprint(c.discharges), func(t *testing.T) {
			dir := t.TempDir()
			caps := filepath.Join(dir, "caps")
			require.NoError(t, os.MkdirAll(caps, 0o755))
			fired := time.Date(2026, 5, 4, 10, 0, 0, 0, time.UTC)
			name := func(i int) string { return fmt.Sprintf("shot%02d.csv", i) }
			for i := 1; i <= 15; i++ {
				s := spec(1.2, 50, 300e3, uint64(i))
				for _, d := range c.discharged {
					if d == i {
						s.Chop_s, s.Collapse_s = 15e-6, 0.1e-6
					}
				}
				writeShot(t, filepath.Join(caps, name(i)), s, "text")
				at := fired.Add(time.Duration(i) * time.Minute)
				require.NoError(t, os.Chtimes(filepath.Join(caps, name(i)), at, at))
			}
			if c.settingUp {
				for i, n := range []string{"setup1.csv", "setup2.csv"} {
					writeShot(t, filepath.Join(caps, n), spec(1.2, 50, 180e3, uint64(40+i)), "text")
				}
			}
			marks := ""
			for _, m := range c.marked {
				marks += fmt.Sprintf("%q, ", name(m))
			}
			setup := "series = \"invented: procedure B check\"\n[nominal]\nshape = \"1.2/50\"\ntest_voltage = \"300 kV\"\n[[test]]\nprocedure = \"B\"\ndischarged = [" + marks + "\"shot99\"]\n"
			require.NoError(t, os.WriteFile(filepath.Join(caps, shot.SetupFileName), []byte(setup), 0o644))
			out := filepath.Join(dir, "out")
			code, stdout, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--out", out, caps)
			require.Equal(t, c.status, code, stderr)
			assert.Contains(t, stdout, "test: withstand test, procedure B, 300.0 kV specified")
			assert.Contains(t, stdout, "positive: "+map[string]string{"passed": "PASSED", "failed": "FAILED"}[c.verdict])
			assert.Contains(t, stdout, "marked in the setup, not among the shots: shot99")
			b, err := os.ReadFile(filepath.Join(out, "summary.json"))
			require.NoError(t, err)
			var sum struct {
				Tests []struct {
					NotCounted int `json:"not_counted"`
					Results    []struct {
						Verdict    string
						Applied    int
						Discharges int
					}
				}
			}
			require.NoError(t, json.Unmarshal(b, &sum))
			require.Len(t, sum.Tests, 1)
			require.Len(t, sum.Tests[0].Results, 1)
			r := sum.Tests[0].Results[0]
			assert.Equal(t, c.verdict, r.Verdict)
			assert.Equal(t, c.discharges, r.Discharges)
			assert.Equal(t, 15, r.Applied)
			assert.Equal(t, map[bool]int{true: 2}[c.settingUp], sum.Tests[0].NotCounted)
			jl, err := os.ReadFile(filepath.Join(out, "results.jsonl"))
			require.NoError(t, err)
			for _, d := range c.discharged {
				assert.Regexp(t, `"file":"`+name(d)+`".*"discharge":"tail","discharge_source":"record","application":"counted"`, string(jl))
			}
			for _, m := range c.marked {
				assert.Regexp(t, `"file":"`+name(m)+`".*"discharge":"marked","discharge_source":"setup"`, string(jl))
			}
			if c.settingUp {
				assert.Regexp(t, `"file":"setup1.csv".*"application":"not counted: 60 % of the level applied, a setting-up impulse"`, string(jl))
			}
			html, err := os.ReadFile(filepath.Join(out, "report.html"))
			require.NoError(t, err)
			assert.Contains(t, string(html), `id="test-outcome-0"`)
		})
	}
}
