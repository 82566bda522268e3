// Package folder owns an output folder: it makes or takes one, marks it as hvshot's,
// locks it against a second run, and writes every file atomically.
//
// hvshot never writes over a file it did not create: a folder is taken only when it is
// new, empty, or marked by an earlier run, and a run removes only what runs write.
package folder

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"time"
)

const (
	// Marker marks a folder as hvshot's output: a later run may replace what is in it,
	// and a folder scan leaves it out.
	Marker = ".hvshot-output"
	// lockName is held while a run writes into the folder.
	lockName = ".hvshot-lock"
	// tmpPrefix starts every temporary file, so a later run can recognise and remove
	// those a killed run left.
	tmpPrefix = ".hvshot-tmp-"
)

// Owned reports whether dir carries the marker.
func Owned(dir string) bool {
	_, err := os.Stat(filepath.Join(dir, Marker))
	return err == nil
}

// Folder is an output folder held by this run.
type Folder struct {
	Path string
	lock string
}

// Options say what may be done to a folder an earlier run wrote.
type Options struct {
	// Report is the file whose presence means the folder holds an earlier run's
	// report; it is not replaced unless Replace is set.
	Report  string
	Replace bool
	// Clean names the earlier run's outputs to remove before this run writes, so that
	// two runs never mix (files and folders, relative to the folder).
	Clean []string
}

// New makes a new folder named stem in parent, with "-2", "-3", ... added until the
// name is free, so two runs never collide.
func New(parent, stem string) (*Folder, error) {
	path := filepath.Join(parent, stem)
	for n := 2; ; n++ {
		err := os.Mkdir(path, 0o755)
		if err == nil {
			return take(path)
		}
		if !os.IsExist(err) {
			return nil, fmt.Errorf("output folder %s: %v", path, err)
		}
		path = filepath.Join(parent, stem+"-"+strconv.Itoa(n))
	}
}

// Open takes the folder asked for: new, empty, or an earlier run's under o's terms. It
// refuses a folder with files hvshot did not write, a file in the folder's place, and a
// folder another run is writing into.
func Open(path string, o Options) (*Folder, error) {
	entries, err := os.ReadDir(path)
	switch {
	case os.IsNotExist(err):
		if err := os.MkdirAll(path, 0o755); err != nil {
			return nil, err
		}
	case err != nil:
		if st, serr := os.Stat(path); serr == nil && !st.IsDir() {
			return nil, fmt.Errorf("%s exists and is not a folder", path)
		}
		return nil, err
	case !Owned(path) && len(entries) > 0:
		var names []string
		for _, e := range entries[:min(3, len(entries))] {
			names = append(names, e.Name())
		}
		return nil, fmt.Errorf("%s holds files hvshot did not write (%s, ...); give a new or empty folder, e.g. %s", path, strings.Join(names, ", "), filepath.Join(path, "hvshot-report"))
	}
	f, err := take(path)
	if err != nil {
		return nil, err
	}
	if o.Report != "" {
		if _, err := os.Stat(filepath.Join(path, o.Report)); err == nil && !o.Replace {
			f.Close()
			return nil, fmt.Errorf("%s already holds a report; use --force to replace it or choose another --out", path)
		}
	}
	if o.Replace {
		for _, name := range o.Clean {
			if err := os.RemoveAll(filepath.Join(path, name)); err != nil {
				f.Close()
				return nil, err
			}
		}
	}
	return f, nil
}

// take locks the folder, marks it and removes the temporary files a killed run left.
func take(path string) (*Folder, error) {
	lock := filepath.Join(path, lockName)
	for try := 0; ; try++ {
		l, err := os.OpenFile(lock, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err == nil {
			fmt.Fprintf(l, "%d\n", os.Getpid())
			l.Close()
			break
		}
		if !os.IsExist(err) || try > 0 {
			return nil, fmt.Errorf("cannot lock %s: %v", path, err)
		}
		b, _ := os.ReadFile(lock)
		pid, _ := strconv.Atoi(strings.TrimSpace(string(b)))
		if pid > 0 && alive(pid) {
			return nil, fmt.Errorf("another hvshot run (process %d) is writing into %s; wait for it or choose another --out", pid, path)
		}
		os.Remove(lock) // a killed run's lock
	}
	f := &Folder{Path: path, lock: lock}
	if err := f.WriteBytes(Marker, []byte("hvshot output folder: hvshot may replace what it wrote here\n")); err != nil {
		f.Close()
		return nil, err
	}
	var stale []string
	filepath.WalkDir(path, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() && strings.HasPrefix(d.Name(), tmpPrefix) {
			stale = append(stale, p)
		}
		return nil
	})
	for _, p := range stale {
		os.Remove(p)
	}
	return f, nil
}

// alive reports whether a process runs: signal 0 checks without disturbing it.
func alive(pid int) bool {
	err := syscall.Kill(pid, 0)
	return err == nil || errors.Is(err, syscall.EPERM)
}

// Close releases the lock.
func (f *Folder) Close() error { return os.Remove(f.lock) }

// Write writes the file rel (slash-separated, folders made as needed) through a
// temporary file renamed into place once whole and synced, so that a reader, or a run
// killed mid-way, never sees half a file.
func (f *Folder) Write(rel string, write func(io.Writer) error) error {
	path := filepath.Join(f.Path, filepath.FromSlash(rel))
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	t, err := os.CreateTemp(filepath.Dir(path), tmpPrefix+filepath.Base(path)+"-*")
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(t, 1<<16)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = t.Chmod(0o644) // CreateTemp makes it private; results are for the lab to read
	}
	if err == nil {
		err = t.Sync()
	}
	if cerr := t.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(t.Name(), path)
	}
	if err != nil {
		os.Remove(t.Name())
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return nil
}

// WriteBytes is Write of b.
func (f *Folder) WriteBytes(rel string, b []byte) error {
	return f.Write(rel, func(w io.Writer) error { _, err := w.Write(b); return err })
}

// Read reads a file the run wrote.
func (f *Folder) Read(rel string) ([]byte, error) {
	return os.ReadFile(filepath.Join(f.Path, filepath.FromSlash(rel)))
}

// Stem is the default folder name for a run started at t.
func Stem(t time.Time) string { return "hvshot-report-" + t.Format("20060102-150405") }

// WriteFile writes one file atomically, as Write does, outside any output folder (a
// capture that synth makes, the demo's captures).
func WriteFile(path string, b []byte) error {
	return (&Folder{Path: filepath.Dir(path)}).WriteBytes(filepath.Base(path), b)
}
