package main

import (
	"bufio"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"syscall"
	"time"

	flag "github.com/spf13/pflag"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/shot"
)

func init() {
	commands = append(commands,
		&command{name: "analyze", usage: "[flags] PATH...", flags: analyzeCommand(false)},
		&command{name: "watch", usage: "[flags] DIR", flags: analyzeCommand(true)},
		&command{name: "compare", usage: "[flags] REFERENCE FILE...", flags: analyzeCommand(false)})
}

type analyzeOpts struct {
	setup, nominal, peak, out, format, plots, overOver, stages, charging, reference string
	jobs                                                                            int
	quiet, force, chopped                                                           bool
	roles, coil, antenna, ratios                                                    []string
	read                                                                            readFlags
	poll                                                                            time.Duration
}

func analyzeCommand(watch bool) func(fs *flag.FlagSet) func([]string, *env) int {
	return func(fs *flag.FlagSet) func([]string, *env) int {
		var o analyzeOpts
		fs.StringVar(&o.setup, "setup", "", "setup `FILE` (default: "+shot.SetupFileName+" beside the captures)")
		fs.StringVar(&o.nominal, "nominal", "", "nominal shape front/tail in us, e.g. 1.2/50 or 250/2500 (default: the standard shape of the family found) (`SHAPE`)")
		fs.StringVar(&o.reference, "reference", "", "compare every shot with this one, a shot's identity or file: scaled difference, transfer function (`SHOT`)")
		fs.StringVar(&o.peak, "peak", "", "nominal test voltage, e.g. 300kV (`VOLTAGE`)")
		fs.BoolVar(&o.chopped, "chopped", false, "chopped impulses are intended: a full impulse fails on shape, a chopped one does not")
		fs.StringSliceVar(&o.ratios, "ratio", nil, "divider ratio for every divider channel (1000), or for one channel (CH1=1000) (`RATIO`)")
		fs.StringVarP(&o.out, "out", "o", "", "output `FOLDER` (default: a new folder next to the inputs)")
		fs.StringVar(&o.format, "format", "table", "what stdout gets: table, csv or jsonl (`FORMAT`)")
		fs.StringVar(&o.plots, "plots", "svg", "per-shot plots: svg, png or none (`FORMAT`)")
		fs.IntVar(&o.jobs, "jobs", runtime.NumCPU(), "files evaluated at once (`N`)")
		fs.BoolVarP(&o.quiet, "quiet", "q", false, "no progress or messages on stderr")
		fs.BoolVar(&o.force, "force", false, "replace an existing report in --out")
		fs.StringVar(&o.overOver, "overshoot-over", "", "overshoot denominator: extreme (Ue) or base (Ub) (`WHICH`)")
		fs.StringVar(&o.stages, "stages", "", "generator stages, for the efficiency Ut/(n x charging voltage) (`N`)")
		fs.StringVar(&o.charging, "charging", "", "charging voltage per stage, e.g. 40kV (`VOLTAGE`)")
		fs.StringSliceVar(&o.roles, "role", nil, "a channel's role without a setup file: NAME=ROLE or CHn=ROLE, ROLE divider, coil, antenna, current (in A) or field (in V/m) (`CH=ROLE`)")
		fs.StringSliceVar(&o.coil, "coil", nil, "coil for --role ...=coil, the setup file's keys: mutual=2nH,inductance=40nH,load_resistance=50 (`KEY=VALUE,...`)")
		fs.StringSliceVar(&o.antenna, "antenna", nil, "antenna for --role ...=antenna: kind=whip,height=0.5m,radius=2mm,load_resistance=1Mohm,load_capacitance=20pF (`KEY=VALUE,...`)")
		if watch {
			fs.DurationVar(&o.poll, "poll", 500*time.Millisecond, "how often to look for new files (`DURATION`)")
		}
		o.read.add(fs)
		return func(args []string, e *env) int { return analyze(&o, args, e, watch) }
	}
}

