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

// inspect reads every dialect of the NumPy and pandas fixtures (make_fixtures.py).
func TestInspectDialects(t *testing.T) {
	n := 0
	for _, name := range []string{"numpy_1d_f4be.npy", "numpy_savetxt.csv", "numpy_v1_2d.npy", "numpy_v2_i2.npy", "pandas_semicolon_decimal_comma.csv", "pandas_tab_crlf.txt"} {
		f := filepath.Join("../../testdata/readers", name)
		code, out, stderr := runCmd("inspect", "--json", "--interval", "2ns", f)
		require.Equal(t, exitOK, code, f+": "+stderr)
		var info map[string]any
		require.NoError(t, json.Unmarshal([]byte(out), &info), f)
		assert.InDelta(t, 2e-9, info["interval_s"], 1e-15, f)
		assert.EqualValues(t, 200, info["samples"], f)
		n++
	}
	assert.Equal(t, 6, n)
	// the self-describing binaries (make_selfdesc.py): their layout named, a segmented
	// capture one record a segment
	for name, segments := range map[string]int{"py_descriptor_sequence.cap": 4, "py_fixed_header.cap": 1, "py_preamble_block.cap": 1} {
		code, out, stderr := runCmd("inspect", "--json", filepath.Join("../../testdata/readers", name))
		require.Equal(t, exitOK, code, name+": "+stderr)
		lines := strings.Split(strings.TrimSpace(out), "\n")
		assert.Len(t, lines, segments, name)
		var info map[string]any
		require.NoError(t, json.Unmarshal([]byte(lines[0]), &info), name)
		assert.NotEmpty(t, info["layout"], name)
		assert.NotEmpty(t, info["notes"], name)
	}
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

// A coil and an antenna channel described by flags, in the setup file's words for
// both synth and analyze, come out in amperes and V/m.
func TestSensorChannelsFromFlags(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "s.csv")
	code, _, stderr := runCmd("synth", "--out", p, "--coil", "mutual=1nH,inductance=50nH,load_resistance=50,peak=2kA,tau1=20us,tau2=1us",
		"--antenna", "kind=calibrated,calibration=16.6667,droop_tau=26us,peak=20kV/m")
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

	// synth refuses what analyze would refuse, and keys it does not know
	for _, bad := range []string{"M=1nH,L=50nH,R=50,peak=2kA", "mutual=1nH,peak=2kA,freq=1MHz,damp=1us"} {
		code, _, stderr = runCmd("synth", "--out", filepath.Join(dir, "x.csv"), "--coil", bad)
		assert.Equal(t, exitUsage, code, bad)
		assert.Contains(t, stderr, "coil", bad)
	}
}

