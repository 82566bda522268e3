package main

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/json"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/report/folder"
	"github.com/hvshot/hvshot/waveform/shot"
	"github.com/hvshot/hvshot/waveform/synth"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/golden")

func TestMain(m *testing.M) {
	// Re-exec hook: the kill test runs this binary as hvshot itself.
	if os.Getenv("HVSHOT_AS_MAIN") == "1" {
		os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

func runCmd(args ...string) (int, string, string) {
	var out, errb bytes.Buffer
	code := run(args, strings.NewReader(""), &out, &errb)
	return code, out.String(), errb.String()
}

func TestSelfcheckPasses(t *testing.T) {
	code, out, _ := runCmd("selfcheck")
	require.Equal(t, exitOK, code, out)
	assert.Contains(t, out, " 0 missed")
	assert.Contains(t, out, "handbook-lightning (clean)")
}

func writeShot(t *testing.T, path string, s synth.Spec, format string) {
	rec, err := synth.Generate(s)
	require.NoError(t, err)
	require.NoError(t, writeCapture(path, format, rec))
}

func spec(front, tail, peak float64, seed uint64) synth.Spec {
	return synth.Spec{Front_s: front * 1e-6, Tail_s: tail * 1e-6, Peak_v: peak, Noise: 0.002, PreTrigger_s: 4e-6,
		Interval_s: 10e-9, Duration_s: 120e-6, Seed: seed}
}

func normalise(b []byte, dir string) []byte {
	return bytes.ReplaceAll(b, []byte(dir+string(filepath.Separator)), []byte("<dir>/"))
}

// Golden files of a small fixed series: synthetic shots (invented for the test).
func TestGoldenSeries(t *testing.T) {
	dir := t.TempDir()
	caps := filepath.Join(dir, "caps")
	require.NoError(t, os.MkdirAll(caps, 0o755))
	writeShot(t, filepath.Join(caps, "a.csv"), spec(1.2, 50, 300e3, 1), "text")
	writeShot(t, filepath.Join(caps, "b.npy"), spec(1.9, 50, 300e3, 2), "npy")
	s := spec(1.2, 50, 300e3, 3)
	s.Chop_s, s.Collapse_s = 3e-6, 0.1e-6
	writeShot(t, filepath.Join(caps, "c.bin"), s, "raw")
	// a fixed modification time: the firing time of captures that state none
	fired := time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC)
	for _, f := range []string{"a.csv", "b.npy", "c.bin"} {
		require.NoError(t, os.Chtimes(filepath.Join(caps, f), fired, fired))
	}
	out := filepath.Join(dir, "out")
	code, stdout, stderr := runCmd("analyze", "--quiet", "--plots", "none", "--format", "jsonl", "--nominal", "1.2/50", "--peak", "300kV", "--out", out, caps)
	require.Equal(t, exitOutOfTol, code, stderr)
	for _, name := range []string{"results.csv", "results.jsonl"} {
		got, err := os.ReadFile(filepath.Join(out, name))
		require.NoError(t, err)
		got = normalise(got, caps)
		golden := filepath.Join("../../testdata/golden", "series_"+name)
		if *update {
			require.NoError(t, os.WriteFile(golden, got, 0o644))
		}
		want, err := os.ReadFile(golden)
		require.NoError(t, err, "run go test ./cmd/hvshot -update to create the golden files")
		assert.Equal(t, string(want), string(got), name)
	}
	assert.Equal(t, string(normalise([]byte(stdout), caps)), string(normalise(mustRead(t, filepath.Join(out, "results.jsonl")), caps)))
	// Absent values are omitted, never zero-filled; magnitudes positive.
	sc := bufio.NewScanner(strings.NewReader(stdout))
	for sc.Scan() {
		var m map[string]any
		require.NoError(t, json.Unmarshal(sc.Bytes(), &m))
		if m["shape"] == "lightning-chopped" {
			assert.NotContains(t, m, "time_to_half_s")
			assert.Contains(t, m, "chop_time_s")
		}
		if v, ok := m["test_voltage_v"].(float64); ok {
			assert.Greater(t, v, 0.0)
		}
	}
}

func mustRead(t *testing.T, p string) []byte {
	b, err := os.ReadFile(p)
	require.NoError(t, err)
	return b
}

func hashDir(t *testing.T, dir string) map[string][32]byte {
	out := map[string][32]byte{}
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() {
			b, _ := os.ReadFile(p)
			out[p] = sha256.Sum256(b)
		}
		return nil
	})
	return out
}

