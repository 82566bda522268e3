package shot_test

import (
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/circuit"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/shot"
	"github.com/hvshot/hvshot/waveform/synth"
)

var (
	colRf       = column("front_resistance_ohm")
	colRt       = column("tail_resistance_ohm")
	colRfDesign = column("front_resistance_for_nominal_ohm")
	colRtDesign = column("tail_resistance_for_nominal_ohm")
)

func column(key string) *shot.Column {
	for _, c := range shot.Columns {
		if c.Key == key {
			return c
		}
	}
	panic("no column " + key)
}

// A bad generator circuit is refused naming the key and the line, with the reason.
func TestGeneratorSetupErrors(t *testing.T) {
	const ok = "[generator]\nstages = 8\nstage_capacitance = \"0.2 uF\"\nload_capacitance = \"1.2 nF\"\ntail_resistor = \"generator_side\"\n"
	_, err := shot.ParseSetup([]byte(ok), "s.toml")
	require.NoError(t, err)
	for _, c := range []struct {
		name, text string
		want       []string
	}{
		{"stage capacitance without stages", "[generator]\nstage_capacitance = \"0.2 uF\"\nload_capacitance = \"1 nF\"\ntail_resistor = \"load_side\"\n",
			[]string{"s.toml:2", "generator.stage_capacitance", "needs the stage count"}},
		{"a string without its unit", strings.Replace(ok, `"0.2 uF"`, `"0.2"`, 1), []string{"s.toml:3", "has no unit"}},
		{"microfarads as a bare number", strings.Replace(ok, `"0.2 uF"`, `0.2`, 1), []string{"s.toml:3", "0.2 F is implausible", "0.3 uF"}},
		{"the unit of another quantity", strings.Replace(ok, `"1.2 nF"`, `"1.2 nH"`, 1), []string{"s.toml:4", "H is not a unit of capacitance"}},
		{"both capacitances", ok + "capacitance = \"25 nF\"\n", []string{"s.toml:6", "not both"}},
		{"no generator capacitance", "[generator]\nload_capacitance = \"1 nF\"\ntail_resistor = \"load_side\"\n", []string{"s.toml:2", "the stage capacitance (with the stage count) or C1 as a whole"}},
		{"no load", strings.Replace(ok, "load_capacitance = \"1.2 nF\"\n", "", 1), []string{"s.toml:1", "generator.load_capacitance", "missing"}},
		{"no side", strings.Replace(ok, "tail_resistor = \"generator_side\"\n", "", 1), []string{"s.toml:1", "generator.tail_resistor", "generator_side or load_side"}},
		{"a side of its own", strings.Replace(ok, `"generator_side"`, `"middle"`, 1), []string{"s.toml:5", `not "middle"`}},
		{"installed resistor in farads", ok + "front_resistor_per_stage = \"50 nF\"\n", []string{"s.toml:6", "F is not a unit of resistance"}},
		{"installed resistors need stages", "[generator]\ncapacitance = \"25 nF\"\nload_capacitance = \"1 nF\"\ntail_resistor = \"load_side\"\ntail_resistor_per_stage = \"300 ohm\"\n",
			[]string{"generator.stages", "per stage"}},
		{"a resistor of 50 Mohm", ok + "tail_resistor_per_stage = \"50 Mohm\"\n", []string{"s.toml:6", "implausible"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := shot.ParseSetup([]byte(c.text), "s.toml")
			require.Error(t, err)
			for _, w := range c.want {
				assert.Contains(t, err.Error(), w)
			}
		})
	}
}

// The command line's form takes the same values and says which flag is wrong.
func TestParseGenerator(t *testing.T) {
	g, err := shot.ParseGenerator(12, "0.3uF", "", "400pF", "generator-side")
	require.NoError(t, err)
	assert.InEpsilon(t, 25e-9, g.Erected_f(), 1e-12)
	assert.InEpsilon(t, 0.4e-9, g.C2_f, 1e-12)
	assert.Equal(t, circuit.TailGeneratorSide, g.Tail)
	g, err = shot.ParseGenerator(0, "", "25nF", "2nF", "load_side")
	require.NoError(t, err)
	assert.InEpsilon(t, 25e-9, g.Erected_f(), 1e-12)
	for _, c := range []struct {
		stages               int
		stageC, c1, c2, side string
		want                 string
	}{
		{0, "", "", "", "generator_side", "describe the generator"},
		{12, "0.3uF", "", "", "generator_side", "--load: missing"},
		{12, "0.3", "", "400pF", "generator_side", "--stage-capacitance"},
		{0, "0.3uF", "", "400pF", "generator_side", "--stage-capacitance: needs the stage count"},
		{12, "0.3uF", "", "400pF", "sideways", "--tail-resistor"},
		{12, "0.3uF", "25nF", "400pF", "load_side", "--capacitance: give the stage capacitance or C1 as a whole"},
	} {
		_, err := shot.ParseGenerator(c.stages, c.stageC, c.c1, c.c2, c.side)
		assert.ErrorContains(t, err, c.want)
	}
}

