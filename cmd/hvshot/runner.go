package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"time"

	"github.com/hvshot/hvshot/readers"
)

// collectFiles expands files and folders (recursively) into the captures to read,
// skipping hidden entries, raw descriptions, setup files and the output folder.
func collectFiles(args []string, outDir string) ([]string, error) {
	var out []string
	absOut, _ := filepath.Abs(outDir)
	skip := func(p string) bool {
		b := filepath.Base(p)
		return strings.HasPrefix(b, ".") || strings.HasSuffix(b, readers.SidecarSuffix) || b == SetupFileName
	}
	for _, a := range args {
		st, err := os.Stat(a)
		if err != nil {
			out = append(out, a) // reported as an error row
			continue
		}
		if !st.IsDir() {
			out = append(out, a)
			continue
		}
		var found []string
		err = filepath.WalkDir(a, func(p string, d os.DirEntry, err error) error {
			if err != nil {
				return nil
			}
			if p != a && skip(p) {
				if d.IsDir() {
					return filepath.SkipDir
				}
				return nil
			}
			if d.IsDir() {
				if ap, _ := filepath.Abs(p); outDir != "" && ap == absOut {
					return filepath.SkipDir
				}
				if _, err := os.Stat(filepath.Join(p, "report.html")); err == nil && p != a {
					return filepath.SkipDir // an earlier report folder
				}
				return nil
			}
			if d.Type().IsRegular() {
				found = append(found, p)
			}
			return nil
		})
		if err != nil {
			return nil, err
		}
		sort.Strings(found)
		out = append(out, found...)
	}
	return out, nil
}

// runBatch evaluates files with a bounded pool of workers and hands the shots to emit
// in input order. At most 2 x jobs files are in flight or waiting to be emitted, so
// memory is bounded by the jobs, not the folder. A cancelled context stops new work;
// what was done is still emitted.
func runBatch(ctx context.Context, files []string, cfg *Config, jobs int, emit func(Shot)) (interrupted bool) {
	if jobs < 1 {
		jobs = 1
	}
	type item struct{ i int }
	work := make(chan int)
	results := make(chan Shot, jobs)
	window := make(chan struct{}, 2*jobs)
	var wg sync.WaitGroup
	for w := 0; w < jobs; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range work {
				results <- Shot{Index: i, Path: files[i], Rows: analyzeFile(files[i], cfg)}
			}
		}()
	}
	go func() {
		defer close(work)
		for i := range files {
			select {
			case window <- struct{}{}:
			case <-ctx.Done():
				return
			}
			select {
			case work <- i:
			case <-ctx.Done():
				<-window
				return
			}
		}
	}()
	go func() {
		wg.Wait()
		close(results)
	}()
	pending := map[int]Shot{}
	next := 0
	for s := range results {
		pending[s.Index] = s
		for {
			p, ok := pending[next]
			if !ok {
				break
			}
			delete(pending, next)
			emit(p)
			next++
			<-window
		}
	}
	return next < len(files)
}

// progress draws done/total, rate and ETA on a terminal.
type progress struct {
	w     io.Writer
	total int
	start time.Time
	on    bool
	last  time.Time
}

func isTerminal(f *os.File) bool {
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

func newProgress(total int, quiet bool) *progress {
	return &progress{w: os.Stderr, total: total, start: time.Now(), on: !quiet && isTerminal(os.Stderr)}
}

func (p *progress) step(done int) {
	if !p.on {
		return
	}
	now := time.Now()
	if done < p.total && now.Sub(p.last) < 100*time.Millisecond {
		return
	}
	p.last = now
	el := now.Sub(p.start).Seconds()
	rate := float64(done) / el
	eta := "-"
	if rate > 0 {
		eta = (time.Duration(float64(p.total-done)/rate) * time.Second).Round(time.Second).String()
	}
	width := 30
	fill := width * done / max(p.total, 1)
	fmt.Fprintf(p.w, "\r[%s%s] %d/%d  %.1f shots/s  ETA %s ", strings.Repeat("#", fill), strings.Repeat(".", width-fill), done, p.total, rate, eta)
	if done == p.total {
		fmt.Fprintln(p.w)
	}
}
