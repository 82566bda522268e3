package outcome_test

import (
	"fmt"

	"github.com/hvshot/hvshot/waveform/outcome"
)

// A withstand test by procedure B: 15 impulses at the test voltage, one external
// flashover (invented figures).
func ExampleWithstand() {
	var apps []outcome.Application
	for i := range 15 {
		apps = append(apps, outcome.Application{ID: fmt.Sprintf("shot%02d", i+1), Level_v: 325e3, Discharge: i == 6})
	}
	r := outcome.Withstand(outcome.ProcedureB, "positive", apps)
	fmt.Println(r.Verdict+":", r.Reason)
	// Output: passed: 1 disruptive discharge in 15 applications (shot07); procedure B allows 2
}

// The multiple-level method on five levels of ten impulses (the counts of the
// simulated series seed 1001 in testdata/reference/outcome_refs.json, whose statsmodels
// probit fit gives U50 98678 V and sigma 2717 V).
func ExampleMultipleLevels() {
	counts := map[float64]int{94e3: 1, 97e3: 2, 100e3: 6, 103e3: 10, 106e3: 10}
	var apps []outcome.Application
	for _, l := range []float64{94e3, 97e3, 100e3, 103e3, 106e3} {
		for i := range 10 {
			apps = append(apps, outcome.Application{Level_v: l, Discharge: i < counts[l]})
		}
	}
	r := outcome.MultipleLevels("positive", apps, 0, false)
	fmt.Printf("%s: U50 %.1f kV, sigma %.2f kV, z %.1f %%, U10 %.1f kV\n", r.Verdict, r.U50_v/1e3, r.Sigma_v/1e3, r.Z_pct, r.U10_v/1e3)
	// Output: determined: U50 98.7 kV, sigma 2.72 kV, z 2.8 %, U10 95.1 kV
}
