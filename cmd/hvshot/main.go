// Command hvshot evaluates high-voltage impulse captures: IEC 60060-1 parameters of
// divider channels, current from B-dot coils, field from E-field antennas, per shot
// and per series, with tables, plots and a report.
package main

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"
	"slices"
	"sort"
	"strings"
	"time"

	flag "github.com/spf13/pflag"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/impulse"
)

// Version is the tool's version, shown in reports.
var Version = "0.1.0"

// Exit statuses, documented in --help and the README.
const (
	exitOK          = 0
	exitOutOfTol    = 1
	exitFileErrors  = 2
	exitUsage       = 64
	exitInterrupted = 130
)

const usageText = `hvshot evaluates high-voltage impulse captures (IEC 60060-1 parameters,
coil current, antenna field) per shot and per series.

usage:
  hvshot analyze [flags] PATH...   evaluate files and folders (- reads a file list from stdin)
  hvshot watch [flags] DIR         evaluate each new capture as it lands in DIR
  hvshot inspect [--json] FILE...  show what the reader sees in a file
  hvshot synth [flags]             write a synthetic capture
  hvshot demo [--out DIR]          build the invented demo series and evaluate it
  hvshot selfcheck                 evaluate built-in reference records against known values
  hvshot version

Run "hvshot COMMAND --help" for a command's flags and examples.

exit status: 0 all shots evaluated and within tolerance, 1 some shot out of tolerance,
2 some file could not be read or evaluated, 64 usage error, 130 interrupted.

High voltage kills. hvshot evaluates records; it never replaces a qualified person's
judgement, the lab's procedures or local codes.
`

func main() {
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usageText)
		return exitUsage
	}
	cmd, rest := args[0], args[1:]
	switch cmd {
	case "analyze", "analyse":
		return cmdAnalyze(rest, stdin, stdout, stderr, false)
	case "watch":
		return cmdAnalyze(rest, stdin, stdout, stderr, true)
	case "inspect":
		return cmdInspect(rest, stdout, stderr)
	case "synth":
		return cmdSynth(rest, stdout, stderr)
	case "demo":
		return cmdDemo(rest, stdout, stderr)
	case "selfcheck":
		return cmdSelfcheck(rest, stdout, stderr)
	case "version", "--version":
		fmt.Fprintln(stdout, "hvshot", Version)
		return exitOK
	case "help", "-h", "--help":
		fmt.Fprint(stdout, usageText)
		return exitOK
	}
	fmt.Fprintf(stderr, "hvshot: unknown command %q\n\n%s", cmd, usageText)
	return exitUsage
}

// parseFlags parses a command's flags; stop says the command should return code now
// (0 after --help, 64 after a flag error, which pflag has already reported).
func parseFlags(fs *flag.FlagSet, args []string) (code int, stop bool) {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return exitOK, true
		}
		return exitUsage, true
	}
	return 0, false
}

// readFlags are the reading options every command that reads captures shares.
type readFlags struct {
	interval   string
	timeColumn string
	rawSample  string
	rawChans   int
	rawGain    []float64
	rawBig     bool
}

func (r *readFlags) add(fs *flag.FlagSet) {
	fs.StringVar(&r.interval, "interval", "", "sample interval for files without a time column, e.g. 2ns")
	fs.StringVar(&r.timeColumn, "time-column", "auto", "auto, first or none: whether the first column is time")
	fs.StringVar(&r.rawSample, "raw-sample", "", "read files as raw binary of this sample type (int16, float32, ...) when no .hvraw sidecar describes them")
	fs.IntVar(&r.rawChans, "raw-channels", 1, "interleaved channels in raw binary")
	fs.Float64SliceVar(&r.rawGain, "raw-gain", nil, "raw binary: volts per code, one per channel or one for all")
	fs.BoolVar(&r.rawBig, "raw-big-endian", false, "raw binary is big-endian")
}

