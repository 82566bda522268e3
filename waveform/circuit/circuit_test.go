package circuit

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/fit"
)

var (
	lightning = Target{Front_s: 1.2e-6, Tail_s: 50e-6}
	switching = Target{Front_s: 250e-6, Tail_s: 2500e-6, Switching: true}
	// the textbook generator: 12 stages of 0.3 uF, a 0.4 nF load
	textbookC1, textbookC2 = 0.3e-6 / 12, 0.4e-9
)

type simulated struct {
	Tau1_s, Tau2_s, Front_s, Tail_s, Efficiency float64
}

type refs struct {
	Designs []struct {
		Name            string
		C1_f, C2_f      float64
		Topology        string
		Front_s, Tail_s float64
		Switching       bool
		Front_factor    float64
		Tau1_s, Tau2_s  float64
		Rf_ohm, Rt_ohm  float64
		Sim             simulated
	}
	Infeasible []struct {
		C1_f, C2_f      float64
		Topology        string
		Front_s, Tail_s float64
		Max_ratio       float64
	}
	Circuits []struct {
		Name           string
		Rf_ohm, Rt_ohm float64
		C1_f, C2_f     float64
		Topology       string
		Switching      bool
		Sim            simulated
	}
}

// loadRefs reads testdata/reference/circuit_refs.json: the circuit simulated by SciPy's
// solve_ivp and designed by fsolve and numpy.roots (circuit_refs.py).
func loadRefs(t *testing.T) refs {
	b, err := os.ReadFile("../../testdata/reference/circuit_refs.json")
	require.NoError(t, err)
	var r refs
	require.NoError(t, json.Unmarshal(b, &r))
	require.NotEmpty(t, r.Designs)
	require.NotEmpty(t, r.Circuits)
	return r
}

func topology(t *testing.T, s string) Topology {
	top, err := ParseTopology(s)
	require.NoError(t, err)
	return top
}

// The designed resistors, simulated by SciPy's solve_ivp on the two-capacitor circuit,
// give the nominal T1/T2 (Tp/T2) within 0.5 % (the check; the instants by
// brentq on the dense output, T1 = 1.67 (t90 - t30) as IEC 60060-1 writes it), and
// hvshot's design is the script's own within 1e-7.
func TestDesignAgainstSciPy(t *testing.T) {
	for _, d := range loadRefs(t).Designs {
		t.Run(d.Name, func(t *testing.T) {
			assert.InEpsilon(t, d.Front_s, d.Sim.Front_s, 0.005, "SciPy: simulated front")
			assert.InEpsilon(t, d.Tail_s, d.Sim.Tail_s, 0.005, "SciPy: simulated tail")
			got, err := DesignFor(Target{Front_s: d.Front_s, Tail_s: d.Tail_s, Switching: d.Switching, FrontFactor: d.Front_factor},
				d.C1_f, d.C2_f, topology(t, d.Topology))
			require.NoError(t, err)
			assert.InEpsilon(t, d.Rf_ohm, got.Rf_ohm, 1e-7, "Rf")
			assert.InEpsilon(t, d.Rt_ohm, got.Rt_ohm, 1e-7, "Rt")
			assert.InEpsilon(t, d.Tau1_s, got.Tau1_s, 1e-8, "tau1")
			assert.InEpsilon(t, d.Tau2_s, got.Tau2_s, 1e-8, "tau2")
			assert.InEpsilon(t, d.Sim.Efficiency, got.Efficiency, 1e-6, "efficiency against the simulated peak")
		})
	}
}

