package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/shot"
)

// input is a capture to read and its identity.
type input struct{ path, id string }

// collectFiles finds the captures (see readers.Find), leaving out setup files, the
// output folder and earlier output folders, and gives each its identity.
func collectFiles(args []string, outDir string) (files []input, skipped []string, err error) {
	absOut, _ := filepath.Abs(outDir)
	paths, skipped, err := readers.Find(args, func(p string, d fs.DirEntry) bool {
		if !d.IsDir() {
			return d.Name() == shot.SetupFileName
		}
		ap, _ := filepath.Abs(p)
		return ap == absOut || ownOutput(p)
	})
	ids := shot.Identities(paths)
	for i, p := range paths {
		files = append(files, input{p, ids[i]})
	}
	return files, skipped, err
}

// markerName marks a folder as hvshot's output, so a later scan leaves it out and a
// later run may replace what is in it.
const markerName = ".hvshot-output"

func ownOutput(dir string) bool {
	_, err := os.Stat(filepath.Join(dir, markerName))
	return err == nil
}

// outputs are the files and folder a run writes into its output folder.
var outputs = []string{"results.csv", "results.jsonl", "summary.json", "report.html", "plots"}

// outputFolder picks the output folder and marks it as hvshot's. Asked for one, it
// takes it when it is new, empty or marked as an earlier run's; it never takes a folder
// with files hvshot did not write. An earlier run's report stays unless replace is
// set, and clean then removes that run's outputs so that runs never mix. Not asked,
// it makes a new folder next to the inputs, numbered until the name is free.
func outputFolder(out string, inputs []string, replace, clean bool) (string, error) {
	if out == "" {
		// beside a folder given, or in the folder of a file given
		stem := filepath.Join(filepath.Dir(filepath.Clean(inputs[0])), "hvshot-report-"+time.Now().Format("20060102-150405"))
		out = stem
		for n := 2; ; n++ {
			if err := os.Mkdir(out, 0o755); err == nil {
				break
			} else if !os.IsExist(err) {
				return "", fmt.Errorf("output folder %s: %v", out, err)
			}
			out = fmt.Sprintf("%s-%d", stem, n)
		}
	} else if entries, err := os.ReadDir(out); err == nil {
		switch {
		case ownOutput(out):
			if _, err := os.Stat(filepath.Join(out, "report.html")); err == nil && !replace {
				return "", fmt.Errorf("%s already holds a report; use --force to replace it or choose another --out", out)
			}
			for _, name := range outputs {
				if clean {
					if err := os.RemoveAll(filepath.Join(out, name)); err != nil {
						return "", err
					}
				}
			}
		case len(entries) > 0:
			var names []string
			for _, e := range entries[:min(3, len(entries))] {
				names = append(names, e.Name())
			}
			return "", fmt.Errorf("--out %s holds files hvshot did not write (%s, ...); give a new or empty folder, e.g. --out %s", out, strings.Join(names, ", "), filepath.Join(out, "hvshot-report"))
		}
	} else if st, serr := os.Stat(out); serr == nil && !st.IsDir() {
		return "", fmt.Errorf("--out %s exists and is not a folder", out)
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return "", err
	}
	return out, writeAtomic(filepath.Join(out, markerName), []byte("hvshot output folder: hvshot may replace what it wrote here\n"))
}

// worker reads, evaluates and plots one capture at a time.
type worker struct {
	cfg   *shot.Config
	read  readers.Options
	out   string
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
	for _, rec := range recs {
		id := in.id
		if rec.Segment > 0 {
			id = shot.SegmentID(id, rec.Segment)
		}
		s := shot.Evaluate(rec, id, w.cfg)
		w.draw(s)
		shots = append(shots, s)
	}
	return shots
}

// draw writes the shot's plots and lets go of the curves.
func (w *worker) draw(s *shot.Shot) {
	for k, c := range s.Curves {
		r := &s.Rows[k]
		if c == nil || w.plots == report.NoPlot || w.out == "" {
			continue
		}
		rel := shot.PlotPath(s.ID, k, r.Channel, string(w.plots))
		var b bytes.Buffer
		err := report.Plot(&b, c, s.ID+"  "+r.Channel, w.plots)
		if err == nil {
			p := filepath.Join(w.out, filepath.FromSlash(rel))
			if err = os.MkdirAll(filepath.Dir(p), 0o755); err == nil {
				err = writeAtomic(p, b.Bytes())
			}
		}
		if err != nil {
			r.Warnings = append(r.Warnings, shot.Warning{Code: "plot-failed", Text: err.Error()})
			continue
		}
		r.Plot = rel
	}
	s.Curves = nil
}

// runBatch evaluates the files on jobs workers and hands each file's shots to emit in
// input order (see shot.RunOrdered); it reports whether it was interrupted.
func runBatch(ctx context.Context, files []input, w *worker, jobs int, emit func(i int, shots []*shot.Shot)) bool {
	return shot.RunOrdered(ctx, len(files), jobs, func(i int) []*shot.Shot { return w.do(files[i]) }, emit)
}

// writeOutputs writes the tables, the summary and the report, each atomically.
func writeOutputs(w *worker, rows []shot.Row, sum shot.Summary) error {
	dir := w.out
	err := writeAtomicWith(filepath.Join(dir, "results.csv"), func(f io.Writer) error { return shot.WriteCSV(f, rows) })
	if err == nil {
		err = writeAtomicWith(filepath.Join(dir, "results.jsonl"), func(f io.Writer) error { return shot.WriteJSONL(f, rows) })
	}
	if err == nil {
		sj, _ := json.MarshalIndent(sum, "", " ")
		err = writeAtomic(filepath.Join(dir, "summary.json"), append(sj, '\n'))
	}
	if err == nil {
		page := report.Page{Summary: sum, Rows: rows, Config: w.cfg, Version: Version, Made: time.Now(),
			Plot: func(rel string) ([]byte, error) { return os.ReadFile(filepath.Join(dir, filepath.FromSlash(rel))) }}
		err = writeAtomicWith(filepath.Join(dir, "report.html"), func(f io.Writer) error { return report.HTML(f, page) })
	}
	return err
}

func writeAtomic(path string, data []byte) error {
	return writeAtomicWith(path, func(w io.Writer) error { _, err := w.Write(data); return err })
}

// writeAtomicWith writes a file through a temporary file beside it, renamed into place
// once whole, so that a reader or a run killed mid-way never sees half a file.
func writeAtomicWith(path string, write func(io.Writer) error) error {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	bw := bufio.NewWriterSize(f, 1<<16)
	err = write(bw)
	if err == nil {
		err = bw.Flush()
	}
	if err == nil {
		err = f.Chmod(0o644) // CreateTemp makes it private; results are for the lab to read
	}
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp, path)
	}
	if err != nil {
		os.Remove(tmp)
	}
	return err
}
