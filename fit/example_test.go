package fit_test

import (
	"fmt"

	"github.com/hvshot/hvshot/fit"
)

// Fit a base curve to a handbook 1.2/50 double exponential (tau1 68.2 us, tau2 0.405 us).
func ExampleFit() {
	truth := fit.DoubleExp{U: 300e3, Td_s: 1e-6, Tau1_s: 68.2e-6, Tau2_s: 0.405e-6}
	dt := 10e-9
	y := make([]float64, 10000)
	truth.Eval(0, dt, y)
	start := fit.StartValues(1.2e-6, 1.8e-6, 52e-6, 289e3) // rough 30/90/50 % instants
	res, err := fit.Fit(y, 0, dt, 100, 6000, start, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%s: tau1 %.1f us, tau2 %.3f us, peak %.1f kV\n", res.Status, res.Params.Tau1_s*1e6, res.Params.Tau2_s*1e6, res.Params.Peak()/1e3)
	// Output: converged: tau1 68.2 us, tau2 0.405 us, peak 289.2 kV
}
