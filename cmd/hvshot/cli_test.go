package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// inspect reads every dialect of the reader fixtures (NumPy and pandas files).
func TestInspectDialects(t *testing.T) {
	files, _ := filepath.Glob("../../testdata/readers/*")
	n := 0
	for _, f := range files {
		if strings.HasSuffix(f, ".py") || strings.HasSuffix(f, "expected.csv") {
			continue
		}
		code, out, stderr := runCmd("inspect", "--json", "--interval", "2ns", f)
		require.Equal(t, exitOK, code, f+": "+stderr)
		var info map[string]any
		require.NoError(t, json.Unmarshal([]byte(out), &info), f)
		assert.InDelta(t, 2e-9, info["interval_s"], 1e-15, f)
		assert.EqualValues(t, 200, info["samples"], f)
		n++
	}
	assert.Equal(t, 6, n)
	code, _, stderr := runCmd("inspect", "no-such-file.csv")
	assert.Equal(t, exitFileErrors, code)
	assert.Contains(t, stderr, "no-such-file.csv")
}

// synth writes every reader format and each reads back with its synthetic mark.
func TestSynthEveryFormat(t *testing.T) {
	dir := t.TempDir()
	for _, f := range []string{"text", "npy", "raw"} {
		p := filepath.Join(dir, "s."+f)
		code, _, stderr := runCmd("synth", "--format", f, "--noise", "0.002", "--seed", "3", "--out", p)
		require.Equal(t, exitOK, code, stderr)
		code, out, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(dir, "out-"+f), p)
		require.Equal(t, exitOK, code, stderr+out)
		var row map[string]any
		require.NoError(t, json.Unmarshal([]byte(strings.SplitN(out, "\n", 2)[0]), &row))
		assert.InEpsilon(t, 300e3, row["test_voltage_v"], 0.01, f)
		assert.InEpsilon(t, 1.2e-6, row["front_time_s"], 0.02, f)
		assert.InEpsilon(t, 50e-6, row["time_to_half_s"], 0.02, f)
	}
	b, err := os.ReadFile(filepath.Join(dir, "s.text"))
	require.NoError(t, err)
	assert.Contains(t, string(b), "synthetic")
	// the same seed gives the same file
	p2 := filepath.Join(dir, "again.text")
	runCmd("synth", "--format", "text", "--noise", "0.002", "--seed", "3", "--out", p2)
	assert.Equal(t, b, mustRead(t, p2))
}

// A coil and an antenna channel described by flags come out in amperes and V/m.
func TestSensorChannelsFromFlags(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "s.csv")
	code, _, stderr := runCmd("synth", "--out", p, "--coil", "M=1nH,L=50nH,R=50,peak=2kA,tau1=20us,tau2=1us",
		"--antenna", "gain=0.06,tau=26us,peak=20kV/m")
	require.Equal(t, exitOK, code, stderr)
	code, out, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(dir, "out"),
		"--role", "coil=coil", "--coil", "mutual=1nH,inductance=50nH,load_resistance=50",
		"--role", "antenna=antenna", "--antenna", "kind=calibrated,calibration=16.6667,droop_tau=26us", p)
	require.Equal(t, exitOK, code, stderr+out)
	rows := map[string]map[string]any{}
	for _, l := range strings.Split(strings.TrimSpace(out), "\n") {
		var m map[string]any
		require.NoError(t, json.Unmarshal([]byte(l), &m))
		rows[m["channel"].(string)] = m
	}
	require.Contains(t, rows, "coil")
	require.Contains(t, rows, "antenna")
	// synth's double exponential peaks at the given 2 kA; the antenna's field at 20 kV/m
	assert.InEpsilon(t, 2e3, rows["coil"]["peak_current_a"], 0.01)
	assert.InEpsilon(t, 20e3, rows["antenna"]["peak_field_v_per_m"], 0.01)
	assert.InEpsilon(t, 26e-6, rows["antenna"]["droop_tau_s"], 1e-9)
	assert.Equal(t, "pass", rows["divider"]["verdict"])
}

