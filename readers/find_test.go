package readers

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

const capture = "t,U\n0,1\n1e-9,2\n2e-9,3\n"

// Links are followed, a loop of links is walked once, special files are named.
func TestFindFollowsLinksAndNamesSpecialFiles(t *testing.T) {
	root := t.TempDir()
	real := filepath.Join(t.TempDir(), "elsewhere")
	require.NoError(t, os.MkdirAll(real, 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(real, "b.csv"), []byte(capture), 0o644))
	require.NoError(t, os.WriteFile(filepath.Join(root, "a.csv"), []byte(capture), 0o644))
	require.NoError(t, os.Symlink(real, filepath.Join(root, "linked")))                              // a linked folder
	require.NoError(t, os.Symlink(filepath.Join(root, "a.csv"), filepath.Join(root, "same.csv")))    // a second name of a.csv
	require.NoError(t, os.Symlink(root, filepath.Join(real, "back")))                                // a loop
	require.NoError(t, os.Symlink(filepath.Join(root, "gone.csv"), filepath.Join(root, "dead.csv"))) // broken
	require.NoError(t, syscall.Mkfifo(filepath.Join(root, "pipe.csv"), 0o644))
	found, skipped, err := Find([]string{root}, nil)
	require.NoError(t, err)
	var rel []string
	for _, f := range found {
		r, _ := filepath.Rel(root, f)
		rel = append(rel, r)
	}
	assert.Equal(t, []string{"a.csv", filepath.Join("linked", "b.csv")}, rel, "each file once, through the link")
	joined := ""
	for _, s := range skipped {
		joined += s + "\n"
	}
	assert.Contains(t, joined, "pipe.csv (a named pipe (FIFO))")
	assert.Contains(t, joined, "dead.csv (a broken link)")
	assert.Contains(t, joined, "a link back into a folder being read")
	// a linked folder named without a trailing slash is a folder too
	found, _, err = Find([]string{filepath.Join(root, "linked")}, nil)
	require.NoError(t, err)
	assert.Len(t, found, 2, "b.csv and, through the loop, a.csv")
}

// A named pipe given by name is refused by its type: reading it never blocks.
func TestReadFileRefusesANamedPipe(t *testing.T) {
	p := filepath.Join(t.TempDir(), "pipe.csv")
	require.NoError(t, syscall.Mkfifo(p, 0o644))
	done := make(chan error, 1)
	go func() { _, err := ReadFileAll(p, Options{}); done <- err }()
	select {
	case err := <-done:
		require.Error(t, err)
		assert.True(t, errors.Is(err, ErrNotAFile))
		assert.Contains(t, err.Error(), "named pipe")
		assert.Contains(t, err.Error(), "pipe.csv")
	case <-time.After(5 * time.Second):
		t.Fatal("reading a named pipe blocked")
	}
}