// Circuits with given resistors: the time constants against numpy.linalg.eigvals of the
// state matrix, the shape and efficiency against solve_ivp, and Identify gives the
// resistors back.
func TestCircuitsAgainstSciPy(t *testing.T) {
	for _, c := range loadRefs(t).Circuits {
		t.Run(c.Name, func(t *testing.T) {
			top := topology(t, c.Topology)
			tau1, tau2, err := TimeConstants(c.Rf_ohm, c.Rt_ohm, c.C1_f, c.C2_f, top)
			require.NoError(t, err)
			assert.InEpsilon(t, c.Sim.Tau1_s, tau1, 1e-9, "tau1 (NumPy eigvals)")
			assert.InEpsilon(t, c.Sim.Tau2_s, tau2, 1e-9, "tau2 (NumPy eigvals)")
			front, tail := Target{Switching: c.Switching}.Of(tau1, tau2)
			assert.InEpsilon(t, c.Sim.Front_s, front, 1e-6, "front (solve_ivp)")
			assert.InEpsilon(t, c.Sim.Tail_s, tail, 1e-6, "tail (solve_ivp)")
			assert.InEpsilon(t, c.Sim.Efficiency, Efficiency(tau1, tau2, c.Rf_ohm, c.C2_f), 1e-6, "efficiency (solve_ivp peak)")
			rf, rt, err := Identify(c.Sim.Tau1_s, c.Sim.Tau2_s, c.C1_f, c.C2_f, top)
			require.NoError(t, err)
			assert.InEpsilon(t, c.Rf_ohm, rf, 1e-8, "Rf identified")
			assert.InEpsilon(t, c.Rt_ohm, rt, 1e-8, "Rt identified")
		})
	}
}

// The textbook example (C. L. Wadhwa, High Voltage Engineering, example 3.2, as
// the issue quotes it; the book not read here): the exact circuit needs Rf = 1028.9 ohm
// and Rt = 2685.5 ohm; the rules of thumb give about 1016 and 1796 ohm, and those give
// T2 near 34 us. The exact figures take T1 = (t90 - t30)/0.6; with the
// standard's 1.67 they are 1026.7 and 2685.7 ohm (SciPy, TestDesignAgainstSciPy).
func TestTextbookExample(t *testing.T) {
	exact := lightning
	exact.FrontFactor = 1 / 0.6
	d, err := DesignFor(exact, textbookC1, textbookC2, TailGeneratorSide)
	require.NoError(t, err)
	assert.InDelta(t, 1028.9, d.Rf_ohm, 0.1, "Rf (issue)")
	assert.InDelta(t, 2685.5, d.Rt_ohm, 0.1, "Rt (issue)")
	d, err = DesignFor(lightning, textbookC1, textbookC2, TailGeneratorSide)
	require.NoError(t, err)
	assert.InDelta(t, 1026.7, d.Rf_ohm, 0.05, "Rf with T1 = 1.67 (t90 - t30) (SciPy 1026.68)")
	assert.InDelta(t, 2685.7, d.Rt_ohm, 0.05, "Rt with T1 = 1.67 (t90 - t30) (SciPy 2685.69)")

	rf, rt, err := RuleOfThumb(lightning, textbookC1, textbookC2)
	require.NoError(t, err)
	assert.InDelta(t, 1016, rf, 0.5, "rule-of-thumb Rf (issue)")
	assert.InDelta(t, 1796, rt, 0.5, "rule-of-thumb Rt (issue)")
	tau1, tau2, err := TimeConstants(rf, rt, textbookC1, textbookC2, TailGeneratorSide)
	require.NoError(t, err)
	_, t2 := lightning.Of(tau1, tau2)
	assert.InDelta(t, 34e-6, t2, 0.5e-6, "the rough values' T2 (issue: about 34 us; SciPy 34.15 us)")
	_, _, err = RuleOfThumb(switching, textbookC1, textbookC2)
	assert.Error(t, err, "the rules are for lightning impulses")
}

