package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"time"
)

// watchDir evaluates each capture that appears in dir once its size and modification
// time have held still for one poll, appends it to the outputs and refreshes the report.
// Files present at the start are evaluated first. It stops cleanly when ctx ends.
func watchDir(ctx context.Context, dir string, cfg *Config, f *analyzeFlags, stdout, stderr io.Writer) int {
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		fmt.Fprintf(stderr, "hvshot watch: %s is not a folder\n", dir)
		return exitUsage
	}
	type seen struct {
		size int64
		mod  time.Time
		done bool
	}
	files := map[string]*seen{}
	var rows []Row
	count := 0
	status := exitOK
	if !f.quiet {
		fmt.Fprintf(stderr, "watching %s (Ctrl-C to stop); outputs in %s\n", dir, cfg.OutDir)
	}
	tick := time.NewTicker(f.poll)
	defer tick.Stop()
	for {
		list, _ := collectFiles([]string{dir}, cfg.OutDir)
		var ready []string
		for _, p := range list {
			st, err := os.Stat(p)
			if err != nil {
				continue
			}
			s, ok := files[p]
			if !ok {
				files[p] = &seen{size: st.Size(), mod: st.ModTime()}
				continue
			}
			if s.done {
				if st.Size() != s.size || !st.ModTime().Equal(s.mod) {
					// rewritten: evaluate again once it settles
					s.done, s.size, s.mod = false, st.Size(), st.ModTime()
				}
				continue
			}
			if st.Size() == s.size && st.ModTime().Equal(s.mod) && st.Size() > 0 {
				ready = append(ready, p)
				s.done = true
			} else {
				s.size, s.mod = st.Size(), st.ModTime()
			}
		}
		sort.Strings(ready)
		if len(ready) > 0 {
			batch, _ := analyzeAll(ctx, ready, cfg, &analyzeFlags{format: f.format, quiet: true, jobs: f.jobs}, count == 0, stdout, stderr)
			if f.format == "table" {
				for i := range batch {
					r := &batch[i]
					fmt.Fprintf(stdout, "%s  %s  %s  Ut %s kV  T1 %s us  T2 %s us  %s\n", shotName(r.File), dash(r.Channel), dash(r.Shape),
						eng(r.TestVoltageV, 1e-3, 1), eng(r.FrontTime_s, 1e6, 3), eng(r.TimeToHalf_s, 1e6, 2), verdictWord(r.Verdict)+" "+r.failureWords())
				}
			}
			rows = append(rows, batch...)
			count += len(ready)
			sum := summarize(seriesName(cfg), count, rows)
			if err := writeOutputs(cfg, rows, sum); err != nil {
				fmt.Fprintln(stderr, "hvshot watch: writing outputs:", err)
				return exitFileErrors
			}
			status = exitStatus(sum)
		}
		select {
		case <-ctx.Done():
			if !f.quiet {
				fmt.Fprintf(stderr, "stopped; %d files evaluated, report: %s\n", count, filepath.Join(cfg.OutDir, "report.html"))
			}
			return status
		case <-tick.C:
		}
	}
}
