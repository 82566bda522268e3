package shot

import (
	"fmt"
	"math"
	"strings"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/circuit"
	"github.com/hvshot/hvshot/waveform/impulse"
)

// Plausible ranges of the generator circuit's values (ours): beyond them a value is
// almost surely in another unit (0.3 read as farads where microfarads were meant).
var circuitRanges = map[string][2]float64{
	"stage_capacitance":        {1e-9, 100e-6},
	"capacitance":              {100e-12, 100e-6},
	"load_capacitance":         {1e-12, 10e-6},
	"front_resistor_per_stage": {0.01, 10e6},
	"tail_resistor_per_stage":  {0.01, 10e6},
}

// circuitOf checks the [generator] table's circuit keys and returns the circuit they
// describe, or nil when they describe none; bad makes the error for a key.
func (g GeneratorSetup) circuitOf(bad func(key, format string, a ...any) error) (*circuit.Generator, error) {
	qs := []struct {
		key, unit string
		q         Quantity
	}{{"stage_capacitance", "F", g.StageCapacitance}, {"capacitance", "F", g.Capacitance}, {"load_capacitance", "F", g.LoadCapacitance},
		{"front_resistor_per_stage", "ohm", g.FrontPerStage}, {"tail_resistor_per_stage", "ohm", g.TailPerStage}}
	described := g.TailResistor != ""
	for _, q := range qs {
		if err := q.q.in(q.key, q.unit); err != nil {
			return nil, bad(q.key, "%v", strings.TrimPrefix(err.Error(), q.key+": "))
		}
		if !q.q.Set {
			continue
		}
		described = true
		r := circuitRanges[q.key]
		if !(q.q.V >= r[0] && q.q.V <= r[1]) {
			hint := "a slip of unit prefix?"
			if q.q.Unit == "" {
				hint = fmt.Sprintf("a bare number is read in %s: write it with its unit, e.g. %q", q.unit, map[string]string{"F": "0.3 uF", "ohm": "50 ohm"}[q.unit])
			}
			return nil, bad(q.key, "%g %s is implausible, outside %g to %g %s where generators' values lie (ours): %s", q.q.V, q.unit, r[0], r[1], q.unit, hint)
		}
	}
	if !described {
		return nil, nil
	}
	c := &circuit.Generator{Stages: g.Stages, Stage_f: g.StageCapacitance.V, C1_f: g.Capacitance.V, C2_f: g.LoadCapacitance.V,
		Front_ohm: g.FrontPerStage.V, Tail_ohm: g.TailPerStage.V}
	switch {
	case g.StageCapacitance.Set && g.Capacitance.Set:
		return nil, bad("capacitance", "give the stage capacitance or C1 as a whole (capacitance), not both")
	case !g.StageCapacitance.Set && !g.Capacitance.Set:
		return nil, bad("load_capacitance", "the generator's capacitance is missing: the stage capacitance (with the stage count) or C1 as a whole (capacitance)")
	case g.StageCapacitance.Set && g.Stages < 1:
		return nil, bad("stage_capacitance", "needs the stage count: C1 is the stage capacitance over the number of stages")
	case !g.LoadCapacitance.Set:
		return nil, bad("load_capacitance", "missing: C2, the test object's, the divider's and the strays' capacitance together")
	case g.TailResistor == "":
		return nil, bad("tail_resistor", "missing: generator_side or load_side, where the tail resistor sits")
	case (g.FrontPerStage.Set || g.TailPerStage.Set) && g.Stages < 1:
		return nil, bad("stages", "the installed resistors are per stage: give the stage count")
	}
	var err error
	if c.Tail, err = circuit.ParseTopology(g.TailResistor); err != nil {
		return nil, bad("tail_resistor", "%v", err)
	}
	return c, nil
}