// The double exponentials of the standard shapes against the handbook's coefficients:
// E. Kuffel, W. S. Zaengl, J. Kuffel, High Voltage Engineering: Fundamentals, 2nd ed.,
// the table of impulse shapes and time constants (from memory), three significant
// digits: tolerances of half a unit in the last digit and a little more.
func TestHandbookCoefficients(t *testing.T) {
	for _, c := range []struct {
		target     Target
		tau1, tau2 float64
	}{
		{Target{Front_s: 1.2e-6, Tail_s: 5e-6}, 3.48e-6, 0.8e-6},
		{lightning, 68.2e-6, 0.405e-6},
		{Target{Front_s: 1.2e-6, Tail_s: 200e-6}, 284e-6, 0.381e-6},
		{switching, 3155e-6, 62.5e-6},
	} {
		t.Run(c.target.String(), func(t *testing.T) {
			tau1, tau2, err := c.target.TimeConstants()
			require.NoError(t, err)
			assert.InEpsilon(t, c.tau1, tau1, 0.005, "tau1")
			assert.InEpsilon(t, c.tau2, tau2, 0.006, "tau2")
		})
	}
}

// The bracketed solve agrees with package fit's Newton solve (another method on the
// same definitions) and reproduces its target.
func TestTimeConstantsAgreeWithFit(t *testing.T) {
	for _, c := range []Target{lightning, switching, {Front_s: 0.84e-6, Tail_s: 60e-6}, {Front_s: 1.56e-6, Tail_s: 40e-6},
		{Front_s: 100e-6, Tail_s: 3000e-6, Switching: true}} {
		t.Run(c.String(), func(t *testing.T) {
			tau1, tau2, err := c.TimeConstants()
			require.NoError(t, err)
			var p fit.DoubleExp
			if c.Switching {
				p, err = fit.ForSwitching(c.Front_s, c.Tail_s)
			} else {
				p, err = fit.ForLightning(c.Front_s, c.Tail_s)
			}
			require.NoError(t, err)
			assert.InEpsilon(t, p.Tau1_s, tau1, 1e-9)
			assert.InEpsilon(t, p.Tau2_s, tau2, 1e-9)
			f, tl := c.Of(tau1, tau2)
			assert.InEpsilon(t, c.Front_s, f, 1e-12)
			assert.InEpsilon(t, c.Tail_s, tl, 1e-12)
		})
	}
}

// The solve's premise: the tail over the front rises with tau1/tau2 (checked on a grid
// across the whole bracket).
func TestShapeRatioRises(t *testing.T) {
	for _, tg := range []Target{lightning, switching} {
		prev := 0.0
		for lr := math.Log(ratioMin); lr <= math.Log(ratioMax); lr += 0.05 {
			f, tl := tg.Of(math.Exp(lr), 1)
			require.Greater(t, tl/f, prev, "%s at tau1/tau2 = %g", tg, math.Exp(lr))
			prev = tl / f
		}
	}
	for _, bad := range []Target{{Front_s: 1e-6, Tail_s: 1.5e-6}, {Front_s: 0, Tail_s: 50e-6}, {Front_s: 2e-6, Tail_s: 1e-6}} {
		_, _, err := bad.TimeConstants()
		assert.ErrorIs(t, err, ErrNoCircuit, "%s", bad)
	}
}