func analyze(o *analyzeOpts, inputs []string, e *env, watch bool) int {
	name := e.command[1] // analyze, watch or compare
	if len(inputs) == 1 && inputs[0] == "-" && !watch {
		inputs = nil
		sc := bufio.NewScanner(e.stdin)
		for sc.Scan() {
			if l := strings.TrimSpace(sc.Text()); l != "" {
				inputs = append(inputs, l)
			}
		}
	}
	switch {
	case len(inputs) == 0:
		return e.usage(name, "no captures named: give files or folders (or - and a list on stdin)")
	case name == "compare" && o.reference == "" && len(inputs) < 2:
		return e.usage(name, "give the reference and at least one shot to compare with it")
	case watch && len(inputs) != 1:
		return e.usage(name, "watch takes one folder, not %d arguments", len(inputs))
	}
	if o.format != "table" && o.format != "csv" && o.format != "jsonl" {
		return e.usage(name, "--format: table, csv or jsonl, not %q", o.format)
	}
	plots, err := report.ParsePlotFormat(o.plots)
	if err != nil {
		return e.usage(name, "--plots: %v", err)
	}
	if o.jobs < 1 {
		return e.usage(name, "--jobs: at least 1, not %d", o.jobs)
	}
	if o.out == "-" {
		return e.usage(name, "--out names a folder; the table goes to stdout already (--format csv or jsonl)")
	}
	if _, _, err := configure(o, ""); err != nil {
		return e.usage(name, "%v", err) // the flags, before any file is looked at
	}
	if !slices.ContainsFunc(inputs, func(in string) bool { _, err := os.Stat(in); return err == nil }) {
		return e.usage(name, "no such file or folder: %s", strings.Join(inputs, ", "))
	}
	// the captures first: no output folder is made for a run that has nothing to read
	var files []input
	setup := readers.Beside(filepath.Join(inputs[0], "-"), inputs[0], shot.SetupFileName) // watch: the folder's own
	if o.setup != "" {
		setup = o.setup
	}
	if !watch {
		var skipped []string
		if files, skipped, err = collectFiles(inputs, o.out); err != nil {
			return e.fail(name, err)
		}
		report.LeftOut(e.stderr, name, skipped, o.quiet, map[string]bool{})
		if len(files) == 0 {
			return e.fail(name, fmt.Errorf("no captures found in %s", strings.Join(inputs, ", ")))
		}
		if setup, err = setupFor(o, files, inputs); err != nil {
			return e.usage(name, "%v", err)
		}
	}
	cfg, rd, err := configure(o, setup)
	if err == nil {
		files = notLog(files, cfg)
	}
	var se *shot.SetupError
	if errors.As(err, &se) {
		fmt.Fprintf(e.stderr, "hvshot %s: %v\nThe setup file's keys and units are in docs/setup.md.\n", name, err)
		return exitUsage
	}
	if err != nil {
		return e.usage(name, "%v", err)
	}
	if name == "compare" && o.reference == "" {
		o.reference = inputs[0] // the first file named is the reference
	}
	paths := make([]string, len(files))
	for i := range files {
		paths[i] = files[i].path
	}
	if err := cfg.PrepareReference(o.reference, paths, func(p string) (*waveform.Record, error) { return readers.ReadFile(p, rd) }); err != nil {
		return e.usage(name, "%v", err)
	}
	out, err := outputFolder(o.out, inputs, o.force)
	if err != nil {
		return e.usage(name, "%v", err)
	}
	defer out.Close()
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM, syscall.SIGHUP)
	defer stop()
	w := &worker{cfg: cfg, read: rd, out: out, plots: plots}
	if watch {
		return watchDir(ctx, inputs[0], w, o, e)
	}
	series := shot.NewSeries(cfg.Series).Judging(cfg)
	var rows []shot.Row
	var traces []shot.Trace
	lost := false // a plot that could not be written: a warning on its row, and exit 2
	prog := report.NewProgress(e.stderr, len(files), o.quiet)
	csvOut := csv.NewWriter(e.stdout)
	if o.format == "csv" {
		csvOut.Write(shot.CSVHeader())
	}
	interrupted := runBatch(ctx, files, w, o.jobs, func(i int, shots []*shot.Shot) {
		series.Add(shots...)
		for _, s := range shots {
			lost = lost || s.PlotsLost()
			rows, traces = append(rows, s.Rows...), append(traces, s.Traces...)
			if o.format != "table" {
				report.StreamRows(e.stdout, o.format, csvOut, s.Rows)
			}
		}
		prog.Step(i + 1)
	})
	sum := series.Summary()
	sum.Interrupted, sum.Command = interrupted, e.command
	if o.format == "table" {
		report.Table(e.stdout, rows)
		fmt.Fprintln(e.stdout)
		report.Summary(e.stdout, sum)
	}
	if err := writeOutputs(w, rows, traces, sum); err != nil {
		return e.fail(name, fmt.Errorf("writing outputs: %w", err))
	}
	if !o.quiet {
		fmt.Fprintf(e.stderr, "report: %s\n", filepath.Join(out.Path, "report.html"))
	}
	if interrupted {
		fmt.Fprintf(e.stderr, "hvshot %s: interrupted after %d of %d files; what was done is written\n", name, sum.Files, len(files))
		return exitInterrupted
	}
	if lost {
		return exitFileErrors
	}
	return exitStatus(sum)
}