func (r *readFlags) options() (readers.Options, error) {
	opt := readers.Options{TimeColumn: r.timeColumn}
	switch r.timeColumn {
	case "auto", "first", "none":
	default:
		return opt, fmt.Errorf("--time-column: auto, first or none, not %q", r.timeColumn)
	}
	if r.interval != "" {
		v, u, err := readers.ParseQuantity(r.interval)
		if err != nil || (u != "s" && u != "") || !(v > 0) {
			return opt, fmt.Errorf("--interval: a positive time such as 2ns, not %q", r.interval)
		}
		opt.Interval_s = v
	}
	if r.rawSample != "" {
		if opt.Interval_s == 0 {
			return opt, fmt.Errorf("--raw-sample needs --interval")
		}
		opt.Raw = &readers.RawSpec{Sample: r.rawSample, Channels: r.rawChans, Gain: r.rawGain, BigEndian: r.rawBig, Interval_s: opt.Interval_s}
	}
	return opt, nil
}

func cmdInspect(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("inspect", flag.ContinueOnError)
	fs.SetOutput(stderr)
	asJSON := fs.Bool("json", false, "one JSON object per file")
	var rf readFlags
	rf.add(fs)
	fs.Usage = func() {
		fmt.Fprint(stderr, `usage: hvshot inspect [flags] FILE...
Shows what the reader sees: format, channels, samples, interval, duration, units,
min/max per channel, warnings.

examples:
  hvshot inspect shot001.csv
  hvshot inspect --json captures/*.npy
  hvshot inspect --interval 1ns scope.txt

flags:
`)
		fs.PrintDefaults()
	}
	if code, stop := parseFlags(fs, args); stop {
		return code
	}
	if fs.NArg() == 0 {
		fs.Usage()
		return exitUsage
	}
	opt, err := rf.options()
	if err != nil {
		fmt.Fprintln(stderr, "hvshot inspect:", err)
		return exitUsage
	}
	status := exitOK
	enc := json.NewEncoder(stdout)
	for _, p := range fs.Args() {
		rec, err := readers.ReadFile(p, opt)
		if err != nil {
			status = exitFileErrors
			if *asJSON {
				enc.Encode(map[string]string{"file": p, "error": err.Error()})
			} else {
				fmt.Fprintln(stderr, "error:", err)
			}
			continue
		}
		type chInfo struct {
			Name  string      `json:"name"`
			Unit  string      `json:"unit"`
			Min   float64     `json:"min"`
			Max   float64     `json:"max"`
			Range *[2]float64 `json:"range,omitempty"`
			Bits  int         `json:"adc_bits,omitempty"`
		}
		info := struct {
			File       string            `json:"file"`
			Format     string            `json:"format"`
			Samples    int               `json:"samples"`
			Interval_s float64           `json:"interval_s"`
			Start_s    float64           `json:"start_s"`
			Duration_s float64           `json:"duration_s"`
			Channels   []chInfo          `json:"channels"`
			Meta       map[string]string `json:"meta,omitempty"`
			Warnings   []string          `json:"warnings"`
		}{File: p, Format: rec.Format, Samples: rec.Len(), Interval_s: rec.Interval_s, Start_s: rec.Start_s, Duration_s: rec.Duration_s(), Meta: rec.Meta, Warnings: append([]string{}, rec.Warnings...)}
		for _, c := range rec.Channels {
			ci := chInfo{Name: c.Name, Unit: c.Unit, Min: math.Inf(1), Max: math.Inf(-1), Bits: c.ADCBits}
			for _, v := range c.Samples {
				ci.Min, ci.Max = math.Min(ci.Min, v), math.Max(ci.Max, v)
			}
			if c.HasRange {
				ci.Range = &[2]float64{c.RangeMin, c.RangeMax}
			}
			info.Channels = append(info.Channels, ci)
		}
		if *asJSON {
			enc.Encode(info)
			continue
		}
		fmt.Fprintf(stdout, "%s\n  format    %s\n  samples   %d\n  interval  %s (%.4g MS/s)\n  start     %s\n  duration  %s\n",
			p, rec.Format, rec.Len(), engTime(rec.Interval_s), 1e-6/rec.Interval_s, engTime(rec.Start_s), engTime(rec.Duration_s()))
		for _, c := range info.Channels {
			u := c.Unit
			if u == "" {
				u = "(no unit)"
			}
			fmt.Fprintf(stdout, "  channel   %-12s %-9s min %.6g  max %.6g\n", c.Name, u, c.Min, c.Max)
		}
		keys := make([]string, 0, len(rec.Meta))
		for k := range rec.Meta {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			fmt.Fprintf(stdout, "  meta      %s: %s\n", k, rec.Meta[k])
		}
		for _, w := range rec.Warnings {
			fmt.Fprintf(stdout, "  warning   %s\n", w)
		}
	}
	return status
}

