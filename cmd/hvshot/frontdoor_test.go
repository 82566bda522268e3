package main

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/report/folder"
	"github.com/hvshot/hvshot/waveform/shot"
)

// A folder scan takes captures only: notes, a screenshot and an earlier report are
// left out and named on stderr; a file named on the command line still gets its row.
func TestFolderScanTakesCapturesOnly(t *testing.T) {
	dir := t.TempDir()
	writeShot(t, filepath.Join(dir, "a.csv"), spec(1.2, 50, 300e3, 1), "text")
	writeShot(t, filepath.Join(dir, "b.npy"), spec(1.2, 50, 300e3, 2), "npy")
	notes := filepath.Join(dir, "notes.txt")
	require.NoError(t, os.WriteFile(notes, []byte("Bay 2, shots fired after lunch.\nShot 3: the earth switch was checked twice.\nCharging 22 kV per stage.\n"), 0o644))
	// the first bytes of a PNG file (its signature and header chunk) stand for a scope screenshot
	require.NoError(t, os.WriteFile(filepath.Join(dir, "screen.png"), []byte("\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00\x03\x20"), 0o644))
	// an earlier run's report folder inside the captures folder
	code, _, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--out", filepath.Join(dir, "earlier"), dir)
	require.Equal(t, exitOK, code, stderr)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "export.csv"), mustRead(t, filepath.Join(dir, "earlier", "results.csv")), 0o644))
	code, out, stderr := runCmd("analyze", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(t.TempDir(), "o"), dir)
	assert.Equal(t, exitOK, code, stderr)
	assert.Equal(t, 2, strings.Count(out, "\n"), "two captures, two rows: %s", out)
	assert.Contains(t, stderr, "left out 4 (not captures)")
	assert.Contains(t, stderr, "earlier (an hvshot output folder)")
	assert.Contains(t, stderr, "notes.txt (text with no lines of numbers)")
	assert.Contains(t, stderr, "screen.png (a PNG image)")
	assert.Contains(t, stderr, "export.csv (an hvshot result file)")
	// named explicitly, it is read, and its error says why
	code, out, _ = runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(t.TempDir(), "o"), notes)
	assert.Equal(t, exitFileErrors, code)
	assert.Contains(t, out, `"verdict":"error"`)
	assert.Contains(t, out, "notes.txt")
}

// --out never takes a folder holding files hvshot did not write: the captures stay as
// they were and the message says what to do instead.
func TestOutIntoCapturesFolderRefused(t *testing.T) {
	dir := t.TempDir()
	writeShot(t, filepath.Join(dir, "a.csv"), spec(1.2, 50, 300e3, 1), "text")
	writeShot(t, filepath.Join(dir, "results.csv"), spec(1.2, 50, 300e3, 2), "text") // a capture under an output's name
	before := hashDir(t, dir)
	code, out, stderr := runCmd("analyze", "--quiet", "--out", dir, dir)
	assert.Equal(t, exitUsage, code, out)
	assert.Contains(t, stderr, "holds files hvshot did not write")
	assert.Contains(t, stderr, "e.g. "+filepath.Join(dir, "hvshot-report"))
	assert.Equal(t, before, hashDir(t, dir), "inputs untouched")
	// --force does not change that
	code, _, _ = runCmd("analyze", "--quiet", "--force", "--out", dir, dir)
	assert.Equal(t, exitUsage, code)
	assert.Equal(t, before, hashDir(t, dir))
}

// --force replaces the earlier run's outputs completely: no plot of the earlier run
// stays beside the new ones.
func TestForceReplacesEarlierRun(t *testing.T) {
	dir, out := t.TempDir(), filepath.Join(t.TempDir(), "out")
	writeShot(t, filepath.Join(dir, "a.csv"), spec(1.2, 50, 300e3, 1), "text")
	code, _, stderr := runCmd("analyze", "--quiet", "--out", out, dir)
	require.Equal(t, exitOK, code, stderr)
	require.NoError(t, os.Rename(filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv")))
	code, _, stderr = runCmd("analyze", "--quiet", "--force", "--out", out, dir)
	require.Equal(t, exitOK, code, stderr)
	var plots []string
	filepath.WalkDir(filepath.Join(out, "plots"), func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			plots = append(plots, filepath.Base(p))
		}
		return nil
	})
	assert.Equal(t, []string{"b.csv.1-divider.svg"}, plots)
}