func exitStatus(s shot.Summary) int {
	switch {
	case s.TestFailed():
		return exitTestFailed
	case s.Errors > 0:
		return exitFileErrors
	case s.Fail > 0 || s.Incomplete > 0:
		return exitOutOfTol
	}
	return exitOK
}

// setupFor is the setup file of the captures: the one given, or the one beside them all.
func setupFor(o *analyzeOpts, files []input, roots []string) (string, error) {
	if o.setup != "" {
		return o.setup, nil
	}
	paths := make([]string, len(files))
	for i, f := range files {
		paths[i] = f.path
	}
	p, err := readers.OneBeside(paths, roots, shot.SetupFileName)
	if err != nil {
		return "", fmt.Errorf("%v: analyze each series on its own, or give --setup", err)
	}
	return p, nil
}

// configure turns the setup file and the flags into the evaluation's configuration and
// the reading options; flags override the setup file.
func configure(o *analyzeOpts, path string) (*shot.Config, readers.Options, error) {
	rd, err := o.read.options()
	if err != nil {
		return nil, rd, err
	}
	var s *shot.Setup
	if path != "" {
		b, err := os.ReadFile(path)
		if err != nil {
			return nil, rd, fmt.Errorf("--setup: %v", err)
		}
		if s, err = shot.ParseSetup(b, path); err != nil {
			return nil, rd, err
		}
		rd = s.Read.Apply(rd)
	}
	var over []shot.Override
	for _, f := range [][3]string{{"nominal", "nominal", o.nominal}, {"peak", "peak", o.peak}, {"chopped", "chopped", map[bool]string{true: "true"}[o.chopped]},
		{"overshoot-over", "overshoot_over", o.overOver}, {"stages", "stages", o.stages}, {"charging", "charging", o.charging}} {
		over = append(over, shot.Override{Blame: "--" + f[0] + ": ", Key: f[1], Value: f[2]})
	}
	for _, r := range o.ratios {
		over = append(over, shot.Override{Blame: "--ratio ", Key: "ratio", Value: r})
	}
	cfg, err := shot.Configure(s, over, o.roles, o.coil, o.antenna)
	if err == nil && s != nil && s.Atmosphere != nil && s.Atmosphere.Log != "" {
		p := s.Atmosphere.Log
		if !filepath.IsAbs(p) {
			p = filepath.Join(filepath.Dir(path), p) // beside the setup file
		}
		var f *os.File
		if f, err = os.Open(p); err == nil {
			err = cfg.ReadAirLog(f, p)
			f.Close()
		}
	}
	return cfg, rd, err
}