func engTime(s float64) string {
	a := math.Abs(s)
	switch {
	case a == 0:
		return "0 s"
	case a < 1e-6:
		return fmt.Sprintf("%.4g ns", s*1e9)
	case a < 1e-3:
		return fmt.Sprintf("%.4g us", s*1e6)
	case a < 1:
		return fmt.Sprintf("%.4g ms", s*1e3)
	}
	return fmt.Sprintf("%.4g s", s)
}

type analyzeFlags struct {
	setup, nominal, peak, out, format, plots, overOver, stages, charging string
	jobs                                                                 int
	quiet, force, chopped                                                bool
	roles, coil, antenna                                                 []string
	read                                                                 readFlags
	poll                                                                 time.Duration
}

func cmdAnalyze(args []string, stdin io.Reader, stdout, stderr io.Writer, watch bool) int {
	name := "analyze"
	if watch {
		name = "watch"
	}
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	var f analyzeFlags
	fs.StringVar(&f.setup, "setup", "", "setup file (default: "+SetupFileName+" beside the captures)")
	fs.StringVar(&f.nominal, "nominal", "", "nominal shape front/tail in us, e.g. 1.2/50 or 250/2500 (default: the standard shape of the family found)")
	fs.StringVar(&f.peak, "peak", "", "nominal test voltage, e.g. 300kV (magnitude)")
	fs.BoolVar(&f.chopped, "chopped", false, "chopped impulses are intended (no failure for a chop)")
	fs.StringVar(&f.out, "out", "", "output folder (default: a new folder next to the inputs)")
	fs.StringVar(&f.format, "format", "table", "what stdout gets: table, csv or jsonl")
	fs.StringVar(&f.plots, "plots", "svg", "per-shot plots: svg, png or none")
	fs.IntVar(&f.jobs, "jobs", runtime.NumCPU(), "files evaluated at once")
	fs.BoolVarP(&f.quiet, "quiet", "q", false, "no progress bar or messages on stderr")
	fs.BoolVar(&f.force, "force", false, "replace an existing report in --out")
	fs.StringVar(&f.overOver, "overshoot-over", "", "overshoot denominator: extreme (Ue) or base (Ub)")
	fs.StringVar(&f.stages, "stages", "", "generator stages, for the efficiency Ut/(n x charging voltage)")
	fs.StringVar(&f.charging, "charging", "", "charging voltage per stage, e.g. 40kV")
	fs.StringSliceVar(&f.roles, "role", nil, "CHANNEL=ROLE for a file channel without a setup: divider, coil or antenna")
	fs.StringSliceVar(&f.coil, "coil", nil, "coil model for --role ...=coil: mutual=2nH,inductance=40nH,load_resistance=50[,resistance=..,load_capacitance=..,calibration=..]")
	fs.StringSliceVar(&f.antenna, "antenna", nil, "antenna model for --role ...=antenna: kind=whip,height=0.5m,radius=2mm,load_resistance=1Mohm,load_capacitance=20pF[,droop_tau=estimate]")
	fs.DurationVar(&f.poll, "poll", 500*time.Millisecond, "watch: how often to look for new files")
	f.read.add(fs)
	fs.Usage = func() {
		fmt.Fprintf(stderr, `usage: hvshot %s [flags] PATH...
Evaluates captures: IEC 60060-1 impulse parameters of divider channels with a
verdict against the nominal shape, the current from coil channels and the field from
antenna channels. Writes results.csv, results.jsonl, summary.json, plots and
report.html into the output folder; prints a table (or csv/jsonl) on stdout.

examples:
  hvshot analyze shots/                         every capture in shots/, setup from shots/%s
  hvshot analyze --nominal 1.2/50 --peak 300kV shot*.csv
  hvshot analyze --format jsonl --plots none shots/ > results.jsonl
  find shots -name '*.npy' | hvshot analyze --interval 2ns -
  hvshot watch --out report/ incoming/          evaluate captures as the scope saves them

exit status: 0 all within tolerance, 1 some out of tolerance, 2 some file could not be
read or evaluated, 64 usage error, 130 interrupted (what was done is written).

flags:
`, name, SetupFileName)
		fs.PrintDefaults()
	}
	if code, stop := parseFlags(fs, args); stop {
		return code
	}
	usage := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "hvshot %s: %s\n", name, fmt.Sprintf(format, a...))
		return exitUsage
	}
	inputs := fs.Args()
	if len(inputs) == 1 && inputs[0] == "-" {
		inputs = nil
		sc := bufio.NewScanner(stdin)
		for sc.Scan() {
			if l := strings.TrimSpace(sc.Text()); l != "" {
				inputs = append(inputs, l)
			}
		}
	}
	if len(inputs) == 0 {
		fs.Usage()
		return exitUsage
	}
	if watch && len(inputs) != 1 {
		return usage("watch takes one folder")
	}
	switch f.format {
	case "table", "csv", "jsonl":
	default:
		return usage("--format: table, csv or jsonl, not %q", f.format)
	}
	switch f.plots {
	case "svg", "png", "none":
	default:
		return usage("--plots: svg, png or none, not %q", f.plots)
	}
	cfg, err := buildConfig(&f, inputs)
	if err != nil {
		return usage("%v", err)
	}
	// Output folder: never an input, never over an existing report without --force.
	if cfg.OutDir == "" {
		base := inputs[0]
		if st, err := os.Stat(base); err == nil && st.IsDir() {
			base = filepath.Clean(base)
		}
		cfg.OutDir = filepath.Join(filepath.Dir(base), "hvshot-report-"+time.Now().Format("20060102-150405"))
	}
	for _, in := range inputs {
		if a, b := absPath(in), absPath(cfg.OutDir); a == b {
			if st, err := os.Stat(in); err == nil && !st.IsDir() {
				return usage("--out %s is an input file", cfg.OutDir)
			}
		}
	}
	if st, err := os.Stat(cfg.OutDir); err == nil && !st.IsDir() {
		return usage("--out %s exists and is not a folder", cfg.OutDir)
	}
	if _, err := os.Stat(filepath.Join(cfg.OutDir, "report.html")); err == nil && !f.force && !watch {
		return usage("%s already holds a report; use --force to replace it or choose another --out", cfg.OutDir)
	}
	if err := os.MkdirAll(cfg.OutDir, 0o755); err != nil {
		fmt.Fprintln(stderr, "hvshot:", err)
		return exitFileErrors
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	if watch {
		return watchDir(ctx, inputs[0], cfg, &f, stdout, stderr)
	}
	files, err := collectFiles(inputs, cfg.OutDir)
	if err != nil {
		fmt.Fprintln(stderr, "hvshot:", err)
		return exitFileErrors
	}
	if len(files) == 0 {
		fmt.Fprintln(stderr, "hvshot: no files found in", strings.Join(inputs, ", "))
		return exitFileErrors
	}
	rows, interrupted := analyzeAll(ctx, files, cfg, &f, true, stdout, stderr)
	sum := summarize(seriesName(cfg), len(files), rows)
	sum.Interrupted = interrupted
	if f.format == "table" {
		writeTable(stdout, rows, sum)
	}
	if err := writeOutputs(cfg, rows, sum); err != nil {
		fmt.Fprintln(stderr, "hvshot: writing outputs:", err)
		return exitFileErrors
	}
	if !f.quiet {
		fmt.Fprintf(stderr, "report: %s\n", filepath.Join(cfg.OutDir, "report.html"))
	}
	if interrupted {
		return exitInterrupted
	}
	return exitStatus(sum)
}