// Two runs in the same second with the default output folder each get their own.
func TestDefaultOutputNeverCollides(t *testing.T) {
	dir := t.TempDir()
	caps := filepath.Join(dir, "caps")
	require.NoError(t, os.MkdirAll(caps, 0o755))
	writeShot(t, filepath.Join(caps, "a.csv"), spec(1.2, 50, 300e3, 1), "text")
	var reports []string
	for i := 0; i < 3; i++ {
		code, _, stderr := runCmd("analyze", "--plots", "none", caps)
		require.Equal(t, exitOK, code, stderr)
		reports = append(reports, strings.TrimSpace(strings.TrimPrefix(stderr[strings.LastIndex(stderr, "report: "):], "report: ")))
	}
	assert.Len(t, map[string]bool{reports[0]: true, reports[1]: true, reports[2]: true}, 3, reports)
	for _, r := range reports {
		assert.FileExists(t, r)
		assert.Equal(t, dir, filepath.Dir(filepath.Dir(r)), "beside the captures folder")
	}
	// run from inside the folder as "analyze .": beside it too, never inside an input
	wd, _ := os.Getwd()
	require.NoError(t, os.Chdir(caps))
	defer os.Chdir(wd)
	code, _, stderr := runCmd("analyze", "--plots", "none", ".")
	require.Equal(t, exitOK, code, stderr)
	r := strings.TrimSpace(strings.TrimPrefix(stderr[strings.LastIndex(stderr, "report: "):], "report: "))
	assert.Equal(t, dir, filepath.Dir(filepath.Dir(r)), "beside the captures folder, not in it: %s", r)
}

// watch evaluates a file once it is complete, replaces a file's rows when it changes,
// and counts files.
func TestWatchWaitsForCompleteFiles(t *testing.T) {
	if testing.Short() {
		t.Skip("waits for quiet periods")
	}
	dir, out := t.TempDir(), filepath.Join(t.TempDir(), "out")
	require.NoError(t, os.MkdirAll(out, 0o755))
	full := filepath.Join(t.TempDir(), "full.csv")
	writeShot(t, full, spec(1.2, 50, 300e3, 9), "text")
	data := mustRead(t, full)
	of, err := folder.Open(out, folder.Options{})
	require.NoError(t, err)
	defer of.Close()
	w := &worker{cfg: shot.NewConfig(), plots: report.NoPlot, out: of}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan int)
	var stdout, stderr bytes.Buffer
	go func() {
		done <- watchDir(ctx, dir, w, &analyzeOpts{format: "jsonl", quiet: true, jobs: 1, poll: 100 * time.Millisecond}, &env{stdout: &stdout, stderr: &stderr})
	}()
	p := filepath.Join(dir, "slow.csv")
	// written in two parts 1.5 s apart, as a slow copy over the network would
	require.NoError(t, os.WriteFile(p, data[:len(data)/2], 0o644))
	time.Sleep(1500 * time.Millisecond)
	f, err := os.OpenFile(p, os.O_APPEND|os.O_WRONLY, 0)
	require.NoError(t, err)
	f.Write(data[len(data)/2:])
	f.Close()
	waitFor := func(cond func() bool) {
		deadline := time.Now().Add(20 * time.Second)
		for time.Now().Before(deadline) && !cond() {
			time.Sleep(100 * time.Millisecond)
		}
	}
	waitFor(func() bool { return strings.Contains(stdout.String(), "slow.csv") })
	time.Sleep(500 * time.Millisecond)
	assert.Equal(t, 1, strings.Count(stdout.String(), "slow.csv"), "evaluated once, when whole: %s", stdout.String())
	assert.Contains(t, stdout.String(), `"verdict":"pass"`)
	// rewritten with another shot: its row replaces the old one
	require.NoError(t, os.WriteFile(p+".tmp", mustRead(t, full), 0o644))
	time.Sleep(1100 * time.Millisecond) // a new modification time
	writeShot(t, p+".new", spec(1.9, 50, 300e3, 10), "text")
	require.NoError(t, os.Rename(p+".new", p))
	os.Remove(p + ".tmp")
	waitFor(func() bool { return strings.Count(stdout.String(), "slow.csv") >= 2 })
	cancel()
	assert.Equal(t, exitInterrupted, <-done)
	b := mustRead(t, filepath.Join(out, "results.jsonl"))
	assert.Equal(t, 1, strings.Count(string(b), "slow.csv"), "one row for one file")
	assert.Contains(t, string(b), `"failures":["front_time"]`, "the new shot's row")
	var sum shot.Summary
	require.NoError(t, json.Unmarshal(mustRead(t, filepath.Join(out, "summary.json")), &sum))
	assert.Equal(t, 1, sum.Files)
}

