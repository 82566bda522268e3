package main

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"sync"
	"syscall"
	"testing"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/shot"
	"github.com/hvshot/hvshot/waveform/synth"
)

var (
	benchOnce  sync.Once
	benchFiles []input
)

// benchSeries writes 200 shots x 2 channels x 100,000 samples of delimited text once
// per run (invented synthetic shots: a divider and a coil channel).
func benchSeries(b *testing.B) []input {
	benchOnce.Do(func() {
		dir, err := os.MkdirTemp("", "hvshot-bench-")
		if err != nil {
			b.Fatal(err)
		}
		for i := 0; i < 200; i++ {
			s := synth.Spec{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 300e3, Noise: 0.003, PreTrigger_s: 5e-6, Interval_s: 1.5e-9,
				Duration_s: 100000 * 1.5e-9, Seed: uint64(i),
				Coil: &synth.Coil{M_h: 1e-9, L_h: 50e-9, R_ohm: 50, Peak_a: 1.5e3, Freq_hz: 300e3, Damp_s: 3e-6}}
			rec, err := synth.Generate(s)
			if err != nil {
				b.Fatal(err)
			}
			for k := range rec.Channels {
				rec.Channels[k].Samples = rec.Channels[k].Samples[:100000]
			}
			p := filepath.Join(dir, fmt.Sprintf("shot%03d.csv", i))
			if err := writeCapture(p, "text", rec); err != nil {
				b.Fatal(err)
			}
			benchFiles = append(benchFiles, input{p, filepath.Base(p)})
		}
	})
	return benchFiles
}

func benchWorker() *worker {
	return &worker{cfg: shot.NewConfig(), plots: report.NoPlot}
}

// BenchmarkBatch reports shots per second for the whole job (read, evaluate both
// channels) with 1 and 2 workers.
func BenchmarkBatch(b *testing.B) {
	files := benchSeries(b)
	for _, jobs := range []int{1, 2} {
		b.Run(fmt.Sprintf("jobs=%d", jobs), func(b *testing.B) {
			w := benchWorker()
			for i := 0; i < b.N; i++ {
				runBatch(context.Background(), files, w, jobs, func(_ int, s []*shot.Shot) {
					if s[0].Rows[0].Verdict == shot.Error {
						b.Fatal(s[0].Rows[0].Error)
					}
				})
			}
			b.ReportMetric(float64(len(files)*b.N)/b.Elapsed().Seconds(), "shots/s")
		})
	}
	// Reading alone, one core: the share of the job that is I/O and parsing.
	b.Run("read-only", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			for _, f := range files {
				if _, err := readers.ReadFile(f.path, readers.Options{}); err != nil {
					b.Fatal(err)
				}
			}
		}
		b.ReportMetric(float64(len(files)*b.N)/b.Elapsed().Seconds(), "shots/s")
	})
}

// BenchmarkPeakRSS runs the default analyze (SVG plots and the report, jobs 2) as a
// process over 10, 100 and 1,000 invented shots of 12,001 samples and reports its peak
// resident memory, which should not grow with the number of shots.
func BenchmarkPeakRSS(b *testing.B) {
	dir := b.TempDir()
	rec, err := synth.Generate(synth.Spec{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 300e3, Noise: 0.003, PreTrigger_s: 4e-6, Interval_s: 10e-9, Duration_s: 120e-6})
	if err != nil {
		b.Fatal(err)
	}
	one := filepath.Join(dir, "one.csv")
	if err := writeCapture(one, "text", rec); err != nil {
		b.Fatal(err)
	}
	data, _ := os.ReadFile(one)
	for _, n := range []int{10, 100, 1000} {
		caps := filepath.Join(dir, fmt.Sprint(n))
		os.MkdirAll(caps, 0o755)
		for i := 0; i < n; i++ {
			os.WriteFile(filepath.Join(caps, fmt.Sprintf("shot%04d.csv", i)), data, 0o644)
		}
		b.Run(fmt.Sprintf("shots=%d", n), func(b *testing.B) {
			var peak int64
			for i := 0; i < b.N; i++ {
				cmd := exec.Command(os.Args[0], "analyze", "--quiet", "--jobs", "2", "--force", "--out", filepath.Join(dir, fmt.Sprintf("out%d", n)), caps)
				cmd.Env = append(os.Environ(), "HVSHOT_AS_MAIN=1")
				if out, err := cmd.CombinedOutput(); err != nil {
					b.Fatalf("%v: %s", err, out)
				}
				if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
					peak = max(peak, ru.Maxrss) // kilobytes on Linux
				}
			}
			b.ReportMetric(float64(peak)/1024, "peak-MB")
			b.ReportMetric(float64(n*b.N)/b.Elapsed().Seconds(), "shots/s")
		})
	}
}