func absPath(p string) string {
	a, err := filepath.Abs(p)
	if err != nil {
		return p
	}
	return a
}

func seriesName(cfg *Config) string {
	if cfg.Setup != nil {
		return cfg.Setup.Series
	}
	return ""
}

func exitStatus(s Summary) int {
	switch {
	case s.Errors > 0:
		return exitFileErrors
	case s.Fail > 0:
		return exitOutOfTol
	}
	return exitOK
}

// analyzeAll runs the batch, streaming csv or jsonl rows to stdout as shots finish;
// header says whether csv output starts with its header row.
func analyzeAll(ctx context.Context, files []string, cfg *Config, f *analyzeFlags, header bool, stdout, stderr io.Writer) ([]Row, bool) {
	var rows []Row
	prog := newProgress(len(files), f.quiet)
	done := 0
	if f.format == "csv" && header {
		stdout.Write(encodeCSV(nil))
	}
	interrupted := runBatch(ctx, files, cfg, f.jobs, func(s Shot) {
		rows = append(rows, s.Rows...)
		switch f.format {
		case "jsonl":
			stdout.Write(encodeJSONL(s.Rows))
		case "csv":
			b := encodeCSV(s.Rows)
			stdout.Write(b[strings.IndexByte(string(b), '\n')+1:])
		}
		done++
		prog.step(done)
	})
	return rows, interrupted
}

