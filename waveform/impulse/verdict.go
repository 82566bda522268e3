package impulse

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// Nominal is the shape and value a test series aims for.
type Nominal struct {
	Front_s float64 // T1 for lightning, Tp for switching; 0: not named (see For)
	Tail_s  float64 // T2
	Peak_v  float64 // nominal test voltage magnitude; 0 when not given
	Chopped bool    // chopped impulses are intended
}

// The standard shapes of IEC 60060-1:2010: the lightning impulse 1.2/50 and the
// switching impulse 250/2500.
var (
	StandardLightning = Nominal{Front_s: 1.2e-6, Tail_s: 50e-6}
	StandardSwitching = Nominal{Front_s: 250e-6, Tail_s: 2500e-6}
)

// For returns the nominal that a result of the shape found is judged against. A
// nominal that names its shape is returned unchanged. One that does not (Front_s 0)
// becomes the standard shape of the family found, keeping the test voltage and the chop
// intent: full impulses unless Chopped says chops are intended, so that a flashover is
// never passed without anyone having said chops were wanted.
func (n Nominal) For(found Shape) Nominal {
	if n.Front_s > 0 {
		return n
	}
	m := StandardLightning
	if found == Switching {
		m = StandardSwitching
	}
	m.Peak_v, m.Chopped = n.Peak_v, n.Chopped
	return m
}

// Switching reports whether the nominal is a switching shape: a front beyond the
// lightning range.
func (n Nominal) Switching() bool { return n.Front_s > 20e-6 }

// Class is the shape family the nominal asks for.
func (n Nominal) Class() Shape {
	switch {
	case n.Switching():
		return Switching
	case n.Chopped:
		return LightningChopped
	}
	return LightningFull
}

// ParseNominal reads "1.2/50" or "250/2500": front and tail in microseconds.
func ParseNominal(s string) (Nominal, error) {
	parts := strings.Split(strings.TrimSpace(s), "/")
	if len(parts) != 2 {
		return Nominal{}, fmt.Errorf("nominal shape %q: want front/tail in microseconds, e.g. 1.2/50 or 250/2500", s)
	}
	// the unit the shape is always in may be written too: 1.2/50us, 1.2 µs/50 µs
	us := func(p string) string {
		return strings.TrimSpace(strings.TrimSuffix(strings.TrimSuffix(strings.TrimSpace(p), "us"), "µs"))
	}
	f, err1 := strconv.ParseFloat(us(parts[0]), 64)
	t, err2 := strconv.ParseFloat(us(parts[1]), 64)
	if err1 != nil || err2 != nil {
		return Nominal{}, fmt.Errorf("nominal shape %q: want front/tail as numbers of microseconds, e.g. 1.2/50 or 250/2500", s)
	}
	if err1 != nil || err2 != nil || !(f > 0) || !(t > f) || math.IsInf(t, 0) {
		return Nominal{}, fmt.Errorf("nominal shape %q: front and tail must be positive numbers of microseconds, tail longer than front", s)
	}
	return Nominal{Front_s: f * 1e-6, Tail_s: t * 1e-6}, nil
}

func (n Nominal) String() string {
	return strconv.FormatFloat(n.Front_s*1e6, 'g', 6, 64) + "/" + strconv.FormatFloat(n.Tail_s*1e6, 'g', 6, 64)
}

// Tolerances are the permitted deviations, in percent of the nominal value.
// DefaultTolerances holds IEC 60060-1:2010's.
type Tolerances struct {
	TestVoltage_pct   float64 // +-3
	Front_pct         float64 // T1 +-30
	Tail_pct          float64 // T2 +-20
	OvershootMax_pct  float64 // beta' <= 10
	TimeToPeak_pct    float64 // switching Tp +-20
	SwitchingTail_pct float64 // switching T2 +-60
}

// DefaultTolerances returns the tolerances of IEC 60060-1:2010 for the standard shapes.
func DefaultTolerances() Tolerances {
	return Tolerances{TestVoltage_pct: 3, Front_pct: 30, Tail_pct: 20, OvershootMax_pct: 10, TimeToPeak_pct: 20, SwitchingTail_pct: 60}
}

// Failure names a parameter out of tolerance, its value and the allowed range, in SI.
type Failure struct {
	Parameter string  `json:"parameter"`
	Value     float64 `json:"value"`
	Min       float64 `json:"min"`
	Max       float64 `json:"max"`
	Unit      string  `json:"unit"`
}

func (f Failure) String() string {
	scale, unit := 1.0, f.Unit
	switch f.Unit {
	case "s":
		scale, unit = 1e6, "us"
	case "V":
		scale, unit = 1e-3, "kV"
	}
	if f.Parameter == "shape" {
		return "shape " + f.Unit // e.g. "lightning-chopped, nominal lightning-full"
	}
	if math.IsInf(f.Min, -1) {
		return fmt.Sprintf("%s %.4g %s above %.4g %s", f.Parameter, f.Value*scale, unit, f.Max*scale, unit)
	}
	return fmt.Sprintf("%s %.4g %s outside %.4g..%.4g %s", f.Parameter, f.Value*scale, unit, f.Min*scale, f.Max*scale, unit)
}

