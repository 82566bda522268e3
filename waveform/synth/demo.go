package synth

import (
	"bytes"
	_ "embed"
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/probe"
	"github.com/hvshot/hvshot/waveform/shot"
)

// DemoSetup is the invented demo series' setup file, written beside its captures.
//
//go:embed demo_setup.toml
var DemoSetup string

// DemoShot is one capture of the invented demo series. The scenario is invented: an
// insulator qualification in a test bay with an eight-stage generator. Nothing here is
// a measurement.
type DemoShot struct {
	File   string // file name in the demo folder
	Format string // text, npy or raw
	Spec   Spec
	// Garbage is a file's whole content when it is not a capture at all (a capture
	// cut off by a full disk); NoImpulse replaces the divider with noise (the generator
	// did not fire).
	Garbage   []byte
	NoImpulse bool
}

// Demo returns the invented demo series: good shots, a slow front, ringing, a
// flashover chop, a clipped record, a shot with no impulse, an unreadable file, and
// coil and antenna channels on some shots; then, in folders of their own, a withstand
// test of the batch by procedure B, an up-and-down series on a test gap, and an
// invented winding's reduced-level and full-level shots for a comparison.
func Demo() []DemoShot {
	heff, ca := probe.Whip(0.5, 0.002)
	cl, r := 20e-12, 1e6
	ant := &Antenna{Gain: heff * ca / (ca + cl), Tau_s: r * (ca + cl), Peak_v_per_m: 18e3, Noise_v: 0.002}
	m := probe.MutualRectangular(1, 0.05, 0.5, 0.55)
	coil := func(peak float64) *Coil {
		return &Coil{M_h: m, L_h: 50e-9, R_ohm: 50, Peak_a: peak, Freq_hz: 300e3, Damp_s: 3e-6, Noise_v: 0.002}
	}
	base := func(front, tail, peak float64, seed uint64) Spec {
		return Spec{Front_s: front * 1e-6, Tail_s: tail * 1e-6, Peak_v: peak * 1e3, Noise: 0.003, PreTrigger_s: 5e-6,
			Interval_s: 10e-9, Duration_s: 150e-6, Seed: seed, Range_v: 200e3, Bits: 12}
	}
	var shots []DemoShot
	add := func(file, format string, s Spec) {
		shots = append(shots, DemoShot{File: file, Format: format, Spec: s})
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
	s.Range_v = 140e3
	add("shot09.csv", "text", s)
	shots = append(shots, DemoShot{File: "shot10.csv", Format: "text", Spec: base(1.2, 50, 150, 10), NoImpulse: true})
	// a capture cut off mid-line with binary junk: the scope's disk filled up
	junk := rand.New(rand.NewPCG(11, 11))
	g := []byte("t [s],divider [V]\n-5e-06,0.0012\n-4.99e-06,0.0009\n-4.98e-06,0.00")
	for i := 0; i < 64; i++ {
		g = append(g, byte(junk.IntN(256)))
	}
	shots = append(shots, DemoShot{File: "shot11.csv", Garbage: g})
	add("shot12.csv", "text", base(1.19, 51.2, 150.6, 12))
	shots = append(shots, demoWithstand(base)...)
	shots = append(shots, demoGap(base)...)
	return append(shots, demoWinding(base)...)
}

// demoWinding is an invented winding test in the same bay: a reduced-level impulse
// (60 %), then full-level ones, the winding's current to earth recorded beside the
// voltage. The last full-level shot meets a changed winding (one capacitance to earth
// 5 % up, as an invented fault would leave it): its comparison with the reduced-level
// shot flags it.
func demoWinding(base func(front, tail, peak float64, seed uint64) Spec) []DemoShot {
	winding := func(file string, peak float64, seed uint64, altered int) DemoShot {
		s := base(1.2, 50, peak, seed)
		s.Noise, s.PreTrigger_s, s.Interval_s, s.Duration_s = 0.002*150/peak, 10e-6, 20e-9, 250e-6
		s.Winding = &Winding{Sections: 4, L_h: 0.5e-3, R_ohm: 27.5, Cg_f: 10e-9, Shunt_ohm: 0.5, Altered: altered, Factor: 1.05, Noise_a: 2.1}
		return DemoShot{File: "winding/" + file, Format: "text", Spec: s}
	}
	return []DemoShot{winding("reduced01.csv", 90, 21, 0), winding("full02.csv", 150.3, 22, 0),
		winding("full03.csv", 149.8, 23, 0), winding("full04.csv", 150.1, 24, 2)}
}

// demoWithstand is the batch's invented withstand test, procedure B at 150 kV positive
// (applied as U0 Kt, 148.8 kV in the demo's air): two setting-up impulses at 50 and 75 %,
// then 15 at the level, the seventh of which flashes over on the tail.
func demoWithstand(base func(front, tail, peak float64, seed uint64) Spec) []DemoShot {
	var out []DemoShot
	r := rand.New(rand.NewPCG(20, 20))
	for i := 1; i <= 17; i++ {
		peak := 148.8 + 0.6*r.NormFloat64()
		switch i {
		case 1:
			peak = 75
		case 2:
			peak = 112
		}
		s := base(1.2+0.03*r.NormFloat64(), 50+0.6*r.NormFloat64(), peak, uint64(100+i))
		s.Duration_s = 120e-6
		if i == 9 {
			s.Chop_s, s.Collapse_s = 11e-6, 90e-9
		}
		out = append(out, DemoShot{File: fmt.Sprintf("withstand/shot%02d.csv", i), Format: "text", Spec: s})
	}
	return out
}

// Invented test gap: its 50 % discharge voltage and standard deviation, and the
// up-and-down series' first level and step.
const (
	gapU50_kv, gapSigma_kv  = 118, 3.5
	gapStart_kv, gapStep_kv = 106, 4
	gapShots                = 26
)

// demoGap is an up-and-down series on the invented test gap: one impulse per level, a
// step up after a withstand and down after a discharge; whether each discharges is drawn
// from a normal distribution of the gap's discharge voltage, and a discharge collapses
// the voltage near the crest or on the tail.
func demoGap(base func(front, tail, peak float64, seed uint64) Spec) []DemoShot {
	var out []DemoShot
	r := rand.New(rand.NewPCG(30, 30))
	level := float64(gapStart_kv)
	for i := 1; i <= gapShots; i++ {
		s := base(1.2+0.03*r.NormFloat64(), 50+0.6*r.NormFloat64(), level, uint64(200+i))
		s.Duration_s = 120e-6
		discharged := r.Float64() < 0.5*math.Erfc(-(level-gapU50_kv)/gapSigma_kv/math.Sqrt2)
		if discharged {
			s.Chop_s, s.Collapse_s = 4e-6+8e-6*r.Float64(), 60e-9
			level -= gapStep_kv
		} else {
			level += gapStep_kv
		}
		out = append(out, DemoShot{File: fmt.Sprintf("gap/shot%02d.csv", i), Format: "text", Spec: s})
	}
	return out
}

// Record makes the demo shot's capture as its file holds it: the divider channel at
// the scope, behind the demo's 1000:1 divider.
func (d DemoShot) Record() (*waveform.Record, error) {
	rec, err := Generate(d.Spec)
	if err != nil {
		return nil, err
	}
	if d.NoImpulse {
		r := rand.New(rand.NewPCG(10, 10))
		for i := range rec.Channels[0].Samples {
			rec.Channels[0].Samples[i] = 400 * r.NormFloat64()
		}
	}
	rec.Meta["scenario"] = "invented demo series, not a measurement"
	Scale(&rec.Channels[0], 1.0/1000)
	return rec, nil
}

// Scale multiplies a channel's samples and range by k: a divider's ratio undone.
func Scale(c *waveform.Channel, k float64) {
	for i := range c.Samples {
		c.Samples[i] *= k
	}
	c.RangeMin, c.RangeMax = c.RangeMin*k, c.RangeMax*k
}

// DemoFile is one file of the demo folder, as it is written.
type DemoFile struct {
	Name string
	Data []byte
}

// DemoFiles returns the demo folder's files: the setup file, then each capture in its
// format (a raw capture followed by its description).
func DemoFiles() ([]DemoFile, error) {
	files := []DemoFile{{shot.SetupFileName, []byte(DemoSetup)}}
	for _, d := range Demo() {
		if d.Garbage != nil {
			files = append(files, DemoFile{d.File, d.Garbage})
			continue
		}
		rec, err := d.Record()
		if err != nil {
			return nil, fmt.Errorf("%s: %v", d.File, err)
		}
		var b bytes.Buffer
		spec, err := readers.Encode(&b, d.Format, rec)
		if err != nil {
			return nil, fmt.Errorf("%s: %v", d.File, err)
		}
		files = append(files, DemoFile{d.File, b.Bytes()})
		if spec != nil {
			var side bytes.Buffer
			readers.WriteSidecar(&side, *spec)
			files = append(files, DemoFile{d.File + readers.SidecarSuffix, side.Bytes()})
		}
	}
	return files, nil
}
