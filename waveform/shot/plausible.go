package shot

import (
	"fmt"
	"math"
	"strings"

	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/impulse"
)

// An impulse record spans microseconds to tens of milliseconds; one that spans more
// than maxRecord_s has almost surely had its time unit misread (ours).
const maxRecord_s = 1.0

// A front or a time to half-value a hundred times beyond the standard families' (the
// lightning 1.2/50 and switching 250/2500 impulses of IEC 60060-1:2010) belongs to no
// impulse the standard knows (ours: "orders of magnitude" taken as two).
const implausibleFactor = 100

// slips names the likely unit slip for a time that is 10^(3k) times what it should be.
var slips = map[int]string{
	1: "milliseconds read as seconds, or microseconds as milliseconds", 2: "microseconds read as seconds", 3: "nanoseconds read as seconds",
	-1: "seconds read as milliseconds", -2: "seconds read as microseconds", -3: "seconds read as nanoseconds",
}

func slip(ratio float64) string {
	k := int(math.Round(math.Log10(ratio) / 3))
	if s, ok := slips[k]; ok {
		return fmt.Sprintf(" (%g times: %s?)", math.Pow(10, float64(3*k)), s)
	}
	return ""
}

// recordPlausible warns when the record is far too long to hold an impulse.
func recordPlausible(rec *waveform.Record) []Warning {
	if d := rec.Duration_s(); d > maxRecord_s {
		return []Warning{{TimeImplausible, fmt.Sprintf("the record spans %.3g s where impulse records span microseconds to milliseconds: is the time unit misread%s? Give it in the header (t [us]) or the interval with --interval", d, slip(d/100e-6))}}
	}
	return nil
}

// impulsePlausible warns, once, when the front or the time to half-value lies orders of
// magnitude outside every standard family, naming the likely unit slip.
//
// With a nominal shape given (nomTail_s > 0), a time to half-value 300 times the
// nominal's or more, either way, is a slip too (ours: between the standard lightning and
// switching shapes lies a factor 50; a unit misread is a factor 1000).
func impulsePlausible(r *impulse.Result, nomTail_s float64) []Warning {
	var out []string
	check := func(name string, v, lo, hi, typical float64) {
		if math.IsNaN(v) || (v >= lo/implausibleFactor && v <= hi*implausibleFactor) {
			return
		}
		out = append(out, fmt.Sprintf("%s %.3g s is orders of magnitude outside the standard impulses' (%.3g to %.3g s)%s", name, v, lo, hi, slip(v/typical)))
	}
	lf, sf := impulse.StandardLightning, impulse.StandardSwitching
	front, name := r.FrontTime_s, "the front time"
	if r.Shape == impulse.Switching {
		front, name = r.TimeToPeak_s, "the time to peak"
	}
	check(name, front, lf.Front_s, sf.Front_s, map[bool]float64{true: sf.Front_s, false: lf.Front_s}[r.Shape == impulse.Switching])
	check("the time to half-value", r.TimeToHalf_s, lf.Tail_s, sf.Tail_s, map[bool]float64{true: sf.Tail_s, false: lf.Tail_s}[r.Shape == impulse.Switching])
	if t := r.TimeToHalf_s; len(out) == 0 && nomTail_s > 0 && (t > 300*nomTail_s || t < nomTail_s/300) {
		out = append(out, fmt.Sprintf("the time to half-value %.3g s is %.3g times the nominal %.3g s%s", t, t/nomTail_s, nomTail_s, slip(t/nomTail_s)))
	}
	if len(out) == 0 {
		return nil
	}
	return []Warning{{TimeImplausible, strings.Join(out, "; ")}}
}

// TimeImplausible is the warning that the record's times look misread: its time
// parameters are then not trusted, for the verdict or the statistics.
const TimeImplausible = "time-implausible"

// maxTestVoltage_v is beyond the test voltage of any impulse generator (ours: the
// largest build to some 10 MV, from memory); a larger Ut is a scale slip.
const maxTestVoltage_v = 20e6

// scaleSlip says what a test voltage far from its nominal, or beyond any generator,
// most likely is; "" when the scale looks right. A low one is only a hint (a small
// generator or a divider's low side without its ratio); a high one leaves Ut untrusted.
func scaleSlip(ut_v, nominal_v float64) (code, text string, trusted bool) {
	switch {
	case nominal_v > 0 && ut_v < 0.01*nominal_v:
		return "ratio-missing", fmt.Sprintf("the test voltage %.4g V is below 1 %% of the nominal %.4g kV: a low-side capture? give the divider ratio (--ratio, or ratio in the setup file)", ut_v, nominal_v/1e3), true
	case nominal_v > 0 && ut_v > 100*nominal_v:
		return "scale-implausible", fmt.Sprintf("the test voltage %.4g kV is %.3g times the nominal %.4g kV: a divider ratio applied twice, values in volts under a kV header, or a nominal written without its unit?", ut_v/1e3, ut_v/nominal_v, nominal_v/1e3), false
	case ut_v > maxTestVoltage_v:
		return "scale-implausible", fmt.Sprintf("a test voltage of %.4g MV is beyond any impulse generator: a divider ratio applied twice, or values in volts under a kV header?", ut_v/1e6), false
	case nominal_v == 0 && ut_v < 1e3:
		return "ratio-missing", fmt.Sprintf("the test voltage is only %.4g V: if this is a divider's low side, give its ratio (--ratio, or ratio in the setup file)", ut_v), true
	}
	return "", "", true
}
