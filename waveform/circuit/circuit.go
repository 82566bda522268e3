package circuit

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/fit"
)

// Topology is where the tail resistor Rt sits in the two-capacitor circuit, in which the
// generator capacitance C1, charged to the sum of the stages' charging voltages, feeds
// the load capacitance C2 through the front resistor Rf.
type Topology int

const (
	// TailGeneratorSide: Rt directly across C1, ahead of Rf.
	TailGeneratorSide Topology = iota + 1
	// TailLoadSide: Rt across C2, behind Rf.
	TailLoadSide
)

func (t Topology) String() string {
	switch t {
	case TailGeneratorSide:
		return "generator_side"
	case TailLoadSide:
		return "load_side"
	}
	return "unknown"
}

// Words is the topology in words: "tail resistor on the generator side".
func (t Topology) Words() string {
	return "tail resistor on the " + strings.ReplaceAll(t.String(), "_", " ")
}

// ParseTopology reads generator_side or load_side (a hyphen for the underscore, or the
// first word alone, will do).
func ParseTopology(s string) (Topology, error) {
	switch strings.ReplaceAll(strings.ToLower(strings.TrimSpace(s)), "-", "_") {
	case "generator_side", "generator":
		return TailGeneratorSide, nil
	case "load_side", "load":
		return TailLoadSide, nil
	}
	return 0, fmt.Errorf("generator_side or load_side (the side of the front resistor the tail resistor is on), not %q", s)
}

// frontC is the capacitance Rf multiplies in tau1 + tau2 = Rt (C1 + C2) + Rf frontC, and
// other the remaining one: tau1 + tau2 = S and tau1 tau2 = P make x = Rf frontC and
// y = Rt (C1 + C2) the roots of z^2 - S z + P (C1 + C2)/other.
func (t Topology) frontC(c1, c2 float64) (frontC, other float64, err error) {
	switch t {
	case TailGeneratorSide:
		return c2, c1, nil
	case TailLoadSide:
		return c1, c2, nil
	}
	return 0, 0, fmt.Errorf("circuit: topology not given (generator_side or load_side)")
}

// ErrNoCircuit is wrapped by the errors of a shape or time constants that no circuit of
// the kind asked for can give.
var ErrNoCircuit = errors.New("no two-capacitor circuit")

func checkC(c1_f, c2_f float64) error {
	if !(c1_f > 0) || !(c2_f > 0) || math.IsInf(c1_f, 0) || math.IsInf(c2_f, 0) {
		return fmt.Errorf("circuit: C1 and C2 must be positive and finite (C1 %g F, C2 %g F)", c1_f, c2_f)
	}
	return nil
}

// TimeConstants returns the time constants of the circuit's output, tau1 (tail) > tau2
// (front): the roots of z^2 - S z + P with P = Rf Rt C1 C2 and S = Rt (C1 + C2) + Rf C2
// (tail resistor on the generator side) or Rt (C1 + C2) + Rf C1 (load side). The output
// is V0 K (exp(-t/tau1) - exp(-t/tau2)) with K = tau1 tau2 / (Rf C2 (tau1 - tau2)) in
// both, V0 the voltage C1 was charged to.
func TimeConstants(rf_ohm, rt_ohm, c1_f, c2_f float64, top Topology) (tau1_s, tau2_s float64, err error) {
	if err := checkC(c1_f, c2_f); err != nil {
		return 0, 0, err
	}
	if !(rf_ohm > 0) || !(rt_ohm > 0) || math.IsInf(rf_ohm, 0) || math.IsInf(rt_ohm, 0) {
		return 0, 0, fmt.Errorf("circuit: Rf and Rt must be positive and finite (Rf %g ohm, Rt %g ohm)", rf_ohm, rt_ohm)
	}
	fc, _, err := top.frontC(c1_f, c2_f)
	if err != nil {
		return 0, 0, err
	}
	s := rt_ohm*(c1_f+c2_f) + rf_ohm*fc
	p := rf_ohm * rt_ohm * c1_f * c2_f
	// S^2 - 4P >= 0 for either topology (an RC ladder's poles are real); the max guards rounding
	tau1_s = (s + math.Sqrt(math.Max(s*s-4*p, 0))) / 2
	return tau1_s, p / tau1_s, nil // the small root as P/tau1: no cancellation
}

// Gain is K of TimeConstants: the output's amplitude factor per volt on C1.
func Gain(tau1_s, tau2_s, rf_ohm, c2_f float64) float64 {
	return tau1_s * tau2_s / (rf_ohm * c2_f * (tau1_s - tau2_s))
}

