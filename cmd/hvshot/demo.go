package main

import (
	_ "embed"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"

	flag "github.com/spf13/pflag"

	"github.com/hvshot/hvshot/waveform/probe"
	"github.com/hvshot/hvshot/waveform/synth"
)

// demoSetup is the invented demo series' setup file, written beside its captures.
//
//go:embed demo_setup.toml
var demoSetup string

// The demo scenario is invented: an insulator qualification in a test bay with an
// eight-stage generator. Nothing here is a measurement.
type demoShot struct {
	file, format string
	spec         synth.Spec
	sensors      bool
	garbage      bool
	noImpulse    bool
}

func demoShots() []demoShot {
	heff, ca := probe.Whip(0.5, 0.002)
	cl, r := 20e-12, 1e6
	ant := &synth.Antenna{Gain: heff * ca / (ca + cl), Tau_s: r * (ca + cl), PeakVPerM: 18e3, Noise_v: 0.002}
	m := probe.MutualRectangular(1, 0.05, 0.5, 0.55)
	coil := func(peak float64) *synth.Coil {
		return &synth.Coil{M_h: m, L_h: 50e-9, R_ohm: 50, PeakA: peak, Freq_hz: 300e3, Damp_s: 3e-6, Noise_v: 0.002}
	}
	base := func(front, tail, peak float64, seed uint64) synth.Spec {
		return synth.Spec{Front_s: front * 1e-6, Tail_s: tail * 1e-6, Peak_v: peak * 1e3, Noise: 0.003, PreTrigger_s: 5e-6,
			Interval_s: 10e-9, Duration_s: 150e-6, Seed: seed, RangeV: 200e3, Bits: 12}
	}
	var shots []demoShot
	add := func(file, format string, s synth.Spec) {
		shots = append(shots, demoShot{file: file, format: format, spec: s})
	}
	s := base(1.22, 49.5, 150.4, 1)
	s.Coil, s.Antenna = coil(1.5e3), ant
	add("shot01.csv", "text", s)
	add("shot02.csv", "text", base(1.18, 50.8, 149.6, 2))
	s = base(1.25, 48.9, 151.0, 3)
	s.Coil, s.Antenna = coil(1.55e3), ant
	add("shot03.csv", "text", s)
	add("shot04.bin", "raw", base(1.20, 50.2, 150.1, 4))
	s = base(1.21, 49.8, 149.9, 5)
	s.Negative = true
	add("shot05.npy", "npy", s)
	add("shot06.csv", "text", base(1.85, 52.0, 148.8, 6)) // slow front
	s = base(1.10, 49.0, 146.0, 7)                        // ringing: overshoot
	s.OscFreq_hz, s.OscAmp, s.OscDamp_s = 1.5e6, 0.35, 1.5e-6
	add("shot07.csv", "text", s)
	s = base(1.22, 50.0, 150.2, 8) // flashover on the tail
	s.Chop_s, s.Collapse_s = 4e-6, 80e-9
	s.Coil = coil(2.4e3)
	add("shot08.csv", "text", s)
	s = base(1.20, 50.0, 150.0, 9) // scope range set too low: clipped
	s.RangeV = 140e3
	add("shot09.csv", "text", s)
	shots = append(shots, demoShot{file: "shot10.csv", format: "text", spec: base(1.2, 50, 150, 10), noImpulse: true})
	shots = append(shots, demoShot{file: "shot11.csv", garbage: true})
	add("shot12.csv", "text", base(1.19, 51.2, 150.6, 12))
	return shots
}

// writeDemo writes the invented demo series into dir.
func writeDemo(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	if err := writeAtomic(filepath.Join(dir, SetupFileName), []byte(demoSetup)); err != nil {
		return err
	}
	for _, d := range demoShots() {
		p := filepath.Join(dir, d.file)
		if d.garbage {
			// a capture cut off mid-line with binary junk: the scope's disk filled up
			r := rand.New(rand.NewPCG(11, 11))
			b := []byte("t [s],divider [V]\n-5e-06,0.0012\n-4.99e-06,0.0009\n-4.98e-06,0.00")
			for i := 0; i < 64; i++ {
				b = append(b, byte(r.IntN(256)))
			}
			if err := writeAtomic(p, b); err != nil {
				return err
			}
			continue
		}
		rec, err := synth.Generate(d.spec)
		if err != nil {
			return fmt.Errorf("%s: %v", d.file, err)
		}
		if d.noImpulse {
			// the generator did not fire: only noise on the divider
			r := rand.New(rand.NewPCG(10, 10))
			for i := range rec.Channels[0].Samples {
				rec.Channels[0].Samples[i] = 400 * r.NormFloat64()
			}
		}
		rec.Meta["scenario"] = "invented demo series, not a measurement"
		scaleChannel(&rec.Channels[0], 1.0/1000) // the divider's 1000:1 ratio
		if err := writeCapture(p, d.format, rec); err != nil {
			return err
		}
	}
	return nil
}

func cmdDemo(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	fs.SetOutput(stderr)
	out := fs.String("out", "", "folder for the demo captures and report (default: a new temporary folder)")
	plots := fs.String("plots", "svg", "svg, png or none")
	fs.Usage = func() {
		fmt.Fprint(stderr, `usage: hvshot demo [--out DIR]
Builds an invented demo series (an insulator qualification with an eight-stage
generator: good shots, a slow front, ringing, a flashover chop, a clipped record, a
shot with no impulse, an unreadable file, coil and antenna channels) and evaluates it.

flags:
`)
		fs.PrintDefaults()
	}
	if code, stop := parseFlags(fs, args); stop {
		return code
	}
	dir := *out
	if dir == "" {
		d, err := os.MkdirTemp("", "hvshot-demo-")
		if err != nil {
			fmt.Fprintln(stderr, "hvshot demo:", err)
			return exitFileErrors
		}
		dir = d
	}
	caps := filepath.Join(dir, "captures")
	if err := writeDemo(caps); err != nil {
		fmt.Fprintln(stderr, "hvshot demo:", err)
		return exitFileErrors
	}
	fmt.Fprintf(stdout, "invented demo series written to %s\n\n", caps)
	status := cmdAnalyze([]string{"--out", filepath.Join(dir, "report"), "--force", "--quiet", "--plots", *plots, caps}, nil, stdout, stderr, false)
	fmt.Fprintf(stdout, "\nreport: %s\n", filepath.Join(dir, "report", "report.html"))
	fmt.Fprintln(stdout, "(the demo's out-of-tolerance and unreadable shots are deliberate; its exit status is 0 when the demo ran)")
	if status == exitUsage {
		return status
	}
	return exitOK
}
