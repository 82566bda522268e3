package folder

import (
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestNewNeverCollides(t *testing.T) {
	dir := t.TempDir()
	var paths []string
	for i := 0; i < 3; i++ {
		f, err := New(dir, "run")
		require.NoError(t, err)
		paths = append(paths, filepath.Base(f.Path))
		require.NoError(t, f.Close())
	}
	assert.Equal(t, []string{"run", "run-2", "run-3"}, paths)
}

// A folder with files hvshot did not write is never taken; an earlier run's is, on the
// terms given; a run's temporary files and lock are its own.
func TestOpen(t *testing.T) {
	dir := t.TempDir()
	foreign := filepath.Join(dir, "captures")
	require.NoError(t, os.MkdirAll(foreign, 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(foreign, "results.csv"), []byte("a capture"), 0o644))
	_, err := Open(foreign, Options{Replace: true, Clean: []string{"results.csv"}})
	require.Error(t, err)
	assert.Contains(t, err.Error(), "holds files hvshot did not write (results.csv")
	b, _ := os.ReadFile(filepath.Join(foreign, "results.csv"))
	assert.Equal(t, "a capture", string(b), "untouched")

	out := filepath.Join(dir, "out")
	f, err := Open(out, Options{Report: "report.html"})
	require.NoError(t, err)
	require.NoError(t, f.WriteBytes("report.html", []byte("one")))
	require.NoError(t, f.WriteBytes("plots/a/b.svg", []byte("<svg/>")))
	// a second run while the first holds the folder is refused
	_, err = Open(out, Options{Report: "report.html", Replace: true})
	require.Error(t, err)
	assert.Contains(t, err.Error(), "another hvshot run")
	require.NoError(t, f.Close())
	// afterwards: not without Replace; with it, the earlier outputs go
	_, err = Open(out, Options{Report: "report.html"})
	assert.ErrorContains(t, err, "--force")
	f, err = Open(out, Options{Report: "report.html", Replace: true, Clean: []string{"report.html", "plots"}})
	require.NoError(t, err)
	assert.NoFileExists(t, filepath.Join(out, "plots", "a", "b.svg"))
	assert.NoFileExists(t, filepath.Join(out, "report.html"))
	require.NoError(t, f.Close())
}

// A killed run's lock and temporary files do not block or litter the next run.
func TestStaleLockAndTemporaryFiles(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	f, err := Open(out, Options{})
	require.NoError(t, err)
	require.NoError(t, f.Close())
	// a process that has ended: its lock is stale
	cmd := exec.Command("true")
	require.NoError(t, cmd.Run())
	require.NoError(t, os.WriteFile(filepath.Join(out, lockName), []byte(strconv.Itoa(cmd.Process.Pid)+"\n"), 0o644))
	require.NoError(t, os.MkdirAll(filepath.Join(out, "plots"), 0o755))
	tmp := filepath.Join(out, "plots", tmpPrefix+"x.svg-123")
	require.NoError(t, os.WriteFile(tmp, []byte("half a"), 0o644))
	f, err = Open(out, Options{})
	require.NoError(t, err, "a stale lock is taken over")
	assert.NoFileExists(t, tmp, "a killed run's temporary file is removed")
	require.NoError(t, f.Close())
}

// A write that fails half-way leaves neither the file nor a temporary one.
func TestWriteIsAtomic(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	f, err := Open(out, Options{})
	require.NoError(t, err)
	defer f.Close()
	require.NoError(t, f.WriteBytes("a.txt", []byte("whole")))
	err = f.Write("b.txt", func(w io.Writer) error {
		w.Write([]byte("half"))
		return errors.New("disk full")
	})
	require.ErrorContains(t, err, "disk full")
	assert.NoFileExists(t, filepath.Join(out, "b.txt"))
	b, err := f.Read("a.txt")
	require.NoError(t, err)
	assert.Equal(t, "whole", string(b))
	entries, _ := os.ReadDir(out)
	for _, e := range entries {
		assert.NotContains(t, e.Name(), tmpPrefix)
	}
}
