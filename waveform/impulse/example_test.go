package impulse_test

import (
	"fmt"
	"math"

	"github.com/hvshot/hvshot/waveform/impulse"
)

// Evaluate a clean handbook 1.2/50 impulse and judge it against the nominal shape.
func ExampleEvaluate() {
	dt := 5e-9
	x := make([]float64, 40000)
	for i := range x {
		if t := float64(i)*dt - 2e-6; t > 0 {
			x[i] = 311e3 * (math.Exp(-t/68.2e-6) - math.Exp(-t/0.405e-6))
		}
	}
	r, err := impulse.Evaluate(x, 0, dt, impulse.DefaultSettings())
	if err != nil {
		fmt.Println(err)
		return
	}
	nom, _ := impulse.ParseNominal("1.2/50")
	fmt.Printf("%s: Ut %.1f kV, T1 %.3f us, T2 %.2f us, failures %d\n", r.Shape, r.TestVoltage_v/1e3, r.FrontTime_s*1e6, r.TimeToHalf_s*1e6, len(impulse.Judge(r, nom, impulse.DefaultTolerances())))
	// Output: lightning-full: Ut 299.8 kV, T1 1.202 us, T2 49.99 us, failures 0
}