func writeOutputs(cfg *Config, rows []Row, sum Summary) error {
	if err := writeAtomic(filepath.Join(cfg.OutDir, "results.csv"), encodeCSV(rows)); err != nil {
		return err
	}
	if err := writeAtomic(filepath.Join(cfg.OutDir, "results.jsonl"), encodeJSONL(rows)); err != nil {
		return err
	}
	sj, _ := json.MarshalIndent(sum, "", " ")
	if err := writeAtomic(filepath.Join(cfg.OutDir, "summary.json"), append(sj, '\n')); err != nil {
		return err
	}
	html, err := renderReport(cfg, rows, sum)
	if err != nil {
		return err
	}
	return writeAtomic(filepath.Join(cfg.OutDir, "report.html"), html)
}

func buildConfig(f *analyzeFlags, inputs []string) (*Config, error) {
	cfg := &Config{Tol: impulse.DefaultTolerances(), Settings: impulse.DefaultSettings(), Plots: f.plots, OutDir: f.out}
	opt, err := f.read.options()
	if err != nil {
		return nil, err
	}
	cfg.Read = opt
	setupPath := f.setup
	if setupPath == "" {
		dir := inputs[0]
		if st, err := os.Stat(dir); err != nil || !st.IsDir() {
			dir = filepath.Dir(dir)
		}
		if _, err := os.Stat(filepath.Join(dir, SetupFileName)); err == nil {
			setupPath = filepath.Join(dir, SetupFileName)
		}
	}
	if setupPath != "" {
		s, err := LoadSetup(setupPath)
		if err != nil {
			return nil, err
		}
		cfg.Setup = s
		if err := applySetup(cfg, s); err != nil {
			return nil, err
		}
	}
	// Flags override the setup file.
	if f.nominal != "" {
		n, err := impulse.ParseNominal(f.nominal)
		if err != nil {
			return nil, err
		}
		n.Peak_v, n.Chopped = cfg.Nominal.Peak_v, cfg.Nominal.Chopped
		cfg.Nominal, cfg.HasNominal = n, true
	}
	if f.chopped {
		cfg.Nominal.Chopped = true
	}
	if f.peak != "" {
		v, u, err := readers.ParseQuantity(f.peak)
		if err != nil || (u != "V" && u != "") || !(v != 0) {
			return nil, fmt.Errorf("--peak: a voltage such as 300kV, not %q", f.peak)
		}
		cfg.Nominal.Peak_v = math.Abs(v)
	}
	switch f.overOver {
	case "":
	case "extreme", "base":
		cfg.Settings.OvershootOver = f.overOver
	default:
		return nil, fmt.Errorf("--overshoot-over: extreme or base, not %q", f.overOver)
	}
	if f.stages != "" {
		if _, err := fmt.Sscan(f.stages, &cfg.Stages); err != nil || cfg.Stages < 1 {
			return nil, fmt.Errorf("--stages: a positive whole number, not %q", f.stages)
		}
	}
	if f.charging != "" {
		v, _, err := readers.ParseQuantity(f.charging)
		if err != nil || !(v != 0) {
			return nil, fmt.Errorf("--charging: a voltage such as 40kV, not %q", f.charging)
		}
		cfg.Charging_v = math.Abs(v)
	}
	if len(f.roles) > 0 {
		cfg.Roles = map[string]ChannelSetup{}
		for _, r := range f.roles {
			i := strings.IndexByte(r, '=')
			if i <= 0 {
				return nil, fmt.Errorf("--role %q: want CHANNEL=ROLE", r)
			}
			cs := ChannelSetup{Role: r[i+1:], Match: r[:i]}
			switch cs.Role {
			case "divider":
			case "coil":
				c, err := coilFromFlags(f.coil)
				if err != nil {
					return nil, err
				}
				cs.Coil = c
			case "antenna":
				a, err := antennaFromFlags(f.antenna)
				if err != nil {
					return nil, err
				}
				cs.Antenna = a
			default:
				return nil, fmt.Errorf("--role %q: divider, coil or antenna", r)
			}
			cfg.Roles[r[:i]] = cs
		}
	}
	return cfg, nil
}

