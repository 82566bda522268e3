package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"strings"

	flag "github.com/spf13/pflag"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/synth"
)

func cmdSynth(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("synth", flag.ContinueOnError)
	fs.SetOutput(stderr)
	shape := fs.String("shape", "lightning", "lightning or switching")
	front := fs.Float64("front", 1.2, "T1 (lightning) or Tp (switching) in us")
	tail := fs.Float64("tail", 50, "T2 in us")
	peak := fs.String("peak", "300kV", "peak voltage")
	neg := fs.Bool("negative", false, "negative polarity")
	chop := fs.String("chop", "", "chop this long after the start of the impulse, e.g. 3us")
	collapse := fs.String("collapse", "100ns", "duration of the collapse at a chop")
	ringF := fs.String("ring-freq", "", "damped oscillation frequency, e.g. 1MHz")
	ringA := fs.Float64("ring-amp", 0.05, "oscillation amplitude, fraction of the peak")
	ringD := fs.String("ring-damp", "1us", "oscillation decay time constant")
	noise := fs.Float64("noise", 0, "noise RMS, fraction of the peak")
	offset := fs.String("offset", "0V", "baseline offset")
	pre := fs.String("pretrigger", "5us", "record time before the impulse")
	interval := fs.String("interval", "5ns", "sample interval")
	duration := fs.String("duration", "", "record length (default: 3 x T2)")
	rangeV := fs.String("range", "", "scope full scale +-, clips there, e.g. 350kV")
	bits := fs.Int("bits", 0, "ADC bits (quantisation)")
	ratio := fs.Float64("ratio", 1, "divider ratio: the file holds the voltage divided by this")
	coil := fs.String("coil", "", "add a coil channel: M=1nH,L=50nH,R=50,peak=1.5kA,freq=300kHz,damp=3us (or tau1=,tau2=)")
	ant := fs.String("antenna", "", "add an antenna channel: gain=0.06,tau=26us,peak=20kV/m")
	format := fs.String("format", "text", "text, npy or raw (raw also writes FILE.hvraw)")
	out := fs.StringP("out", "o", "", "file to write (required)")
	seed := fs.Uint64("seed", 1, "random seed; the same seed gives the same file")
	fs.Usage = func() {
		fmt.Fprint(stderr, `usage: hvshot synth [flags] --out FILE
Writes a synthetic capture (its metadata says so) for rehearsals and dry runs.

examples:
  hvshot synth --out shot.csv
  hvshot synth --front 1.2 --tail 50 --chop 3us --out chopped.csv
  hvshot synth --shape switching --front 250 --tail 2500 --interval 0.5us --out si.npy --format npy
  hvshot synth --ring-freq 0.5MHz --ring-amp 0.12 --noise 0.005 --bits 8 --range 350kV --out ringing.csv
  hvshot synth --coil M=1nH,L=50nH,R=50,peak=1.5kA,freq=300kHz,damp=3us --antenna gain=0.06,tau=26us,peak=20kV/m --out full.csv

flags:
`)
		fs.PrintDefaults()
	}
	if code, stop := parseFlags(fs, args); stop {
		return code
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "hvshot synth: %s\n", fmt.Sprintf(format, a...))
		return exitUsage
	}
	if *out == "" {
		fs.Usage()
		return exitUsage
	}
	q := func(name, s string) float64 {
		if s == "" {
			return 0
		}
		v, _, err := readers.ParseQuantity(s)
		if err != nil {
			panic(fmt.Errorf("--%s: %v", name, err))
		}
		return v
	}
	var spec synth.Spec
	err := func() (err error) {
		defer func() {
			if r := recover(); r != nil {
				err = r.(error)
			}
		}()
		spec = synth.Spec{Switching: *shape == "switching", Front_s: *front * 1e-6, Tail_s: *tail * 1e-6, Peak_v: q("peak", *peak),
			Negative: *neg, Chop_s: q("chop", *chop), Collapse_s: q("collapse", *collapse), OscFreq_hz: q("ring-freq", *ringF),
			OscAmp: *ringA, OscDamp_s: q("ring-damp", *ringD), Noise: *noise, Offset_v: q("offset", *offset),
			PreTrigger_s: q("pretrigger", *pre), Interval_s: q("interval", *interval), Duration_s: q("duration", *duration),
			RangeV: q("range", *rangeV), Bits: *bits, Seed: *seed}
		if spec.OscFreq_hz == 0 {
			spec.OscAmp = 0
		}
		if spec.Duration_s == 0 {
			spec.Duration_s = spec.PreTrigger_s + 3*spec.Tail_s
		}
		if *coil != "" {
			m, err := parseKV(*coil)
			if err != nil {
				return err
			}
			spec.Coil = &synth.Coil{M_h: q("coil M", m["M"]), L_h: q("coil L", m["L"]), Rc_ohm: q("coil Rc", m["Rc"]), R_ohm: q("coil R", m["R"]),
				PeakA: q("coil peak", m["peak"]), Tau1_s: q("coil tau1", m["tau1"]), Tau2_s: q("coil tau2", m["tau2"]),
				Freq_hz: q("coil freq", m["freq"]), Damp_s: q("coil damp", m["damp"]), Noise_v: q("coil noise", m["noise"])}
			if spec.Coil.R_ohm == 0 {
				spec.Coil.R_ohm = 50
			}
		}
		if *ant != "" {
			m, err := parseKV(*ant)
			if err != nil {
				return err
			}
			spec.Antenna = &synth.Antenna{Gain: q("antenna gain", m["gain"]), Tau_s: q("antenna tau", m["tau"]), PeakVPerM: q("antenna peak", m["peak"]), Noise_v: q("antenna noise", m["noise"])}
		}
		return nil
	}()
	if err != nil {
		return fail("%v", err)
	}
	if *shape != "lightning" && *shape != "switching" {
		return fail("--shape: lightning or switching, not %q", *shape)
	}
	rec, err := synth.Generate(spec)
	if err != nil {
		return fail("%v", err)
	}
	if *ratio != 1 && *ratio > 0 {
		scaleChannel(&rec.Channels[0], 1 / *ratio)
	}
	if err := writeCapture(*out, *format, rec); err != nil {
		fmt.Fprintln(stderr, "hvshot synth:", err)
		return exitFileErrors
	}
	fmt.Fprintf(stdout, "wrote %s (%s, %d samples, synthetic)\n", *out, *format, rec.Len())
	return exitOK
}