// A folder with good shots and every kind of bad file: each file gets a row, the exit
// status says what happened, inputs stay byte-identical, no temporary file remains.
func TestBadFilesFolder(t *testing.T) {
	dir := t.TempDir()
	writeShot(t, filepath.Join(dir, "good1.csv"), spec(1.2, 50, 300e3, 1), "text")
	writeShot(t, filepath.Join(dir, "good2.csv"), spec(1.25, 48, 300e3, 2), "text")
	require.NoError(t, os.WriteFile(filepath.Join(dir, "empty.csv"), nil, 0o644))
	full := mustRead(t, filepath.Join(dir, "good1.csv"))
	require.NoError(t, os.WriteFile(filepath.Join(dir, "truncated.csv"), full[:len(full)/2-7], 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(dir, "cutearly.csv"), full[:len(full)/8-3], 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(dir, "garbage.csv"), []byte("\x00\x13\x99 not a capture \xff\xfe"), 0o644))
	noImp := spec(1.2, 50, 300e3, 4)
	noImp.Peak_v, noImp.Noise, noImp.Offset_v = 1, 50, 0
	writeShot(t, filepath.Join(dir, "noimpulse.csv"), noImp, "text")
	clip := spec(1.2, 50, 300e3, 5)
	clip.Range_v, clip.Bits = 250e3, 10
	writeShot(t, filepath.Join(dir, "clipped.csv"), clip, "text")
	require.NoError(t, os.WriteFile(filepath.Join(dir, "otherchannel.csv"), bytes.Replace(full, []byte("divider [V]"), []byte("probe7 [V]"), 1), 0o644))
	setup := "series = \"test\"\n[[channel]]\nmatch = \"divider\"\nrole = \"divider\"\n"
	require.NoError(t, os.WriteFile(filepath.Join(dir, shot.SetupFileName), []byte(setup), 0o644))
	before := hashDir(t, dir)
	out := filepath.Join(t.TempDir(), "out")
	code, stdout, stderr := runCmd("analyze", "--quiet", "--plots", "svg", "--format", "jsonl", "--out", out, dir)
	assert.Equal(t, exitFileErrors, code, stderr)
	rows := map[string]map[string]any{}
	sc := bufio.NewScanner(strings.NewReader(stdout))
	for sc.Scan() {
		var m map[string]any
		require.NoError(t, json.Unmarshal(sc.Bytes(), &m))
		rows[filepath.Base(m["file"].(string))] = m
	}
	for _, f := range []string{"good1.csv", "good2.csv", "empty.csv", "truncated.csv", "cutearly.csv", "garbage.csv", "noimpulse.csv", "clipped.csv", "otherchannel.csv"} {
		require.Contains(t, rows, f, "every file gets a row")
	}
	assert.Equal(t, "pass", rows["good1.csv"]["verdict"])
	for _, f := range []string{"empty.csv", "garbage.csv", "noimpulse.csv", "otherchannel.csv"} {
		assert.Equal(t, "error", rows[f]["verdict"], f)
		assert.Contains(t, rows[f]["error"], f, "the error names the file")
	}
	assert.Contains(t, rows["noimpulse.csv"]["error"], "no impulse")
	assert.Contains(t, rows["empty.csv"]["error"], "empty")
	assert.Contains(t, rows["otherchannel.csv"]["error"], "probe7")
	// a file cut off mid-row: the broken last row is left out, named by its line, and the
	// rest is judged; cut before the tail reaches half-value, T2 is unmeasured, never a pass
	for _, f := range []string{"truncated.csv", "cutearly.csv"} {
		assert.Contains(t, fmt.Sprint(rows[f]["warnings"]), "the last, has no line end and is left out", f)
		assert.Regexp(t, `line [0-9]+`, fmt.Sprint(rows[f]["warnings"]), f)
	}
	assert.Equal(t, "incomplete", rows["cutearly.csv"]["verdict"], fmt.Sprint(rows["cutearly.csv"]))
	assert.Contains(t, rows["cutearly.csv"]["unmeasured"], "time_to_half")
	assert.Contains(t, stdout, `"code":"clipped"`)
	assert.Equal(t, before, hashDir(t, dir), "inputs unchanged")
	leftovers, _ := filepath.Glob(filepath.Join(out, ".*tmp*"))
	assert.Empty(t, leftovers)
	// a second run refuses to overwrite the report without --force
	code, _, stderr = runCmd("analyze", "--quiet", "--out", out, dir)
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "--force")
}