// ParseGenerator reads a generator circuit the way a command line gives it: the stage
// count, the stage capacitance or C1 as a whole, the load capacitance C2 (each with its
// unit: "0.3uF", "400pF"), and the side of the tail resistor. The checks are the setup
// file's.
func ParseGenerator(stages int, stageC, c1, c2, tail string) (*circuit.Generator, error) {
	if stageC == "" && c1 == "" && c2 == "" {
		return nil, fmt.Errorf("describe the generator: --stages and --stage-capacitance (or --capacitance), and --load")
	}
	if stages < 0 {
		return nil, fmt.Errorf("--stages: a positive whole number, not %d", stages)
	}
	var g GeneratorSetup
	g.Stages, g.TailResistor = stages, tail
	for _, f := range []struct {
		flag, text string
		q          *Quantity
	}{{"stage-capacitance", stageC, &g.StageCapacitance}, {"capacitance", c1, &g.Capacitance}, {"load", c2, &g.LoadCapacitance}} {
		if f.text == "" {
			continue
		}
		v, err := readers.ParseQuantityIn(f.text, "F")
		if err != nil {
			return nil, fmt.Errorf("--%s: %v", f.flag, err)
		}
		*f.q = Quantity{V: v, Set: true, Unit: "F"}
	}
	flags := map[string]string{"stage_capacitance": "--stage-capacitance", "capacitance": "--capacitance", "load_capacitance": "--load",
		"tail_resistor": "--tail-resistor", "stages": "--stages"}
	return g.circuitOf(func(key, format string, a ...any) error {
		return fmt.Errorf("%s: %s", flags[key], fmt.Sprintf(format, a...))
	})
}

// ParseDesign reads what `hvshot design` is given: the generator as ParseGenerator
// reads it, the nominal shape ("1.2/50") and the front time's factor (1.67, or 1/0.6 as
// some texts take it).
func ParseDesign(stages int, stageC, c1, c2, tail, nominal string, frontFactor float64) (circuit.Generator, circuit.Target, error) {
	g, err := ParseGenerator(stages, stageC, c1, c2, tail)
	if err != nil {
		return circuit.Generator{}, circuit.Target{}, err
	}
	nom, err := impulse.ParseNominal(nominal)
	if err != nil {
		return *g, circuit.Target{}, fmt.Errorf("--nominal: %v", err)
	}
	if !(frontFactor > 1.5 && frontFactor < 1.8) {
		return *g, circuit.Target{}, fmt.Errorf("--front-factor: 1.67 or near it, not %g", frontFactor)
	}
	t := TargetOf(nom)
	t.FrontFactor = frontFactor
	return *g, t, nil
}

// TargetOf is the shape a nominal asks for, as the circuit package designs for it.
func TargetOf(n impulse.Nominal) circuit.Target {
	return circuit.Target{Front_s: n.Front_s, Tail_s: n.Tail_s, Switching: n.Switching()}
}

// advise identifies the generator circuit behind a full impulse's base curve and
// designs the resistors for the nominal; nil when the circuit is not described, the
// base curve was not fitted, or the shot is no full lightning or switching impulse.
func advise(r *impulse.Result, nom impulse.Nominal, cfg *Config) *circuit.Advice {
	if cfg.Circuit == nil || !r.FitOK || !(r.Shape == impulse.LightningFull || r.Shape == impulse.Switching) || r.FrontChopped {
		return nil
	}
	g := *cfg.Circuit
	g.Stages = cfg.Stages // a --stages given on the command line counts
	p := r.Fit.Params
	if !(p.Tau1_s > p.Tau2_s) || math.IsNaN(p.Tau1_s) {
		return nil
	}
	return circuit.Advise(p.Tau1_s, p.Tau2_s, g, TargetOf(nom))
}

// timeFailed reports whether a time parameter is among the failures: then resistors
// would fix it, and the row carries the advice.
func timeFailed(fs []impulse.Failure) bool {
	for _, f := range fs {
		switch f.Parameter {
		case "front_time", "time_to_half", "time_to_peak":
			return true
		}
	}
	return false
}