func scaleChannel(c *waveform.Channel, k float64) {
	for i := range c.Samples {
		c.Samples[i] *= k
	}
	c.RangeMin, c.RangeMax = c.RangeMin*k, c.RangeMax*k
}

// writeCapture writes rec in a reader format, atomically; raw also writes the sidecar.
func writeCapture(path, format string, rec *waveform.Record) error {
	var b bytes.Buffer
	switch format {
	case "text", "csv":
		// nine significant digits: beyond any scope's ADC, and quick to read back
		if err := readers.WriteTextDigits(&b, rec, 9); err != nil {
			return err
		}
	case "npy":
		if err := readers.WriteNPY(&b, rec); err != nil {
			return err
		}
	case "raw":
		spec, err := readers.WriteRaw(&b, rec)
		if err != nil {
			return err
		}
		var sc bytes.Buffer
		readers.WriteSidecar(&sc, spec)
		sc.WriteString("# synthetic capture made by hvshot synth\n")
		if err := writeAtomic(path+readers.SidecarSuffix, sc.Bytes()); err != nil {
			return err
		}
	default:
		return fmt.Errorf("--format: text, npy or raw, not %q", format)
	}
	if _, err := os.Stat(path); err == nil && strings.HasSuffix(path, readers.SidecarSuffix) {
		return fmt.Errorf("%s: refusing to write a capture over a raw description", path)
	}
	return writeAtomic(path, b.Bytes())
}
