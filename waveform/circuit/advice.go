package circuit

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Generator is an impulse generator's discharge circuit as a setup describes it.
type Generator struct {
	Stages  int     // 0 when not known: resistances are then totals only
	Stage_f float64 // each stage's capacitance; with Stages, C1 = Stage_f / Stages
	C1_f    float64 // the discharge capacitance as a whole, when Stage_f is not given
	C2_f    float64 // the load: test object, divider and strays
	Tail    Topology
	// Front_ohm and Tail_ohm are the resistors installed in each stage, for comparison;
	// 0 when not stated.
	Front_ohm, Tail_ohm float64
}

// Erected_f is C1: the stages' capacitances in series when they are given, else C1_f.
func (g Generator) Erected_f() float64 {
	if g.Stage_f > 0 && g.Stages > 0 {
		return g.Stage_f / float64(g.Stages)
	}
	return g.C1_f
}

// PerStage divides a total resistance among the stages (the stages' resistors are in
// series when the generator fires); NaN when the stage count is not known.
func (g Generator) PerStage(total_ohm float64) float64 {
	if g.Stages < 1 {
		return math.NaN()
	}
	return total_ohm / float64(g.Stages)
}

// Words describes the circuit: "C1 25 nF (12 stages of 300 nF), C2 400 pF, tail
// resistor on the generator side".
func (g Generator) Words() string {
	c1 := "C1 " + Farads(g.Erected_f())
	if g.Stage_f > 0 && g.Stages > 0 {
		c1 += fmt.Sprintf(" (%d stages of %s)", g.Stages, Farads(g.Stage_f))
	}
	return c1 + ", C2 " + Farads(g.C2_f) + ", " + g.Tail.Words()
}

// Advice is one shot's resistor advice: the circuit its base curve identifies and the
// design for the nominal shape.
type Advice struct {
	Generator Generator
	Target    Target
	// Rf_ohm, Rt_ohm: the identified total resistances, NaN when IdentifyErr says why
	// none fits; Efficiency: what that circuit predicts.
	Rf_ohm, Rt_ohm, Efficiency float64
	IdentifyErr                error
	Design                     Design // NaNs when DesignErr says why there is none
	DesignErr                  error
}

// Advise identifies the circuit behind a base curve with time constants tau1 and tau2
// and designs the resistors for the target with the same capacitances.
func Advise(tau1_s, tau2_s float64, g Generator, t Target) *Advice {
	nan := math.NaN()
	a := &Advice{Generator: g, Target: t, Rf_ohm: nan, Rt_ohm: nan, Efficiency: nan}
	c1 := g.Erected_f()
	if rf, rt, err := Identify(tau1_s, tau2_s, c1, g.C2_f, g.Tail); err == nil {
		a.Rf_ohm, a.Rt_ohm, a.Efficiency = rf, rt, Efficiency(tau1_s, tau2_s, rf, g.C2_f)
	} else {
		a.IdentifyErr = err
	}
	var err error
	if a.Design, err = DesignFor(t, c1, g.C2_f, g.Tail); err != nil {
		a.Design, a.DesignErr = Design{nan, nan, nan, nan, nan}, err
	}
	return a
}

// Sentence says the advice on one line: the identified resistors per stage (or in all),
// the ones that give the nominal, the change, the efficiency they predict, and the
// circuit it assumed.
func (a *Advice) Sentence() string {
	g, t := a.Generator, a.Target
	per := " per stage"
	show := func(total float64) float64 { return g.PerStage(total) }
	if g.Stages < 1 {
		per, show = " in all", func(v float64) float64 { return v }
	}
	head := "resistors for " + t.String() + " (" + g.Words() + "): "
	if a.DesignErr != nil {
		msg := a.DesignErr.Error()
		if a.IdentifyErr == nil {
			msg = fmt.Sprintf("identified front %s%s, tail %s%s; %s", Ohms(show(a.Rf_ohm)), per, Ohms(show(a.Rt_ohm)), per, msg)
		}
		return head + msg
	}
	part := func(name string, id, installed, design float64, param string, value float64) string {
		s := name + " "
		if a.IdentifyErr == nil {
			s += "identified " + Ohms(show(id)) + per
			if installed > 0 && g.Stages > 0 {
				s += " (installed " + Ohms(installed) + ")"
			}
			s += ", "
		}
		s += Ohms(show(design)) + per + " gives " + param + " " + strconv.FormatFloat(value*1e6, 'g', 6, 64) + " us"
		if a.IdentifyErr == nil {
			s += " (" + Signed(show(design)-show(id)) + ")"
		}
		return s
	}
	parts := []string{
		part("front", a.Rf_ohm, g.Front_ohm, a.Design.Rf_ohm, t.frontName(), t.Front_s),
		part("tail", a.Rt_ohm, g.Tail_ohm, a.Design.Rt_ohm, "T2", t.Tail_s),
		"efficiency then " + sig(a.Design.Efficiency, 3),
	}
	if a.IdentifyErr != nil {
		parts = append([]string{"the base curve fits none: " + a.IdentifyErr.Error()}, parts...)
	}
	return head + strings.Join(parts, "; ")
}

// Ohms writes a resistance with at least three significant digits: "52.6 ohm",
// "1029 ohm", "15.3 kohm".
func Ohms(v float64) string {
	if math.Abs(v) >= 1e4 {
		return sig(v/1e3, 3) + " kohm"
	}
	if math.Abs(v) >= 1000 {
		return fmt.Sprintf("%.0f ohm", v)
	}
	return sig(v, 3) + " ohm"
}

// Signed is a change of resistance with its sign: "+3.10 ohm", "-28.7 ohm".
func Signed(v float64) string {
	if v >= 0 {
		return "+" + Ohms(v)
	}
	return "-" + Ohms(-v)
}

// Farads writes a capacitance in pF, nF or uF with up to four significant digits.
func Farads(v float64) string {
	u, k := "pF", 1e12
	switch a := math.Abs(v); {
	case a >= 1e-6:
		u, k = "uF", 1e6
	case a >= 1e-9:
		u, k = "nF", 1e9
	}
	s := sig(v*k, 4)
	if strings.Contains(s, ".") && !strings.ContainsAny(s, "e") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s + " " + u
}