// Every usage error is one line on stderr naming the flag and the problem, then a
// pointer to the help; exit 64. Help goes to stdout.
func TestUsageErrors(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{}, "usage:"},
		{[]string{"frobnicate"}, "unknown command \"frobnicate\""},
		{[]string{"analyze"}, "no captures named"},
		{[]string{"analyze", "--format", "xml", "x"}, "--format: table, csv or jsonl, not \"xml\""},
		{[]string{"analyze", "--nominal", "fast", "x"}, "--nominal"},
		{[]string{"analyze", "--ouput", "x", "y"}, "unknown flag: --ouput (did you mean --out?)"},
		{[]string{"analyze", "--jobs", "abc", "x"}, "--jobs: \"abc\" is not a whole number"},
		{[]string{"analyze", "--bogus", "x"}, "unknown flag: --bogus"},
		{[]string{"analyze", "--peak", "300", "x"}, "--peak: \"300\" has no unit"},
		{[]string{"analyze", "--interval", "5", "x"}, "--interval: \"5\" has no unit"},
		{[]string{"analyze", "--ratio", "-3", "x"}, "--ratio"},
		{[]string{"analyze", "--role", "CH2=bdot", "x"}, "divider, coil, antenna, current or field"},
		{[]string{"analyze", "--role", "CH2=coil", "x"}, "--coil"},
		{[]string{"analyze", "--peak", "-300kV", "x"}, "a magnitude; the polarity comes from the record"},
		{[]string{"analyze", "--coil", "mutual=1nH,load_resistance=50", "x"}, "no --role NAME=coil uses"},
		{[]string{"analyze", "--stages", "8", "x"}, "stages and charging voltage go together"},
		{[]string{"analyze", "/no/such/folder"}, "no such file or folder"},
		{[]string{"watch", "--bogus", "x"}, "unknown flag: --bogus"},
		{[]string{"watch", "--poll", "often", "x"}, "--poll: \"often\" is not a duration"},
		{[]string{"inspect", "--bogus", "x"}, "unknown flag: --bogus"},
		{[]string{"inspect", "--time-column", "second", "x"}, "--time-column"},
		{[]string{"synth", "--bogus"}, "unknown flag: --bogus"},
		{[]string{"synth", "--seed", "x1", "--out", "a.csv"}, "--seed: a decimal whole number"},
		{[]string{"synth", "--bits", "many", "--out", "a.csv"}, "--bits: \"many\" is not a whole number"},
		{[]string{"synth", "--chop", "3", "--out", "a.csv"}, "--chop: \"3\" has no unit"},
		{[]string{"demo", "--bogus"}, "unknown flag: --bogus"},
		{[]string{"demo", "--plots", "gif"}, "--plots"},
		{[]string{"selfcheck", "--bogus"}, "unknown flag: --bogus"},
		{[]string{"help", "frobnicate"}, "no command"},
	}
	for _, c := range cases {
		code, out, stderr := runCmd(c.args...)
		assert.Equal(t, exitUsage, code, c.args)
		if len(c.args) > 0 {
			assert.Empty(t, out, "nothing on stdout: %v", c.args)
		}
		assert.Contains(t, stderr, c.want, c.args)
		if len(c.args) > 1 && c.args[0] != "help" {
			assert.Contains(t, stderr, "--help", "a pointer to the help: %v", c.args)
			assert.Equal(t, 2, strings.Count(stderr, "\n"), "one line and the pointer: %q", stderr)
		}
	}
	// Help: on stdout, each command its own, no Go type names.
	for _, cmd := range []string{"analyze", "watch", "inspect", "synth", "demo", "selfcheck"} {
		for _, args := range [][]string{{cmd, "--help"}, {"help", cmd}} {
			code, out, stderr := runCmd(args...)
			assert.Equal(t, exitOK, code, args)
			assert.Empty(t, stderr, args)
			assert.Contains(t, out, "usage: hvshot "+cmd, args)
			for _, goName := range []string{"float64Slice", "stringSlice", "float64", "[=true|false]", "uint64"} {
				assert.NotContains(t, out, goName, args)
			}
		}
	}
	_, out, _ := runCmd("watch", "--help")
	assert.Contains(t, out, "as it lands")
	assert.NotContains(t, out, "Writes results.csv, results.jsonl")
	_, out, _ = runCmd("analyze", "--help")
	assert.Contains(t, out, "examples:")
	assert.Contains(t, out, "exit status")
	// Seeds are decimal: 09 is nine, 07 is seven, not octal.
	dir := t.TempDir()
	for _, s := range [][2]string{{"09", "9"}, {"07", "7"}} {
		a, b := filepath.Join(dir, "a"+s[0]+".csv"), filepath.Join(dir, "b"+s[1]+".csv")
		code, _, stderr := runCmd("synth", "--noise", "0.01", "--seed", s[0], "--out", a)
		require.Equal(t, exitOK, code, stderr)
		runCmd("synth", "--noise", "0.01", "--seed", s[1], "--out", b)
		assert.Equal(t, mustRead(t, b), mustRead(t, a), "seed %s is %s", s[0], s[1])
	}
	// synth --out - writes the capture to stdout, and no file named -.
	code, out, stderr := runCmd("synth", "--out", "-")
	require.Equal(t, exitOK, code, stderr)
	assert.True(t, strings.HasPrefix(out, "# "), "a capture on stdout")
	_, err := os.Stat("-")
	assert.True(t, os.IsNotExist(err), "no file named -")
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
