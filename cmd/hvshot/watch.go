package main

import (
	"context"
	"encoding/csv"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/shot"
)

// watchDir evaluates each capture that appears in dir once it is complete: its size and
// modification time held still over a quiet period, and the same again after reading
// it. A file that changes later is evaluated again and its rows replace the old ones.
// The outputs are rewritten after each batch; Ctrl-C stops with them written.
func watchDir(ctx context.Context, dir string, w *worker, o *analyzeOpts, e *env) int {
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return e.usage("watch", "%s is not a folder", dir)
	}
	// Scopes save in one go; a quiet period of seconds lets a slow network copy finish.
	quiet := max(4*o.poll, 2*time.Second)
	type state struct {
		size   int64
		mod    time.Time
		stable time.Time // when size and time were last seen to change
		done   bool
	}
	files := map[string]*state{}
	shots := map[string][]*shot.Shot{} // by path, in place of earlier rows of the same file
	var order []string
	told := map[string]bool{} // left-out files already named
	csvOut := csv.NewWriter(e.stdout)
	if o.format == "csv" {
		csvOut.Write(shot.CSVHeader())
	}
	if !o.quiet {
		fmt.Fprintf(e.stderr, "watching %s (Ctrl-C to stop); outputs in %s\n", dir, w.out.Path)
	}
	tick := time.NewTicker(o.poll)
	defer tick.Stop()
	for {
		list, skipped, _ := collectFiles([]string{dir}, w.out.Path)
		list = notLog(list, w.cfg)
		report.LeftOut(e.stderr, "watch", skipped, o.quiet, told)
		var ready []input
		now := time.Now()
		for _, in := range list {
			st, err := os.Stat(in.path)
			if err != nil {
				continue
			}
			s := files[in.path]
			switch {
			case s == nil:
				files[in.path] = &state{size: st.Size(), mod: st.ModTime(), stable: now}
			case st.Size() != s.size || !st.ModTime().Equal(s.mod):
				s.size, s.mod, s.stable, s.done = st.Size(), st.ModTime(), now, false
			case !s.done && now.Sub(s.stable) >= quiet && st.Size() > 0:
				rel, _ := filepath.Rel(dir, in.path)
				ready = append(ready, input{in.path, filepath.ToSlash(rel)})
			}
		}
		changed := false
		runBatch(ctx, ready, w, o.jobs, func(i int, got []*shot.Shot) {
			in := ready[i]
			s := files[in.path]
			if st, err := os.Stat(in.path); err != nil || st.Size() != s.size || !st.ModTime().Equal(s.mod) {
				s.stable = time.Now() // it changed while being read: wait for it to settle
				return
			}
			s.done, changed = true, true
			if _, ok := shots[in.path]; !ok {
				order = append(order, in.path)
			}
			shots[in.path] = got
			for _, sh := range got {
				report.StreamRows(e.stdout, o.format, csvOut, sh.Rows)
			}
		})
		if changed {
			series := shot.NewSeries(w.cfg.Series).Judging(w.cfg)
			var rows []shot.Row
			var traces []shot.Trace
			for _, p := range order {
				series.Add(shots[p]...)
				for _, sh := range shots[p] {
					rows, traces = append(rows, sh.Rows...), append(traces, sh.Traces...)
				}
			}
			sum := series.Summary()
			sum.Command = e.command
			if err := writeOutputs(w, rows, traces, sum); err != nil {
				return e.fail("watch", fmt.Errorf("writing outputs: %w", err))
			}
		}
		select {
		case <-ctx.Done():
			if !o.quiet {
				fmt.Fprintf(e.stderr, "stopped; %d %s evaluated, report: %s\n", len(order), map[bool]string{true: "file", false: "files"}[len(order) == 1], filepath.Join(w.out.Path, "report.html"))
			}
			return exitInterrupted
		case <-tick.C:
		}
	}
}