func applySetup(cfg *Config, s *Setup) error {
	if s.Nominal.Shape != "" {
		n, _ := impulse.ParseNominal(s.Nominal.Shape)
		cfg.Nominal, cfg.HasNominal = n, true
	}
	cfg.Nominal.Chopped = s.Nominal.Chopped
	if s.Nominal.TestVoltage.Set {
		cfg.Nominal.Peak_v = math.Abs(s.Nominal.TestVoltage.V)
	}
	t := &cfg.Tol
	for _, p := range []struct {
		src *float64
		dst *float64
	}{{s.Tolerance.TestVoltagePct, &t.TestVoltagePct}, {s.Tolerance.FrontTimePct, &t.FrontPct}, {s.Tolerance.TimeToHalfPct, &t.TailPct},
		{s.Tolerance.OvershootMaxPct, &t.OvershootMaxPct}, {s.Tolerance.TimeToPeakPct, &t.TimeToPeakPct}, {s.Tolerance.SwitchingHalfPct, &t.SwitchingTailPct}} {
		if p.src != nil {
			*p.dst = *p.src
		}
	}
	if s.Method.FitFrom != nil {
		cfg.Settings.FitFrom = *s.Method.FitFrom
	}
	if s.Method.FitTo != nil {
		cfg.Settings.FitTo = *s.Method.FitTo
	}
	if s.Method.OvershootOver != "" {
		cfg.Settings.OvershootOver = s.Method.OvershootOver
	}
	if s.Method.Shape != "" {
		cfg.Settings.ForceShape = impulse.Shape(s.Method.Shape)
	}
	cfg.Stages = s.Generator.Stages
	cfg.Charging_v = math.Abs(s.Generator.ChargingVoltage.V)
	if s.Read.Interval.Set && cfg.Read.Interval_s == 0 {
		cfg.Read.Interval_s = s.Read.Interval.V
	}
	if s.Read.TimeColumn != "" && cfg.Read.TimeColumn == "auto" {
		cfg.Read.TimeColumn = s.Read.TimeColumn
	}
	return nil
}

func coilFromFlags(list []string) (*CoilSetup, error) {
	m, err := parseKV(strings.Join(list, ","))
	if err != nil {
		return nil, fmt.Errorf("--coil: %v", err)
	}
	c := &CoilSetup{}
	if err := setQuantities(m, map[string]*Quantity{"mutual": &c.Mutual, "calibration": &c.Calibration, "inductance": &c.Inductance,
		"resistance": &c.Resistance, "load_resistance": &c.LoadResistance, "load_capacitance": &c.LoadCapacitance,
		"bandwidth": &c.Bandwidth}); err != nil {
		return nil, fmt.Errorf("--coil: %v", err)
	}
	if _, err := c.model(); err != nil {
		return nil, fmt.Errorf("--coil: %v", err)
	}
	return c, nil
}

func antennaFromFlags(list []string) (*AntennaSetup, error) {
	m, err := parseKV(strings.Join(list, ","))
	if err != nil {
		return nil, fmt.Errorf("--antenna: %v", err)
	}
	a := &AntennaSetup{Kind: m["kind"], DroopTau: m["droop_tau"]}
	if err := setQuantities(m, map[string]*Quantity{"height": &a.Height, "radius": &a.Radius, "effective_height": &a.EffectiveHeight,
		"capacitance": &a.Capacitance, "area": &a.Area, "calibration": &a.Calibration, "load_resistance": &a.LoadResistance,
		"load_capacitance": &a.LoadCapacitance, "tail_start": &a.TailStart}, "kind", "droop_tau"); err != nil {
		return nil, fmt.Errorf("--antenna: %v", err)
	}
	if _, err := a.model(); err != nil {
		return nil, fmt.Errorf("--antenna: %v", err)
	}
	return a, nil
}

// setQuantities fills the named quantities from key=value pairs; a key that is neither
// a quantity nor one of the words (read by the caller) is an error.
func setQuantities(m map[string]string, fields map[string]*Quantity, words ...string) error {
	for k := range m {
		if slices.Contains(words, k) {
			continue
		}
		q, ok := fields[k]
		if !ok {
			return fmt.Errorf("unknown key %q", k)
		}
		v, err := quantityOf(m, k)
		if err != nil {
			return err
		}
		*q = v
	}
	return nil
}