// A plot that cannot be written is a warning on its row and a non-zero exit, never a
// row that claims a plot.
func TestPlotWriteFailureIsReported(t *testing.T) {
	if os.Geteuid() == 0 {
		t.Log("as root, permissions do not stop writes: a file in the way of the plots folder does")
	}
	dir, out := t.TempDir(), filepath.Join(t.TempDir(), "out")
	writeShot(t, filepath.Join(dir, "a.csv"), spec(1.2, 50, 300e3, 1), "text")
	require.NoError(t, os.MkdirAll(out, 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(out, ".hvshot-output"), nil, 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(out, "plots"), []byte("in the way"), 0o644))
	code, stdout, _ := runCmd("analyze", "--quiet", "--format", "jsonl", "--out", out, dir)
	assert.Equal(t, exitFileErrors, code)
	assert.Contains(t, stdout, `"code":"plot-failed"`)
	assert.Contains(t, stdout, `"verdict":"pass"`, "the evaluation itself stands")
	html := string(mustRead(t, filepath.Join(out, "report.html")))
	assert.Contains(t, html, "plot-failed")
}

// Whole captures written by pandas the way lab scripts write them
// (testdata/readers/make_lab_scripts.py): engineering units in snake_case names with
// pandas' index column, and SI names on a divider's low side. No flag but the ratio is
// needed, and the parameters are the SciPy reference's (impulse_refs.json,
// "handbook-lightning": T1 1.2023 us, T2 49.989 us) within the self-check's 0.5 %.
func TestLabScriptCaptures(t *testing.T) {
	var refs struct {
		Shapes map[string]map[string]float64 `json:"shapes"`
	}
	require.NoError(t, json.Unmarshal(mustRead(t, "../../testdata/reference/impulse_refs.json"), &refs))
	hb := refs.Shapes["handbook-lightning"]
	for _, c := range []struct {
		file string
		args []string
	}{
		{"lab_pandas_index_t_us_u_kv.csv", nil},
		{"lab_pandas_time_s_voltage_v_lowside.csv", []string{"--ratio", "1000", "--peak", "300kV"}},
	} {
		args := append([]string{"analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(t.TempDir(), "o")}, c.args...)
		code, out, stderr := runCmd(append(args, filepath.Join("../../testdata/readers", c.file))...)
		require.Equal(t, exitOK, code, c.file+": "+stderr+out)
		var row map[string]any
		require.NoError(t, json.Unmarshal([]byte(out), &row), c.file)
		assert.Equal(t, "lightning-full", row["shape"], c.file)
		assert.InEpsilon(t, 300e3, row["test_voltage_v"], 0.001, c.file)
		assert.InEpsilon(t, hb["front_time_s"], row["front_time_s"], 0.005, c.file)
		assert.InEpsilon(t, hb["time_to_half_s"], row["time_to_half_s"], 0.005, c.file)
	}
	// the low side without the ratio: not a silent pass, and a hint
	code, out, _ := runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(t.TempDir(), "o"), "--peak", "300kV",
		"../../testdata/readers/lab_pandas_time_s_voltage_v_lowside.csv")
	assert.Equal(t, exitOutOfTol, code)
	assert.Contains(t, out, "ratio-missing")
}

// The report says how it was made: the command and the ratios it set; synth never
// replaces a file unasked; a setup file's error points to its documentation; --jobs 0
// is refused.
func TestRunIsRecordedAndSmallMistakes(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "low.csv")
	code, _, stderr := runCmd("synth", "--ratio", "1000", "--out", p)
	require.Equal(t, exitOK, code, stderr)
	before := mustRead(t, p)
	code, _, stderr = runCmd("synth", "--seed", "2", "--out", p)
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "exists; use --force")
	assert.Equal(t, before, mustRead(t, p), "not replaced")
	code, _, _ = runCmd("synth", "--seed", "2", "--ratio", "1000", "--force", "--out", p) // a low-side capture again
	assert.Equal(t, exitOK, code)

	out := filepath.Join(dir, "out")
	code, _, stderr = runCmd("analyze", "--quiet", "--plots", "none", "--ratio", "1000", "--out", out, p)
	require.Equal(t, exitOK, code, stderr)
	html := string(mustRead(t, filepath.Join(out, "report.html")))
	assert.Contains(t, html, "every divider channel x 1000")
	assert.Contains(t, html, `<span class="arg">analyze</span> <span class="arg">--quiet</span> <span class="arg">--plots</span> <span class="arg">none</span> <span class="arg">--ratio</span> <span class="arg">1000</span>`, "the command as typed, each argument kept whole")
	var sum shot.Summary
	require.NoError(t, json.Unmarshal(mustRead(t, filepath.Join(out, "summary.json")), &sum))
	assert.Equal(t, []string{"hvshot", "analyze", "--quiet", "--plots", "none", "--ratio", "1000", "--out", out, p}, sum.Command)

	setup := filepath.Join(dir, "s.toml")
	require.NoError(t, os.WriteFile(setup, []byte("[nominal]\ntest_voltage = \"300\"\n"), 0o644))
	code, _, stderr = runCmd("analyze", "--setup", setup, p)
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "s.toml:2")
	assert.Contains(t, stderr, "docs/setup.md")
	code, _, stderr = runCmd("analyze", "--jobs", "0", p)
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "--jobs: at least 1")
}