// Design, the circuit's closed form and Identify round trip over capacitance ratios,
// shapes and both topologies; the design's circuit has the target's shape.
func TestRoundTrip(t *testing.T) {
	for _, top := range []Topology{TailGeneratorSide, TailLoadSide} {
		for _, tg := range []Target{lightning, switching, {Front_s: 1.2e-6, Tail_s: 200e-6}} {
			for _, c1 := range []float64{2e-9, 25e-9, 1e-6} {
				// C2/C1 from 0.001 (the generator side's usual) to 3; the load side needs
				// C1/C2 below MaxRatio, and has no circuit beyond
				for _, k := range []float64{0.001, 0.03, 0.2, 1, 3} {
					c2 := c1 * k
					d, err := DesignFor(tg, c1, c2, top)
					if tau1, tau2, _ := tg.TimeConstants(); top == TailLoadSide && 1/k > MaxRatio(tau1, tau2) {
						assert.ErrorIs(t, err, ErrNoCircuit, "%s %s C1 %g C2 %g", top, tg, c1, c2)
						continue
					}
					require.NoError(t, err, "%s %s C1 %g C2 %g", top, tg, c1, c2)
					tau1, tau2, err := TimeConstants(d.Rf_ohm, d.Rt_ohm, c1, c2, top)
					require.NoError(t, err)
					f, tl := tg.Of(tau1, tau2)
					assert.InEpsilon(t, tg.Front_s, f, 1e-9)
					assert.InEpsilon(t, tg.Tail_s, tl, 1e-9)
					rf, rt, err := Identify(tau1, tau2, c1, c2, top)
					require.NoError(t, err)
					assert.InEpsilon(t, d.Rf_ohm, rf, 1e-9)
					assert.InEpsilon(t, d.Rt_ohm, rt, 1e-9)
					// at the peak C1's voltage is at least C2's, and charge only leaves C1
					// and C2, so the peak is below C1/(C1 + C2) of the charging voltage
					assert.Less(t, d.Efficiency, c1/(c1+c2))
					assert.Greater(t, d.Efficiency, 0.0)
				}
			}
		}
	}
}

// The load-side form has no solution above C1/C2 = (tau1 - tau2)^2 / (4 tau1 tau2), the
// generator side none above C2/C1 of the same value (the script's numpy.roots finds
// complex roots there); just inside the limit both have one.
func TestNoCircuit(t *testing.T) {
	r := loadRefs(t)
	require.NotEmpty(t, r.Infeasible)
	for _, c := range r.Infeasible {
		top := topology(t, c.Topology)
		tg := Target{Front_s: c.Front_s, Tail_s: c.Tail_s}
		_, err := DesignFor(tg, c.C1_f, c.C2_f, top)
		require.ErrorIs(t, err, ErrNoCircuit, c.Topology)
		assert.Contains(t, err.Error(), sig(c.Max_ratio, 3))
		tau1, tau2, err := tg.TimeConstants()
		require.NoError(t, err)
		assert.InEpsilon(t, c.Max_ratio, MaxRatio(tau1, tau2), 1e-8)
		for _, f := range []float64{0.999, 1.001} {
			c1, c2 := 25e-9, 25e-9*c.Max_ratio*f
			if top == TailLoadSide {
				c1, c2 = c2, 25e-9
			}
			_, _, err := Identify(tau1, tau2, c1, c2, top)
			if f < 1 {
				assert.NoError(t, err, "just inside the limit")
			} else {
				assert.ErrorIs(t, err, ErrNoCircuit, "just beyond the limit")
			}
		}
	}
	_, err := DesignFor(lightning, textbookC1, textbookC2, TailLoadSide)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "C1/C2 at most 41.7, and it is 62.5")
}

func TestBadInput(t *testing.T) {
	for _, c := range []struct {
		name               string
		tau1, tau2, c1, c2 float64
		top                Topology
	}{
		{"no topology", 68e-6, 0.4e-6, 25e-9, 1e-9, 0},
		{"tau1 below tau2", 0.4e-6, 68e-6, 25e-9, 1e-9, TailGeneratorSide},
		{"zero C2", 68e-6, 0.4e-6, 25e-9, 0, TailGeneratorSide},
		{"NaN tau", math.NaN(), 0.4e-6, 25e-9, 1e-9, TailGeneratorSide},
		{"infinite C1", 68e-6, 0.4e-6, math.Inf(1), 1e-9, TailLoadSide},
	} {
		_, _, err := Identify(c.tau1, c.tau2, c.c1, c.c2, c.top)
		assert.Error(t, err, c.name)
		assert.False(t, errors.Is(err, ErrNoCircuit), "%s: bad input, not a missing circuit", c.name)
	}
	_, _, err := TimeConstants(-1, 100, 25e-9, 1e-9, TailGeneratorSide)
	assert.Error(t, err)
}