// Unmeasured names the parameters that judging r against nom needs and that could not
// be measured, or not trustworthily, each with the reason: a time to half-value on a
// record cut before it, anything read off a clipped extreme, an overshoot without a base
// curve. A shot with such parameters can show no compliance: it neither passes nor
// fails on them.
func Unmeasured(r *Result, nom Nominal) map[string]string {
	out := map[string]string{}
	need := func(name string, v float64, why string) {
		if math.IsNaN(v) {
			out[name] = why
		}
	}
	if nom.Peak_v > 0 {
		need("test_voltage", r.TestVoltage_v, "no test voltage")
	}
	switch r.Shape {
	case Switching:
		need("time_to_peak", r.TimeToPeak_s, "no time to peak (it needs the time to half-value)")
		need("time_to_half", r.TimeToHalf_s, "the record ends before the tail falls to 50 %")
	case LightningFull:
		need("front_time", r.FrontTime_s, "no front time")
		need("time_to_half", r.TimeToHalf_s, "the record ends before the tail falls to 50 %")
		need("overshoot", r.Overshoot_pct, "no base curve")
	case LightningChopped:
		if !r.FrontChopped {
			need("front_time", r.FrontTime_s, "no front time")
		}
	}
	for _, w := range r.Warnings {
		switch w.Code {
		case "clipped":
			// the extreme is not the signal's: every level read from it is off
			for _, p := range []string{"test_voltage", "overshoot", "front_time", "time_to_half", "time_to_peak"} {
				out[p] = "the record is clipped"
			}
		case "fit-failed":
			out["overshoot"] = "the base curve could not be fitted"
		}
	}
	if r.Shape == Switching || r.FrontChopped {
		delete(out, "front_time")
		delete(out, "overshoot")
	}
	if r.Shape != Switching {
		delete(out, "time_to_peak")
	}
	if r.Shape == LightningChopped {
		delete(out, "time_to_half") // a chopped impulse has none to judge
	}
	if nom.Peak_v <= 0 {
		delete(out, "test_voltage")
	}
	return out
}

// Judge checks r against the nominal shape and tolerances; no failures means pass.
// Parameters that are absent (a record cut before T2) are not judged here: Unmeasured
// names them, and a shot with such parameters shows no compliance.
func Judge(r *Result, nom Nominal, tol Tolerances) []Failure {
	var out []Failure
	band := func(name string, v, nominal, pct float64, unit string) {
		if math.IsNaN(v) || nominal <= 0 {
			return
		}
		lo, hi := nominal*(1-pct/100), nominal*(1+pct/100)
		if v < lo || v > hi {
			out = append(out, Failure{Parameter: name, Value: v, Min: lo, Max: hi, Unit: unit})
		}
	}
	want := nom.Class()
	if r.Shape != want {
		out = append(out, Failure{Parameter: "shape", Value: math.NaN(), Min: math.NaN(), Max: math.NaN(), Unit: string(r.Shape) + ", nominal " + string(want)})
	}
	band("test_voltage", r.TestVoltage_v, nom.Peak_v, tol.TestVoltage_pct, "V")
	switch r.Shape {
	case Switching:
		band("time_to_peak", r.TimeToPeak_s, nom.Front_s, tol.TimeToPeak_pct, "s")
		band("time_to_half", r.TimeToHalf_s, nom.Tail_s, tol.SwitchingTail_pct, "s")
	default:
		if r.FrontChopped {
			break // its own quantities: the front time and overshoot of the full impulse do not apply
		}
		band("front_time", r.FrontTime_s, nom.Front_s, tol.Front_pct, "s")
		if r.Shape == LightningFull {
			band("time_to_half", r.TimeToHalf_s, nom.Tail_s, tol.Tail_pct, "s")
		}
		if !math.IsNaN(r.Overshoot_pct) && r.Overshoot_pct > tol.OvershootMax_pct {
			out = append(out, Failure{Parameter: "overshoot", Value: r.Overshoot_pct, Min: math.Inf(-1), Max: tol.OvershootMax_pct, Unit: "%"})
		}
	}
	return out
}

// EvaluateChannel evaluates a channel and adds the clipping check that needs the
// channel's stated range.
func EvaluateChannel(c *waveform.Channel, t0, dt float64, s Settings) (*Result, error) {
	r, err := Evaluate(c.Samples, t0, dt, s)
	if err != nil {
		return nil, err
	}
	if cl, ok := waveform.DetectClipping(c); ok {
		level := fmt.Sprintf("%.4g kV", cl.Level/1e3) // a divider channel is in volts after its ratio
		if c.Unit != "" && c.Unit != "V" {
			level = fmt.Sprintf("%.4g %s", cl.Level, c.Unit)
		}
		r.warn("clipped", "%d samples stuck at %s from sample %d (the scope's range): the extreme, the test voltage and the overshoot are not trustworthy; set a wider range", cl.Length, level, cl.Index)
	}
	return r, nil
}
