package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	flag "github.com/spf13/pflag"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/report/folder"
	"github.com/hvshot/hvshot/waveform/synth"
)

func init() {
	commands = append(commands,
		&command{name: "inspect", usage: "[flags] FILE...", flags: inspectCommand},
		&command{name: "synth", usage: "[flags] --out FILE", flags: synthCommand},
		&command{name: "demo", usage: "[--out DIR]", flags: demoCommand},
		&command{name: "selfcheck", usage: "[--json]", flags: selfcheckCommand})
}

func inspectCommand(fs *flag.FlagSet) func([]string, *env) int {
	asJSON := fs.Bool("json", false, "one JSON object per record")
	var rf readFlags
	rf.add(fs)
	return func(args []string, e *env) int {
		if len(args) == 0 {
			return e.usage("inspect", "no file named")
		}
		opt, err := rf.options()
		if err != nil {
			return e.usage("inspect", "%v", err)
		}
		status := exitOK
		enc := json.NewEncoder(e.stdout)
		for _, p := range args {
			var recs []*waveform.Record
			if p == "-" {
				recs, err = readers.ReadAll(e.stdin, "stdin", opt)
			} else {
				recs, err = readers.ReadFileAll(p, opt)
			}
			if err != nil {
				status = exitFileErrors
				if *asJSON {
					enc.Encode(map[string]string{"file": p, "error": err.Error()})
				} else {
					fmt.Fprintln(e.stderr, "hvshot inspect:", err)
				}
				continue
			}
			for _, rec := range recs {
				if *asJSON {
					enc.Encode(report.Describe(p, rec))
				} else {
					report.Inspect(e.stdout, p, rec)
				}
			}
		}
		return status
	}
}

func synthCommand(fs *flag.FlagSet) func([]string, *env) int {
	shape := fs.String("shape", "lightning", "lightning or switching (`SHAPE`)")
	front := fs.Float64("front", 1.2, "T1 (lightning) or Tp (switching) in us (`US`)")
	tail := fs.Float64("tail", 50, "T2 in us (`US`)")
	neg := fs.Bool("negative", false, "negative polarity")
	ringA := fs.Float64("ring-amp", 0.05, "oscillation amplitude, a fraction of the peak (`FRACTION`)")
	noise := fs.Float64("noise", 0, "noise RMS, a fraction of the peak (`FRACTION`)")
	bits := fs.Int("bits", 0, "ADC bits, for quantisation (`N`)")
	ratio := fs.Float64("ratio", 1, "divider ratio: the file holds the voltage divided by this (`RATIO`)")
	coil := fs.String("coil", "", "add a coil channel: the setup file's coil keys plus the current: peak, freq and damp (a damped sine) or tau1 and tau2, noise (`KEY=VALUE,...`)")
	ant := fs.String("antenna", "", "add an antenna channel: the setup file's antenna keys plus peak (the field change) and noise (`KEY=VALUE,...`)")
	format := fs.String("format", "text", "text, npy or raw (raw also writes FILE.hvraw) (`FORMAT`)")
	out := fs.StringP("out", "o", "", "`FILE` to write, - for stdout (required)")
	seed := fs.String("seed", "1", "random seed, decimal; the same seed gives the same file (`N`)")
	force := fs.Bool("force", false, "replace an existing file")
	qs := map[string]*string{}
	for _, q := range [][3]string{{"peak", "300kV", "peak voltage"}, {"chop", "", "chop this long after the start of the impulse, e.g. 3us"},
		{"collapse", "100ns", "duration of the collapse at a chop"}, {"ring-freq", "", "damped oscillation frequency, e.g. 1MHz"},
		{"ring-damp", "1us", "oscillation decay time constant"}, {"offset", "0V", "baseline offset"}, {"pretrigger", "5us", "record time before the impulse"},
		{"interval", "5ns", "sample interval"}, {"duration", "", "record length (default: pretrigger + 3 x T2)"}, {"range", "", "scope full scale +-, clips there, e.g. 350kV"}} {
		qs[q[0]] = fs.String(q[0], q[1], q[2]+" (`QUANTITY`)")
	}
	return func(args []string, e *env) int {
		if *out == "" || len(args) > 0 {
			return e.usage("synth", "give the file to write with --out FILE (and no other arguments)")
		}
		var err error
		q := func(name, unit string) float64 {
			if *qs[name] == "" || err != nil {
				return 0
			}
			v, qerr := quantity(name, *qs[name], unit)
			if qerr != nil {
				err = qerr
			}
			return v
		}
		s, serr := strconv.ParseUint(*seed, 10, 64)
		if serr != nil {
			return e.usage("synth", "--seed: a decimal whole number, not %q", *seed)
		}
		spec := synth.Spec{Switching: *shape == "switching", Front_s: *front * 1e-6, Tail_s: *tail * 1e-6, Peak_v: q("peak", "V"),
			Negative: *neg, Chop_s: q("chop", "s"), Collapse_s: q("collapse", "s"), OscFreq_hz: q("ring-freq", "Hz"),
			OscAmp: *ringA, OscDamp_s: q("ring-damp", "s"), Noise: *noise, Offset_v: q("offset", "V"), PreTrigger_s: q("pretrigger", "s"),
			Interval_s: q("interval", "s"), Duration_s: q("duration", "s"), Range_v: q("range", "V"), Bits: *bits, Seed: s}
		if err == nil && *shape != "lightning" && *shape != "switching" {
			err = fmt.Errorf("--shape: lightning or switching, not %q", *shape)
		}
		if err == nil && *coil != "" {
			spec.Coil, err = synth.ParseCoil(*coil)
		}
		if err == nil && *ant != "" {
			spec.Antenna, err = synth.ParseAntenna(*ant)
		}
		if err != nil {
			return e.usage("synth", "%v", err)
		}
		if spec.OscFreq_hz == 0 {
			spec.OscAmp = 0
		}
		if spec.Duration_s == 0 {
			spec.Duration_s = spec.PreTrigger_s + 3*spec.Tail_s
		}
		rec, err := synth.Generate(spec)
		if err != nil {
			return e.usage("synth", "%v", err)
		}
		if *ratio != 1 && *ratio > 0 {
			synth.Scale(&rec.Channels[0], 1 / *ratio)
		}
		if *out == "-" {
			if *format == "raw" {
				return e.usage("synth", "--format raw writes a description beside the file: give a file name")
			}
			if _, err := readers.Encode(e.stdout, *format, rec); err != nil {
				return e.fail("synth", err)
			}
			return exitOK
		}
		if _, err := os.Stat(*out); err == nil && !*force {
			return e.usage("synth", "%s exists; use --force to replace it", *out)
		}
		if err := writeCapture(*out, *format, rec); err != nil {
			return e.fail("synth", err)
		}
		fmt.Fprintf(e.stderr, "wrote %s (%s, %d samples, synthetic)\n", *out, *format, rec.Len())
		return exitOK
	}
}