// Efficiency is the output's peak over the voltage C1 was charged to (the sum of the
// stages' charging voltages): Gain times the double exponential's peak factor.
func Efficiency(tau1_s, tau2_s, rf_ohm, c2_f float64) float64 {
	return Gain(tau1_s, tau2_s, rf_ohm, c2_f) * fit.DoubleExp{U: 1, Tau1_s: tau1_s, Tau2_s: tau2_s}.PeakFactor()
}

// MaxRatio is the largest C2/C1 (tail resistor on the generator side) or C1/C2 (load
// side) for which a circuit has the time constants tau1 and tau2:
// (tau1 - tau2)^2 / (4 tau1 tau2). Beyond it the quadratic Identify solves has no real
// root.
func MaxRatio(tau1_s, tau2_s float64) float64 {
	d := tau1_s - tau2_s
	return d * d / (4 * tau1_s * tau2_s)
}

// Identify returns the total front and tail resistances of the two-capacitor circuit
// with capacitances C1 and C2 whose output has the time constants tau1 (tail) and tau2
// (front): the exact inversion of TimeConstants. Of the quadratic's two roots it takes
// the one with the smaller Rf, the higher efficiency; the other is a circuit whose tail
// resistor all but shorts C1 and whose output is a small fraction of the first's. When
// the ratio of the capacitances exceeds MaxRatio no circuit of the topology fits: the
// error wraps ErrNoCircuit and says which ratio it needs.
func Identify(tau1_s, tau2_s, c1_f, c2_f float64, top Topology) (rf_ohm, rt_ohm float64, err error) {
	if err := checkC(c1_f, c2_f); err != nil {
		return 0, 0, err
	}
	if !(tau2_s > 0) || !(tau1_s > tau2_s) || math.IsInf(tau1_s, 0) {
		return 0, 0, fmt.Errorf("circuit: the time constants must be positive with tau1 > tau2 (tau1 %g s, tau2 %g s)", tau1_s, tau2_s)
	}
	fc, other, err := top.frontC(c1_f, c2_f)
	if err != nil {
		return 0, 0, err
	}
	s, xy := tau1_s+tau2_s, tau1_s*tau2_s*(c1_f+c2_f)/other
	d := s*s - 4*xy
	if d < 0 {
		what, ratio, fix := "C2/C1", c2_f/c1_f, "the load is too large for this generator: more generator capacitance or less load"
		if top == TailLoadSide {
			what, ratio, fix = "C1/C2", c1_f/c2_f, "put the tail resistor on the generator side, or add load capacitance"
		}
		return 0, 0, fmt.Errorf("%w with the %s has tau1 %s and tau2 %s: that needs %s at most %s, and it is %s (%s)",
			ErrNoCircuit, top.Words(), Micro(tau1_s), Micro(tau2_s), what, sig(MaxRatio(tau1_s, tau2_s), 3), sig(ratio, 3), fix)
	}
	y := (s + math.Sqrt(d)) / 2
	return xy / y / fc, y / (c1_f + c2_f), nil
}

// Target is the shape resistors are designed for: a lightning impulse's front time T1
// and time to half-value T2 as IEC 60060-1 defines them (T1 = 1.67 (t90 - t30), T2 from
// the virtual origin O1 = t30 - 0.3 T1), or a switching impulse's time to peak and time
// to half-value, both from the true origin.
type Target struct {
	Front_s, Tail_s float64
	Switching       bool
	// FrontFactor is the 1.67 of T1 = 1.67 (t90 - t30); 0 means fit.FrontTimeFactor,
	// the standard's 1.67. Some texts take 1/0.6 = 1.6667, which moves a 1.2/50 design's
	// front resistor by 0.2 %.
	FrontFactor float64
}

func (t Target) String() string {
	return strconv.FormatFloat(t.Front_s*1e6, 'g', 6, 64) + "/" + strconv.FormatFloat(t.Tail_s*1e6, 'g', 6, 64)
}

// frontName is the front's parameter on screens.
func (t Target) frontName() string {
	if t.Switching {
		return "Tp"
	}
	return "T1"
}

// Of returns the front and tail times, as the target defines them, of the double
// exponential with time constants tau1 and tau2.
func (t Target) Of(tau1_s, tau2_s float64) (front_s, tail_s float64) {
	p := fit.DoubleExp{U: 1, Tau1_s: tau1_s, Tau2_s: tau2_s}
	if t.Switching {
		return p.PeakDelay_s(), p.LevelDelay_s(0.5, false)
	}
	k := t.FrontFactor
	if k == 0 {
		k = fit.FrontTimeFactor
	}
	a30, a90 := p.LevelDelay_s(0.3, true), p.LevelDelay_s(0.9, true)
	t1 := k * (a90 - a30)
	return t1, p.LevelDelay_s(0.5, false) - (a30 - 0.3*t1)
}

