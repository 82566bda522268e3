package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/atmos"
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
		{[]int{4}, []int{9}, true, "passed", exitOK, 2}, // the discharged shot's verdict is discharge, the setting-up ones pass on shape
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
				assert.Regexp(t, `"file":"setup1.csv".*"application":"not counted: 60 % of the level applied, a setting-up impulse","verdict":"pass"`, string(jl))
			}
			html, err := os.ReadFile(filepath.Join(out, "report.html"))
			require.NoError(t, err)
			assert.Contains(t, string(html), `id="test-outcome-0"`)
		})
	}
}

// An air log beside the setup: each shot is judged with the reading in force when it was
// fired (its kt key), the test's applied level from the reading at its last application;
// a broken log names its file, line and column. Invented readings.
func TestAirLogPerShot(t *testing.T) {
	dir := t.TempDir()
	caps := filepath.Join(dir, "caps")
	require.NoError(t, os.MkdirAll(caps, 0o755))
	start := time.Date(2026, 5, 4, 10, 0, 0, 0, time.UTC)
	for i := 1; i <= 3; i++ {
		p := filepath.Join(caps, fmt.Sprintf("shot%d.csv", i))
		writeShot(t, p, spec(1.2, 50, 150e3, uint64(i)), "text")
		at := start.Add(time.Duration(i) * time.Minute)
		require.NoError(t, os.Chtimes(p, at, at))
	}
	setup := "[nominal]\nshape = \"1.2/50\"\ntest_voltage = \"150 kV\"\n[atmosphere]\nlog = \"air.csv\"\ndischarge_path_m = 0.42\n[[test]]\nprocedure = \"A\"\n"
	require.NoError(t, os.WriteFile(filepath.Join(caps, shot.SetupFileName), []byte(setup), 0o644))
	logText := "time,pressure_kpa,temperature_c,rel_humidity_pct\n2026-05-04T10:00:00Z,100.0,20,50\n2026-05-04T10:02:30Z,95.0,25,70\n"
	require.NoError(t, os.WriteFile(filepath.Join(caps, "air.csv"), []byte(logText), 0o644))
	out := filepath.Join(dir, "out")
	code, stdout, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", out, caps)
	require.Equal(t, exitOK, code, stdout+stderr)
	kt := map[string]float64{}
	for _, l := range strings.Split(strings.TrimSpace(stdout), "\n") {
		var r struct {
			File string
			Kt   float64
		}
		require.NoError(t, json.Unmarshal([]byte(l), &r))
		kt[r.File] = r.Kt
	}
	want := func(p, tc, rh float64) float64 {
		c, err := atmos.CorrectWithstand(atmos.Conditions{Pressure_pa: p * 1e3, Temperature_c: tc, RelHumidity_pct: rh}, 150e3, 0.42)
		require.NoError(t, err)
		return c.Kt
	}
	assert.InDelta(t, want(100, 20, 50), kt["shot1.csv"], 1e-12)
	assert.InDelta(t, want(100, 20, 50), kt["shot2.csv"], 1e-12)
	assert.InDelta(t, want(95, 25, 70), kt["shot3.csv"], 1e-12, "the second reading is in force for the third shot")
	assert.Greater(t, math.Abs(kt["shot3.csv"]-kt["shot1.csv"]), 0.01)

	require.NoError(t, os.WriteFile(filepath.Join(caps, "air.csv"), []byte(logText+"2026-05-04T10:05:00Z,9x,25,70\n"), 0o644))
	code, _, stderr = runCmd("analyze", "--quiet", "--plots", "none", "--out", filepath.Join(dir, "out2"), caps)
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "air.csv:4:")
	assert.Contains(t, stderr, "not a number")
}