// writeCapture writes rec in a reader format, atomically; raw also writes the sidecar.
func writeCapture(path, format string, rec *waveform.Record) error {
	if strings.HasSuffix(path, readers.SidecarSuffix) {
		return fmt.Errorf("%s: refusing to write a capture under a raw description's name", path)
	}
	var b, side bytes.Buffer
	spec, err := readers.Encode(&b, format, rec)
	if err == nil && spec != nil {
		readers.WriteSidecar(&side, *spec)
		err = folder.WriteFile(path+readers.SidecarSuffix, side.Bytes())
	}
	if err == nil {
		err = folder.WriteFile(path, b.Bytes())
	}
	return err
}

func demoCommand(fs *flag.FlagSet) func([]string, *env) int {
	out := fs.String("out", "", "`FOLDER` for the demo captures and report (default: a new temporary folder)")
	plots := fs.String("plots", "svg", "svg, png or none (`FORMAT`)")
	return func(args []string, e *env) int {
		if _, err := report.ParsePlotFormat(*plots); err != nil {
			return e.usage("demo", "--plots: %v", err)
		}
		dir := *out
		if dir == "" {
			d, err := os.MkdirTemp("", "hvshot-demo-")
			if err != nil {
				return e.fail("demo", err)
			}
			dir = d
		}
		// the folder is taken as a report's is: never one holding files hvshot did not write
		root, err := folder.Open(dir, folder.Options{Replace: true, Clean: []string{"captures", "report"}})
		if err != nil {
			return e.usage("demo", "--out: %v", err)
		}
		files, err := synth.DemoFiles()
		for _, f := range files {
			if err == nil {
				err = root.WriteBytes("captures/"+f.Name, f.Data)
			}
		}
		if root.Close(); err != nil {
			return e.fail("demo", err)
		}
		caps := filepath.Join(dir, "captures")
		fmt.Fprintf(e.stderr, "invented demo series written to %s\n\n", caps)
		status := find("analyze").run([]string{"--out", filepath.Join(dir, "report"), "--force", "--quiet", "--plots", *plots, caps}, e)
		fmt.Fprintf(e.stderr, "\nreport: %s\n(the demo's out-of-tolerance and unreadable shots are deliberate; its exit status is 0 when the demo ran)\n",
			filepath.Join(dir, "report", "report.html"))
		if status == exitUsage || status == exitInterrupted {
			return status
		}
		return exitOK
	}
}

func selfcheckCommand(fs *flag.FlagSet) func([]string, *env) int {
	asJSON := fs.Bool("json", false, "print the checks as JSON")
	return func(args []string, e *env) int {
		lines, err := impulse.SelfCheck()
		if err != nil {
			return e.fail("selfcheck", err)
		}
		if *asJSON {
			json.NewEncoder(e.stdout).Encode(lines)
		} else {
			report.SelfCheck(e.stdout, Version, lines)
		}
		if impulse.Failed(lines) {
			return exitOutOfTol
		}
		return exitOK
	}
}