// A capture made from a known circuit (invented values; its closed form, checked against
// SciPy's solve_ivp in waveform/circuit) gives its resistors back through the base-curve
// fit, within the fit's accuracy under 0.2 % noise; the design columns are the
// circuit package's design for the nominal.
func TestResistorsIdentifiedFromCapture(t *testing.T) {
	for _, c := range []struct {
		name           string
		rf, rt, c1, c2 float64
		side           string
		setup          string
	}{
		{"generator side, slow front", 560, 2600, 25e-9, 1.2e-9, "generator_side", "stages = 8\nstage_capacitance = \"0.2 uF\"\nload_capacitance = \"1.2 nF\"\n"},
		{"load side", 250, 2300, 25e-9, 2e-9, "load_side", "capacitance = \"25 nF\"\nload_capacitance = \"2 nF\"\n"},
		{"switching, generator side", 14e3, 56e3, 50e-9, 5e-9, "generator_side", "capacitance = \"50 nF\"\nload_capacitance = \"5 nF\"\n"},
	} {
		t.Run(c.name, func(t *testing.T) {
			top, err := circuit.ParseTopology(c.side)
			require.NoError(t, err)
			tau1, tau2, err := circuit.TimeConstants(c.rf, c.rt, c.c1, c.c2, top)
			require.NoError(t, err)
			switching := tau2 > 10e-6
			front, tail := circuit.Target{Switching: switching}.Of(tau1, tau2)
			dt := 10e-9
			if switching {
				dt = 1e-6
			}
			rec, err := synth.Generate(synth.Spec{Tau1_s: tau1, Tau2_s: tau2, Front_s: front, Tail_s: tail, Switching: switching, Peak_v: 300e3,
				Noise: 0.002, PreTrigger_s: 20 * dt * 100, Interval_s: dt, Duration_s: 3 * tail, Seed: 5})
			require.NoError(t, err)
			s, err := shot.ParseSetup([]byte("[generator]\ntail_resistor = \""+c.side+"\"\n"+c.setup), "s.toml")
			require.NoError(t, err)
			cfg := shot.FromSetup(s)
			r := shot.Evaluate(rec, "c.csv", cfg).Rows[0]
			require.NotEqual(t, shot.Error, r.Verdict, r.Error)
			rf, ok := r.Value(colRf)
			require.True(t, ok)
			rt, _ := r.Value(colRt)
			assert.InEpsilon(t, c.rf, rf, 0.01, "Rf")
			assert.InEpsilon(t, c.rt, rt, 0.005, "Rt")
			nom := impulse.StandardLightning
			if switching {
				nom = impulse.StandardSwitching
			}
			d, err := circuit.DesignFor(shot.TargetOf(nom), c.c1, c.c2, top)
			require.NoError(t, err)
			v, _ := r.Value(colRfDesign)
			assert.InEpsilon(t, d.Rf_ohm, v, 1e-12)
			v, _ = r.Value(colRtDesign)
			assert.InEpsilon(t, d.Rt_ohm, v, 1e-12)
			if strings.Contains(c.name, "slow front") {
				assert.Contains(t, r.Advice, "front identified "+circuit.Ohms(rf/8)+" per stage, "+circuit.Ohms(d.Rf_ohm/8)+" per stage gives T1 1.2 us")
			}
		})
	}
}