// Bounds of the time-constant ratio tau1/tau2 the shape solve searches: from a nearly
// critically damped curve to a step with a slow decay (ours; the standard shapes lie
// near 170 and 50).
const ratioMin, ratioMax = 1.001, 1e7

// TimeConstants returns tau1 and tau2 of the double exponential with the target's front
// and tail times. Both times scale with the time constants, so the tail over the front
// depends on tau1/tau2 alone and rises with it: a bracketed 1-D solve (bisection on
// ln(tau1/tau2), which cannot diverge) finds the ratio, and the front fixes the scale.
func (t Target) TimeConstants() (tau1_s, tau2_s float64, err error) {
	want := t.Tail_s / t.Front_s
	if !(t.Front_s > 0) || !(want > 1) || math.IsInf(want, 0) {
		return 0, 0, fmt.Errorf("%w for front %s and tail %s: both must be positive, the tail the longer", ErrNoCircuit, Micro(t.Front_s), Micro(t.Tail_s))
	}
	ratio := func(lr float64) float64 {
		f, tl := t.Of(math.Exp(lr), 1)
		return tl / f
	}
	lo, hi := math.Log(ratioMin), math.Log(ratioMax)
	if rlo, rhi := ratio(lo), ratio(hi); !(rlo < want && want < rhi) {
		return 0, 0, fmt.Errorf("%w gives %s %s and T2 %s: no double exponential does (its T2/%s runs from %s to %s)",
			ErrNoCircuit, t.frontName(), Micro(t.Front_s), Micro(t.Tail_s), t.frontName(), sig(rlo, 3), sig(rhi, 3))
	}
	for i := 0; i < 200 && hi-lo > 1e-15*math.Abs(hi); i++ {
		mid := (lo + hi) / 2
		if ratio(mid) < want {
			lo = mid
		} else {
			hi = mid
		}
	}
	r := math.Exp((lo + hi) / 2)
	f, _ := t.Of(r, 1)
	tau2_s = t.Front_s / f
	return r * tau2_s, tau2_s, nil
}

// Design is a circuit's resistors (totals) for a shape, with its time constants and
// the efficiency it predicts.
type Design struct {
	Rf_ohm, Rt_ohm float64
	Tau1_s, Tau2_s float64
	Efficiency     float64
}

// DesignFor returns the exact resistors that give the target shape with capacitances
// C1 and C2: the target's time constants inverted by Identify.
func DesignFor(t Target, c1_f, c2_f float64, top Topology) (Design, error) {
	tau1, tau2, err := t.TimeConstants()
	if err != nil {
		return Design{}, err
	}
	rf, rt, err := Identify(tau1, tau2, c1_f, c2_f, top)
	if err != nil {
		return Design{}, err
	}
	return Design{Rf_ohm: rf, Rt_ohm: rt, Tau1_s: tau1, Tau2_s: tau2, Efficiency: Efficiency(tau1, tau2, rf, c2_f)}, nil
}

// RuleOfThumb returns the resistors of the usual approximations for a lightning
// impulse, T1 ~ 3 Rf Ce with Ce = C1 C2 / (C1 + C2) and T2 ~ 0.7 (Rf + Rt)(C1 + C2)
// (as the issue quotes C. L. Wadhwa, High Voltage Engineering, example 3.2; not read
// here). They ignore the topology; DesignFor is exact.
func RuleOfThumb(t Target, c1_f, c2_f float64) (rf_ohm, rt_ohm float64, err error) {
	if err := checkC(c1_f, c2_f); err != nil {
		return 0, 0, err
	}
	if t.Switching {
		return 0, 0, fmt.Errorf("the rules of thumb are for lightning impulses")
	}
	ce := c1_f * c2_f / (c1_f + c2_f)
	rf_ohm = t.Front_s / (3 * ce)
	rt_ohm = t.Tail_s/(0.7*(c1_f+c2_f)) - rf_ohm
	if !(rt_ohm > 0) {
		return 0, 0, fmt.Errorf("the rules of thumb give no positive tail resistor for %s", t)
	}
	return rf_ohm, rt_ohm, nil
}

// Micro writes a time in microseconds with four significant digits: "68.20 us".
func Micro(v_s float64) string { return sig(v_s*1e6, 4) + " us" }

// sig writes v with n significant digits and no exponent for everyday magnitudes.
func sig(v float64, n int) string {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', n, 64)
	}
	e := int(math.Floor(math.Log10(math.Abs(v))))
	if e < -4 || e >= 9 {
		return strconv.FormatFloat(v, 'g', n, 64)
	}
	return strconv.FormatFloat(v, 'f', max(n-1-e, 0), 64)
}