func TestUsageErrors(t *testing.T) {
	for _, args := range [][]string{{}, {"frobnicate"}, {"analyze"}, {"analyze", "--format", "xml", "x"}, {"analyze", "--nominal", "fast", "x"}} {
		code, _, _ := runCmd(args...)
		assert.Equal(t, exitUsage, code, args)
	}
	// --help goes to stderr with the examples and the exit statuses
	code, _, stderr := runCmd("analyze", "--help")
	assert.Equal(t, exitOK, code)
	assert.Contains(t, stderr, "examples:")
	assert.Contains(t, stderr, "exit status")
}

// A file list on stdin, and an output folder inside the input folder that a second run
// skips rather than reading its own results as captures.
func TestStdinListAndOwnOutputSkipped(t *testing.T) {
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv")
	writeShot(t, a, spec(1.2, 50, 300e3, 1), "text")
	writeShot(t, b, spec(1.2, 50, 300e3, 2), "text")
	var out, errb strings.Builder
	code := run([]string{"analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(dir, "report"), "-"},
		strings.NewReader(a+"\n"+b+"\n"), &out, &errb)
	require.Equal(t, exitOK, code, errb.String())
	assert.Equal(t, 2, strings.Count(out.String(), "\n"))
	// again over the whole folder, output elsewhere: report/ and hidden files are skipped
	require.NoError(t, os.WriteFile(filepath.Join(dir, ".hidden.csv"), []byte("junk"), 0o644))
	code, stdout, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(dir, "report2"), dir)
	require.Equal(t, exitOK, code, stderr)
	assert.Equal(t, 2, strings.Count(stdout, "\n"), stdout)
	assert.NotContains(t, stdout, "results.csv")
}

// The circuit simulations computed outside hvshot (testdata/reference/probe_refs.py,
// SciPy solve_ivp) come out of analyze in amperes and V/m at their known peaks.
func TestAnalyzeSimulatedSensorCaptures(t *testing.T) {
	var refs struct {
		Coil    map[string]map[string]float64 `json:"coil"`
		Antenna map[string]map[string]float64 `json:"antenna"`
	}
	require.NoError(t, json.Unmarshal(mustRead(t, "../../testdata/reference/probe_refs.json"), &refs))
	dir := t.TempDir()
	c := refs.Coil["loaded_sine"]
	a := refs.Antenna["step"]
	setup := fmt.Sprintf(`series = "simulated sensors"
[[channel]]
index = 1
role = "coil"
[channel.coil]
mutual = %g
inductance = %g
resistance = %g
load_resistance = %g
load_capacitance = %g
`, c["M_h"], c["L_h"], c["Rc_ohm"], c["R_ohm"], c["C_f"])
	require.NoError(t, os.WriteFile(filepath.Join(dir, "coil.toml"), []byte(setup), 0o644))
	code, out, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--setup", filepath.Join(dir, "coil.toml"),
		"--out", filepath.Join(dir, "o1"), "../../testdata/reference/coil_loaded_sine.npy")
	require.Equal(t, exitOK, code, stderr+out)
	var row map[string]any
	require.NoError(t, json.Unmarshal([]byte(out), &row))
	assert.InEpsilon(t, c["peak_a"], row["peak_current_a"], 0.01)

	setup = fmt.Sprintf("[[channel]]\nindex = 1\nrole = \"antenna\"\n[channel.antenna]\nkind = \"calibrated\"\ncalibration = %g\ndroop_tau = \"%gs\"\n", 1/a["gain"], a["tau_s"])
	require.NoError(t, os.WriteFile(filepath.Join(dir, "ant.toml"), []byte(setup), 0o644))
	code, out, stderr = runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--setup", filepath.Join(dir, "ant.toml"),
		"--out", filepath.Join(dir, "o2"), "../../testdata/reference/antenna_step.npy")
	require.Equal(t, exitOK, code, stderr+out)
	require.NoError(t, json.Unmarshal([]byte(out), &row))
	assert.InEpsilon(t, a["peak_v_per_m"], row["peak_field_v_per_m"], 0.01)
	assert.Equal(t, "antenna", row["role"])
}