func TestParseTopology(t *testing.T) {
	for in, want := range map[string]Topology{"generator_side": TailGeneratorSide, "Generator-Side": TailGeneratorSide, "generator": TailGeneratorSide,
		"load_side": TailLoadSide, " load ": TailLoadSide} {
		got, err := ParseTopology(in)
		require.NoError(t, err, in)
		assert.Equal(t, want, got, in)
	}
	for _, bad := range []string{"", "front", "both"} {
		_, err := ParseTopology(bad)
		assert.ErrorContains(t, err, "generator_side or load_side", bad)
	}
	assert.Equal(t, "tail resistor on the load side", TailLoadSide.Words())
}

// The advice for a slow front (the demo's invented 8-stage generator): the identified
// front resistor per stage, the design's, the change, and nothing invented when the
// inversion fails.
func TestAdvice(t *testing.T) {
	g := Generator{Stages: 8, Stage_f: 0.2e-6, C2_f: 1.2e-9, Tail: TailGeneratorSide, Front_ohm: 68}
	assert.InEpsilon(t, 25e-9, g.Erected_f(), 1e-12)
	slow := Target{Front_s: 1.85e-6, Tail_s: 52e-6}
	tau1, tau2, err := slow.TimeConstants()
	require.NoError(t, err)
	a := Advise(tau1, tau2, g, lightning)
	require.NoError(t, a.IdentifyErr)
	require.NoError(t, a.DesignErr)
	rf, _, err := Identify(tau1, tau2, 25e-9, 1.2e-9, TailGeneratorSide)
	require.NoError(t, err)
	assert.InEpsilon(t, rf, a.Rf_ohm, 1e-12)
	assert.Greater(t, a.Rf_ohm, a.Design.Rf_ohm, "a slow front: less front resistance")
	s := a.Sentence()
	for _, want := range []string{"resistors for 1.2/50", "C1 25 nF (8 stages of 200 nF), C2 1.2 nF, tail resistor on the generator side",
		"front identified " + Ohms(a.Rf_ohm/8) + " per stage (installed 68.0 ohm), " + Ohms(a.Design.Rf_ohm/8) + " per stage gives T1 1.2 us",
		"gives T2 50 us", "efficiency then 0.925"} {
		assert.Contains(t, s, want)
	}
	g.Tail, g.Stages, g.Stage_f, g.C1_f, g.C2_f = TailLoadSide, 0, 0, 25e-9, 0.4e-9
	a = Advise(tau1, tau2, g, lightning)
	assert.ErrorIs(t, a.IdentifyErr, ErrNoCircuit)
	assert.True(t, math.IsNaN(a.Rf_ohm) && math.IsNaN(a.Design.Rf_ohm))
	assert.True(t, strings.Contains(a.Sentence(), "C1/C2 at most"), a.Sentence())
	assert.NotContains(t, a.Sentence(), "NaN")
}

func TestFormats(t *testing.T) {
	for _, c := range []struct{ got, want string }{
		{Ohms(52.634), "52.6 ohm"}, {Ohms(1028.885), "1029 ohm"}, {Ohms(57247.8), "57.2 kohm"}, {Ohms(3.1), "3.10 ohm"},
		{Signed(-28.71), "-28.7 ohm"}, {Signed(3.1), "+3.10 ohm"},
		{Farads(25e-9), "25 nF"}, {Farads(0.4e-9), "400 pF"}, {Farads(0.3e-6), "300 nF"}, {Farads(1.5e-6), "1.5 uF"}, {Farads(1.234e-9), "1.234 nF"},
		{Micro(68.223e-6), "68.22 us"},
	} {
		assert.Equal(t, c.want, c.got)
	}
}

// The advice runs once per divider row: the shape solve and two inversions.
func BenchmarkAdvise(b *testing.B) {
	g := Generator{Stages: 8, Stage_f: 0.2e-6, C2_f: 1.2e-9, Tail: TailGeneratorSide}
	for i := 0; i < b.N; i++ {
		Advise(70e-6, 0.6e-6, g, lightning)
	}
}