// The advice sentence goes with a failed time only; chopped shots, shots whose times are
// not trusted, and series without a circuit get no resistor numbers at all.
func TestResistorsOnlyWhereTheyApply(t *testing.T) {
	s, err := shot.ParseSetup([]byte("[generator]\nstages = 8\nstage_capacitance = \"0.2 uF\"\nload_capacitance = \"1.2 nF\"\ntail_resistor = \"generator_side\"\n"), "s.toml")
	require.NoError(t, err)
	withCircuit := shot.FromSetup(s)
	gen := func(sp synth.Spec) shot.Row {
		sp.Peak_v, sp.Noise, sp.PreTrigger_s, sp.Interval_s, sp.Duration_s, sp.Seed = 300e3, 0.002, 4e-6, 10e-9, 150e-6, 2
		rec, err := synth.Generate(sp)
		require.NoError(t, err)
		return shot.Evaluate(rec, "x.csv", withCircuit).Rows[0]
	}
	good := gen(synth.Spec{Front_s: 1.2e-6, Tail_s: 50e-6})
	require.Equal(t, shot.Pass, good.Verdict)
	_, ok := good.Value(colRf)
	assert.True(t, ok, "a passing shot has the identified resistors")
	assert.Empty(t, good.Advice, "and no advice")

	tail := gen(synth.Spec{Front_s: 1.2e-6, Tail_s: 75e-6})
	require.Equal(t, []string{"time_to_half"}, tail.FailureNames())
	assert.Contains(t, tail.Advice, "gives T2 50 us")

	chopped := gen(synth.Spec{Front_s: 1.2e-6, Tail_s: 50e-6, Chop_s: 4e-6, Collapse_s: 80e-9})
	require.Equal(t, impulse.LightningChopped, chopped.Shape)
	for _, c := range []*shot.Column{colRf, colRt, colRfDesign, colRtDesign} {
		_, ok := chopped.Value(c)
		assert.False(t, ok, "chopped: %s", c.Key)
	}
	assert.Empty(t, chopped.Advice)

	clipped := gen(synth.Spec{Front_s: 2e-6, Tail_s: 50e-6, Range_v: 280e3})
	require.Equal(t, shot.Incomplete, clipped.Verdict)
	_, ok = clipped.Value(colRf)
	assert.False(t, ok, "a clipped shot's times are not trusted: no circuit from them")

	rec, err := synth.Generate(synth.Spec{Front_s: 1.85e-6, Tail_s: 50e-6, Peak_v: 300e3, PreTrigger_s: 4e-6, Interval_s: 10e-9, Duration_s: 150e-6})
	require.NoError(t, err)
	plain := shot.Evaluate(rec, "x.csv", shot.NewConfig()).Rows[0]
	require.Equal(t, shot.Fail, plain.Verdict)
	_, ok = plain.Value(colRf)
	assert.False(t, ok, "no circuit described")
	assert.Empty(t, plain.Advice)
}

// The demo's slow-front shot (invented) shows the identified front resistor and the one
// that fixes it; its design gives 1.2/50 through the circuit's closed form.
func TestDemoSlowFrontAdvice(t *testing.T) {
	s, err := shot.ParseSetup([]byte(synth.DemoSetup), "demo.toml")
	require.NoError(t, err)
	cfg := shot.FromSetup(s)
	require.NotNil(t, cfg.Circuit)
	assert.InEpsilon(t, 25e-9, cfg.Circuit.Erected_f(), 1e-12)
	var slow *synth.DemoShot
	for _, d := range synth.Demo() {
		if d.File == "shot06.csv" {
			slow = &d
		}
	}
	require.NotNil(t, slow)
	rec, err := slow.Record()
	require.NoError(t, err)
	r := shot.Evaluate(rec, slow.File, cfg).Rows[0]
	require.Equal(t, []string{"front_time"}, r.FailureNames())
	rf, ok := r.Value(colRf)
	require.True(t, ok)
	rfd, _ := r.Value(colRfDesign)
	rtd, _ := r.Value(colRtDesign)
	// T1 1.85 us against 1.2: about that much more front resistance than the design
	assert.InDelta(t, 1.85/1.2, rf/rfd, 0.1)
	assert.Contains(t, r.Advice, "front identified "+circuit.Ohms(rf/8)+" per stage, "+circuit.Ohms(rfd/8)+" per stage gives T1 1.2 us")
	tau1, tau2, err := circuit.TimeConstants(rfd, rtd, 25e-9, 1.2e-9, circuit.TailGeneratorSide)
	require.NoError(t, err)
	f, tl := circuit.Target{}.Of(tau1, tau2)
	assert.InEpsilon(t, 1.2e-6, f, 1e-9)
	assert.InEpsilon(t, 50e-6, tl, 1e-9)
	assert.False(t, math.IsNaN(rfd))
}
