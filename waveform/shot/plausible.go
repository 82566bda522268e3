package shot

import (
	"fmt"
	"math"

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
		return []Warning{{"time-implausible", fmt.Sprintf("the record spans %.3g s where impulse records span microseconds to milliseconds: is the time unit misread%s? Give it in the header (t [us]) or the interval with --interval", d, slip(d/100e-6))}}
	}
	return nil
}

// impulsePlausible warns when the front or the time to half-value lies orders of
// magnitude outside every standard family, naming the likely unit slip.
func impulsePlausible(r *impulse.Result) []Warning {
	var out []Warning
	check := func(name string, v, lo, hi, typical float64) {
		if math.IsNaN(v) || (v >= lo/implausibleFactor && v <= hi*implausibleFactor) {
			return
		}
		out = append(out, Warning{"time-implausible", fmt.Sprintf("%s %.3g s is orders of magnitude outside the standard impulses' (%.3g to %.3g s)%s", name, v, lo, hi, slip(v/typical))})
	}
	lf, sf := impulse.StandardLightning, impulse.StandardSwitching
	front := r.FrontTime_s
	if r.Shape == impulse.Switching {
		front = r.TimeToPeak_s
	}
	check("the front", front, lf.Front_s, sf.Front_s, map[bool]float64{true: sf.Front_s, false: lf.Front_s}[r.Shape == impulse.Switching])
	check("the time to half-value", r.TimeToHalf_s, lf.Tail_s, sf.Tail_s, map[bool]float64{true: sf.Tail_s, false: lf.Tail_s}[r.Shape == impulse.Switching])
	return out
}