// One series, one setup: captures in folders with different setup files (or some with
// none) are refused, whatever the order of the arguments; a capture is never judged
// under another folder's setup.
func TestSetupFilesBelongToTheirCaptures(t *testing.T) {
	dir := t.TempDir()
	day1, day2 := filepath.Join(dir, "series", "day1"), filepath.Join(dir, "series", "day2")
	require.NoError(t, os.MkdirAll(day1, 0o755))
	require.NoError(t, os.MkdirAll(day2, 0o755))
	writeShot(t, filepath.Join(day1, "low.csv"), spec(1.2, 50, 300, 1), "text") // the low side of a 1000:1 divider
	writeShot(t, filepath.Join(day2, "a.csv"), spec(1.2, 50, 300e3, 2), "text")
	require.NoError(t, os.WriteFile(filepath.Join(day1, shot.SetupFileName), []byte("[nominal]\ntest_voltage = \"300 kV\"\n[[channel]]\nindex = 1\nrole = \"divider\"\nratio = 1000\n"), 0o644))
	for _, args := range [][]string{{filepath.Join(dir, "series")}, {filepath.Join(day1, "low.csv"), filepath.Join(day2, "a.csv")}, {filepath.Join(day2, "a.csv"), filepath.Join(day1, "low.csv")}} {
		code, _, stderr := runCmd(append([]string{"analyze", "--quiet", "--plots", "none"}, args...)...)
		assert.Equal(t, exitUsage, code, args)
		assert.Contains(t, stderr, "different hvshot.toml files", args)
	}
	// each day on its own: day1's setup for day1
	code, out, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--out", filepath.Join(dir, "o1"), day1)
	require.NotEqual(t, exitUsage, code, stderr)
	var row map[string]any
	require.NoError(t, json.Unmarshal([]byte(out), &row))
	assert.InEpsilon(t, 300e3, row["test_voltage_v"], 0.01, "day1's ratio of 1000 applied to day1")
	assert.Equal(t, "pass", row["verdict"])
	// nothing to read at all is a usage error, and makes no folder
	code, _, stderr = runCmd("analyze", filepath.Join(dir, "nonexistent"))
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "no such file or folder")
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		assert.NotContains(t, e.Name(), "hvshot-report")
	}
}

// The demo takes its folder as a report's is taken: a folder holding someone's files is
// refused untouched, and a second demo into its own folder replaces the first.
func TestDemoFolderIsTakenSafely(t *testing.T) {
	dir := t.TempDir()
	notes := filepath.Join(dir, "notes.txt")
	require.NoError(t, os.WriteFile(notes, []byte("mine"), 0o644))
	code, _, stderr := runCmd("demo", "--plots", "none", "--out", dir)
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "did not write (notes.txt")
	entries, _ := os.ReadDir(dir)
	assert.Len(t, entries, 1, "nothing written beside the user's file")
	own := filepath.Join(dir, "demo")
	for run := 0; run < 2; run++ {
		code, _, stderr = runCmd("demo", "--plots", "none", "--out", own)
		require.Equal(t, exitOK, code, stderr)
	}
	caps, _ := os.ReadDir(filepath.Join(own, "captures"))
	assert.NotEmpty(t, caps)
	assert.FileExists(t, filepath.Join(own, "report", "report.html"))
}
