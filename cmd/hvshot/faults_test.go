package main

import (
	"bytes"
	"encoding/json"
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

	"github.com/hvshot/hvshot/waveform/shot"
)

// startBatch runs analyze over 40 invented shots as a process, one worker, and returns
// once it has written some plots: part-way through.
func startBatch(t *testing.T, out string) *exec.Cmd {
	dir := t.TempDir()
	one := filepath.Join(dir, "one.csv")
	writeShot(t, one, spec(1.2, 50, 300e3, 1), "text")
	data := mustRead(t, one)
	os.Remove(one)
	for i := 0; i < 40; i++ {
		require.NoError(t, os.WriteFile(filepath.Join(dir, fmt.Sprintf("s%02d.csv", i)), data, 0o644))
	}
	cmd := exec.Command(os.Args[0], "analyze", "--quiet", "--jobs", "1", "--out", out, dir)
	cmd.Env = append(os.Environ(), "HVSHOT_AS_MAIN=1")
	cmd.Stderr = new(bytes.Buffer)
	require.NoError(t, cmd.Start())
	deadline := time.Now().Add(30 * time.Second)
	for time.Now().Before(deadline) {
		if svgs, _ := filepath.Glob(filepath.Join(out, "plots", "*.svg")); len(svgs) >= 3 {
			break
		}
		time.Sleep(5 * time.Millisecond)
	}
	return cmd
}

// SIGINT, SIGTERM and SIGHUP (Ctrl-C, a service manager, a closed terminal) each stop a
// running batch with exit status 130 and every output written, whole, for the shots
// finished before the stop.
func TestSignalsStopCleanly(t *testing.T) {
	for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM, syscall.SIGHUP} {
		t.Run(sig.String(), func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "out")
			cmd := startBatch(t, out)
			require.NoError(t, cmd.Process.Signal(sig))
			err := cmd.Wait()
			var ee *exec.ExitError
			require.ErrorAs(t, err, &ee)
			assert.Equal(t, exitInterrupted, ee.ExitCode())
			var sum shot.Summary
			require.NoError(t, json.Unmarshal(mustRead(t, filepath.Join(out, "summary.json")), &sum))
			assert.True(t, sum.Interrupted)
			assert.Greater(t, sum.Files, 0)
			assert.Less(t, sum.Files, 40)
			assert.Contains(t, cmd.Stderr.(*bytes.Buffer).String(), fmt.Sprintf("interrupted after %d of 40 files", sum.Files), "said on stderr, even with --quiet")
			lines := strings.Split(strings.TrimSpace(string(mustRead(t, filepath.Join(out, "results.jsonl")))), "\n")
			assert.Len(t, lines, sum.Rows)
			assert.True(t, bytes.HasSuffix(bytes.TrimSpace(mustRead(t, filepath.Join(out, "report.html"))), []byte("</html>")))
			tmp, _ := filepath.Glob(filepath.Join(out, ".hvshot-tmp-*"))
			assert.Empty(t, tmp, "no temporary file left")
			assert.NoFileExists(t, filepath.Join(out, ".hvshot-lock"), "the lock released")
		})
	}
}

// A second run into the output folder of a running one is refused; the first finishes.
func TestTwoRunsIntoOneFolder(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	first := startBatch(t, out)
	dir := t.TempDir()
	writeShot(t, filepath.Join(dir, "x.csv"), spec(1.2, 50, 300e3, 2), "text")
	code, _, stderr := runCmd("analyze", "--quiet", "--force", "--out", out, dir)
	assert.Equal(t, exitUsage, code)
	assert.Contains(t, stderr, "another hvshot run")
	require.NoError(t, first.Wait(), "the first run finishes undisturbed")
	var sum shot.Summary
	require.NoError(t, json.Unmarshal(mustRead(t, filepath.Join(out, "summary.json")), &sum))
	assert.Equal(t, 40, sum.Files)
}
