package report

import (
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/hvshot/hvshot/waveform/circuit"
)

// Design writes the resistors that give the target shape with the generator's circuit:
// the exact values beside the rules of thumb, per stage when the stage count is known,
// the shape and efficiency each pair gives by the circuit's closed form, and the design
// with the tail resistor on the other side. It returns the exact design's error when no
// circuit of the kind gives the shape.
func Design(w io.Writer, g circuit.Generator, t circuit.Target) error {
	c1 := g.Erected_f()
	exact, err := circuit.DesignFor(t, c1, g.C2_f, g.Tail)
	fmt.Fprintf(w, "resistors for %s us: %s\n", t, g.Words())
	if err != nil {
		return err
	}
	type pair struct {
		rf, rt, tau1, tau2, front, tail, eff float64
		err                                  error
	}
	eval := func(rf, rt float64) pair {
		p := pair{rf: rf, rt: rt}
		if p.tau1, p.tau2, p.err = circuit.TimeConstants(rf, rt, c1, g.C2_f, g.Tail); p.err == nil {
			p.front, p.tail = t.Of(p.tau1, p.tau2)
			p.eff = circuit.Efficiency(p.tau1, p.tau2, rf, g.C2_f)
		}
		return p
	}
	cols := []pair{eval(exact.Rf_ohm, exact.Rt_ohm)}
	rf, rt, rerr := circuit.RuleOfThumb(t, c1, g.C2_f)
	if rerr == nil {
		cols = append(cols, eval(rf, rt))
	}
	front := "T1"
	if t.Switching {
		front = "Tp"
	}
	ohm := func(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) + " ohm" }
	rows := [][]string{{"", "exact (two-capacitor circuit)", "rule of thumb"}}
	add := func(name string, f func(p pair) string) {
		r := []string{name}
		for _, p := range cols {
			r = append(r, f(p))
		}
		rows = append(rows, r)
	}
	add("front resistor Rf", func(p pair) string { return ohm(p.rf) })
	if g.Stages > 0 {
		add("  per stage", func(p pair) string { return ohm(g.PerStage(p.rf)) })
	}
	add("tail resistor Rt", func(p pair) string { return ohm(p.rt) })
	if g.Stages > 0 {
		add("  per stage", func(p pair) string { return ohm(g.PerStage(p.rt)) })
	}
	add("gives "+front, func(p pair) string { return circuit.Micro(p.front) })
	add("gives T2", func(p pair) string { return circuit.Micro(p.tail) })
	add("efficiency", func(p pair) string { return strconv.FormatFloat(p.eff, 'f', 3, 64) })
	add("tau1, tau2", func(p pair) string { return circuit.Micro(p.tau1) + ", " + circuit.Micro(p.tau2) })
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 3, ' ', 0)
	for _, r := range rows {
		if rerr != nil {
			r = r[:2]
		}
		fmt.Fprintln(tw, strings.Join(r, "\t"))
	}
	tw.Flush()
	fmt.Fprintln(w)
	if rerr != nil {
		fmt.Fprintf(w, "no rule of thumb: %v\n", rerr)
	} else {
		fmt.Fprintln(w, "rules of thumb: T1 ~ 3 Rf C1 C2/(C1 + C2), T2 ~ 0.7 (Rf + Rt)(C1 + C2); the shapes beside them are the circuit's own")
	}
	other := circuit.TailLoadSide
	if g.Tail == circuit.TailLoadSide {
		other = circuit.TailGeneratorSide
	}
	if d, err := circuit.DesignFor(t, c1, g.C2_f, other); err != nil {
		fmt.Fprintln(w, err)
	} else {
		fmt.Fprintf(w, "with the %s: Rf %s, Rt %s, efficiency %.3f\n", other.Words(), ohm(d.Rf_ohm), ohm(d.Rt_ohm), d.Efficiency)
	}
	return nil
}
