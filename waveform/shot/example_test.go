package shot_test

import (
	"fmt"

	"github.com/hvshot/hvshot/waveform/shot"
	"github.com/hvshot/hvshot/waveform/synth"
)

// Evaluate a capture under a setup file from a lab's own program: no files are
// written; the rows carry the parameters, the curves what a plot would draw.
func ExampleEvaluate() {
	setup, err := shot.ParseSetup([]byte(`
series = "an invented example"
[nominal]
shape = "1.2/50"
test_voltage = "300 kV"
[[channel]]
match = "divider"
role = "divider"
ratio = 1000
`), "example.toml")
	if err != nil {
		fmt.Println(err)
		return
	}
	// An invented shot: a 1.2/50 impulse of 300 kV seen behind a 1000:1 divider.
	rec, _ := synth.Generate(synth.Spec{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 300e3, PreTrigger_s: 4e-6, Interval_s: 10e-9, Duration_s: 120e-6})
	synth.Scale(&rec.Channels[0], 1.0/1000)

	s := shot.Evaluate(rec, "bay2/shot01.csv", shot.FromSetup(setup))
	r := s.Rows[0]
	ut, _ := r.Value(shot.ColTestVoltage)
	t1, _ := r.Value(shot.ColFrontTime)
	t2, _ := r.Value(shot.ColTimeToHalf)
	fmt.Printf("%s %s: %s, Ut %.1f kV, T1 %.3f us, T2 %.2f us, %s\n", r.File, r.Channel, r.Shape, ut/1e3, t1*1e6, t2*1e6, r.Verdict)
	fmt.Println("curves for a plot:", len(s.Curves[0].Impulse.TestVoltage), "samples")

	series := shot.NewSeries(setup.Series)
	series.Add(s)
	sum := series.Summary()
	fmt.Printf("%d file, %d pass\n", sum.Files, sum.Pass)
	// Output:
	// bay2/shot01.csv divider: lightning-full, Ut 300.0 kV, T1 1.200 us, T2 50.00 us, pass
	// curves for a plot: 12001 samples
	// 1 file, 1 pass
}
