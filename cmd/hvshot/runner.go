package main

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/report/folder"
	"github.com/hvshot/hvshot/waveform/shot"
)

// input is a capture to read and its identity.
type input struct{ path, id string }

// collectFiles finds the captures (see readers.Find), leaving out setup files, the
// output folder and earlier output folders, and gives each its identity.
func collectFiles(args []string, outDir string) (files []input, skipped []string, err error) {
	absOut := ""
	if outDir != "" {
		absOut, _ = filepath.Abs(outDir)
	}
	paths, skipped, err := readers.Find(args, func(p string, d fs.DirEntry) (bool, string) {
		if ap, _ := filepath.Abs(p); !d.IsDir() || ap == absOut {
			return d.Name() == shot.SetupFileName || ap == absOut, ""
		}
		return folder.Owned(p), "an hvshot output folder"
	})
	ids := shot.Identities(paths)
	for i, p := range paths {
		files = append(files, input{p, ids[i]})
	}
	return files, skipped, err
}

// notLog leaves out the setup's air log, which a folder scan takes for a capture.
func notLog(files []input, cfg *shot.Config) []input {
	log, _ := filepath.Abs(cfg.AirLogFile)
	return slices.DeleteFunc(files, func(f input) bool { p, _ := filepath.Abs(f.path); return cfg.AirLogFile != "" && p == log })
}

// outputFolder takes the folder asked for (see folder.Open), or makes a new one next to
// the inputs: beside a folder given, in the folder of a file given.
func outputFolder(out string, inputs []string, replace bool) (*folder.Folder, error) {
	if out == "" {
		in, _ := filepath.Abs(inputs[0]) // "." is a folder too: beside it, not in it
		return folder.New(filepath.Dir(in), folder.Stem(time.Now()))
	}
	f, err := folder.Open(out, folder.Options{Report: "report.html", Replace: replace, Clean: report.Outputs})
	if err != nil {
		return nil, fmt.Errorf("--out: %v", err)
	}
	return f, nil
}

// worker reads, evaluates and plots one capture at a time.
type worker struct {
	cfg   *shot.Config
	read  readers.Options
	out   *folder.Folder // nil: no plots written
	plots report.PlotFormat
}

// do turns a capture into its shots (one, or one per segment); whatever goes wrong,
// a panic included, becomes the shot's error row and the batch goes on.
func (w *worker) do(in input) (shots []*shot.Shot) {
	defer func() {
		if p := recover(); p != nil {
			shots = []*shot.Shot{shot.Failed(in.id, fmt.Errorf("%s: internal error, please report it: %v", in.path, p))}
		}
	}()
	recs, err := readers.ReadFileAll(in.path, w.read)
	if err != nil {
		// named as the rows name it: by its identity
		return []*shot.Shot{shot.Failed(in.id, errors.New(strings.Replace(err.Error(), in.path, in.id, 1)))}
	}
	st, _ := os.Stat(in.path)
	for _, rec := range recs {
		if rec.Trigger.IsZero() && st != nil {
			rec.Trigger = st.ModTime() // fired when saved, at the latest
		}
		id := in.id
		if rec.Segment > 0 {
			id = shot.SegmentID(id, rec.Segment)
		}
		s := shot.Evaluate(rec, id, w.cfg)
		report.DrawPlots(w.out, s, w.plots)
		shots = append(shots, s)
	}
	return shots
}

// runBatch evaluates the files on jobs workers and hands each file's shots to emit in
// input order (see shot.RunOrdered); it reports whether it was interrupted.
func runBatch(ctx context.Context, files []input, w *worker, jobs int, emit func(i int, shots []*shot.Shot)) bool {
	return shot.RunOrdered(ctx, len(files), jobs, func(i int) []*shot.Shot { return w.do(files[i]) }, emit)
}

// writeOutputs writes the tables, the summary and the report (report.WriteAll).
func writeOutputs(w *worker, rows []shot.Row, traces []shot.Trace, sum shot.Summary) error {
	return report.WriteAll(w.out, report.Page{Summary: sum, Rows: rows, Traces: traces, Config: w.cfg, Version: Version, Made: time.Now()})
}
