package circuit_test

import (
	"fmt"

	"github.com/hvshot/hvshot/waveform/circuit"
)

// The resistors for 1.2/50 from a generator of 12 stages of 0.3 uF into a 0.4 nF load,
// the tail resistor on the generator side (the issue's textbook example), and what the
// circuit identified from a slower base curve would need to change.
func ExampleDesignFor() {
	c1, c2 := 0.3e-6/12, 0.4e-9
	d, err := circuit.DesignFor(circuit.Target{Front_s: 1.2e-6, Tail_s: 50e-6}, c1, c2, circuit.TailGeneratorSide)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("Rf %.1f ohm, Rt %.1f ohm, efficiency %.3f\n", d.Rf_ohm, d.Rt_ohm, d.Efficiency)

	g := circuit.Generator{Stages: 12, Stage_f: 0.3e-6, C2_f: c2, Tail: circuit.TailGeneratorSide}
	a := circuit.Advise(70e-6, 0.6e-6, g, circuit.Target{Front_s: 1.2e-6, Tail_s: 50e-6})
	fmt.Println(a.Sentence())
	// Output:
	// Rf 1026.7 ohm, Rt 2685.7 ohm, efficiency 0.955
	// resistors for 1.2/50 (C1 25 nF (12 stages of 300 nF), C2 400 pF, tail resistor on the generator side): front identified 127 ohm per stage, 85.6 ohm per stage gives T1 1.2 us (-41.5 ohm); tail identified 230 ohm per stage, 224 ohm per stage gives T2 50 us (-5.82 ohm); efficiency then 0.955
}