// Killing the process mid-batch leaves either no output file or a whole one.
func TestKilledRunLeavesNoHalfFile(t *testing.T) {
	dir := t.TempDir()
	for i := 0; i < 40; i++ {
		writeShot(t, filepath.Join(dir, "s"+string(rune('a'+i%26))+string(rune('a'+i/26))+".csv"), spec(1.2, 50, 300e3, uint64(i)), "text")
	}
	out := filepath.Join(t.TempDir(), "out")
	cmd := exec.Command(os.Args[0], "analyze", "--quiet", "--jobs", "1", "--out", out, dir)
	cmd.Env = append(os.Environ(), "HVSHOT_AS_MAIN=1")
	require.NoError(t, cmd.Start())
	// kill it once it is part-way: some plots written, the batch not finished
	deadline := time.Now().Add(30 * time.Second)
	for time.Now().Before(deadline) {
		if svgs, _ := filepath.Glob(filepath.Join(out, "plots", "*.svg")); len(svgs) >= 3 {
			break
		}
		time.Sleep(5 * time.Millisecond)
	}
	cmd.Process.Signal(syscall.SIGKILL)
	cmd.Wait()
	ws, ok := cmd.ProcessState.Sys().(syscall.WaitStatus)
	require.True(t, ok && ws.Signaled(), "the run was killed mid-way, not finished")
	// Temporary files (".name.tmp-*") may be left by the kill; every file under its
	// real name must be whole.
	entries, _ := os.ReadDir(out)
	for _, e := range entries {
		name := e.Name()
		if e.IsDir() || strings.HasPrefix(name, ".") {
			continue
		}
		b := mustRead(t, filepath.Join(out, name))
		switch name {
		case "results.jsonl":
			for _, l := range strings.Split(strings.TrimSpace(string(b)), "\n") {
				var m map[string]any
				assert.NoError(t, json.Unmarshal([]byte(l), &m), "a whole line")
			}
		case "results.csv":
			_, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
			assert.NoError(t, err)
		case "summary.json":
			var m map[string]any
			assert.NoError(t, json.Unmarshal(b, &m))
		case "report.html":
			assert.True(t, bytes.HasSuffix(bytes.TrimSpace(b), []byte("</html>")))
		default:
			t.Errorf("unexpected output file %s", name)
		}
	}
	// Plots are written atomically too: every SVG present is complete.
	svgs, _ := filepath.Glob(filepath.Join(out, "plots", "*.svg"))
	for _, s := range svgs {
		assert.True(t, bytes.HasSuffix(bytes.TrimSpace(mustRead(t, s)), []byte("</svg>")), s)
	}
}

func TestInterruptKeepsWhatIsDone(t *testing.T) {
	dir := t.TempDir()
	var files []input
	for i := 0; i < 6; i++ {
		p := filepath.Join(dir, "s"+string(rune('a'+i))+".csv")
		writeShot(t, p, spec(1.2, 50, 300e3, uint64(i)), "text")
		files = append(files, input{p, filepath.Base(p)})
	}
	w := &worker{cfg: shot.NewConfig(), plots: report.NoPlot}
	ctx, cancel := context.WithCancel(context.Background())
	var got []int
	interrupted := runBatch(ctx, files, w, 1, func(i int, _ []*shot.Shot) {
		got = append(got, i)
		if len(got) == 2 {
			cancel()
		}
	})
	assert.True(t, interrupted)
	require.GreaterOrEqual(t, len(got), 2)
	assert.Less(t, len(got), 6)
	for i, k := range got {
		assert.Equal(t, i, k, "in input order")
	}
}

func TestWatchPicksUpNewFile(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(t.TempDir(), "out")
	require.NoError(t, os.MkdirAll(out, 0o755))
	of, err := folder.Open(out, folder.Options{})
	require.NoError(t, err)
	defer of.Close()
	w := &worker{cfg: shot.NewConfig(), plots: report.NoPlot, out: of}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan int)
	var stdout, stderr bytes.Buffer
	go func() {
		done <- watchDir(ctx, dir, w, &analyzeOpts{format: "jsonl", jobs: 1, poll: 100 * time.Millisecond}, &env{stdout: &stdout, stderr: &stderr})
	}()
	time.Sleep(300 * time.Millisecond)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("Bay 2: the earth switch was checked twice.\n"), 0o644))
	// copy a capture in: written elsewhere, then moved, as a scope's save would land
	tmp := filepath.Join(t.TempDir(), "new.csv")
	writeShot(t, tmp, spec(1.2, 50, 300e3, 9), "text")
	require.NoError(t, os.WriteFile(filepath.Join(dir, "partial.csv"), []byte("t,U\n0,1\n"), 0o644))
	require.NoError(t, os.Rename(tmp, filepath.Join(dir, "new.csv")))
	deadline := time.Now().Add(20 * time.Second)
	for time.Now().Before(deadline) {
		if b, err := os.ReadFile(filepath.Join(out, "results.jsonl")); err == nil && bytes.Contains(b, []byte("new.csv")) {
			break
		}
		time.Sleep(100 * time.Millisecond)
	}
	cancel()
	assert.Equal(t, exitInterrupted, <-done, "a stopped watch says it was interrupted")
	b := mustRead(t, filepath.Join(out, "results.jsonl"))
	assert.Contains(t, string(b), "new.csv")
	assert.Contains(t, string(b), "partial.csv", "a bad file gets its error row and watching goes on")
	assert.FileExists(t, filepath.Join(out, "report.html"))
	assert.Equal(t, 1, strings.Count(stderr.String(), "notes.txt (text with no lines of numbers)"), "a file left out is named, once: %s", stderr.String())
}
