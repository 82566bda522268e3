package shot

import (
	"math"
	"slices"
	"time"
)

// Trace is a divider row's test voltage curve kept small for the series' overlay: the
// curve over its test voltage, on a time axis from O1, at most traceColumns pairs of each
// stretch's minimum and maximum. It outlives the full curves, so a series of thousands of
// shots can be drawn together from a few kilobytes each.
type Trace struct {
	File, Channel string
	Verdict       Verdict
	Polarity      Polarity
	Fired         time.Time
	T_s, Y        []float32 // time from O1; voltage over Ut
}

const traceColumns = 300

// trace makes the row's trace, from a little before O1 to twice T2 past it (or the
// record's end, or the chop). A record whose time unit looks misread has none: drawn on
// the shared axis it would crush every other shot against its edge.
func trace(row *Row, c *Curves) *Trace {
	r := c.Impulse
	slipped := slices.ContainsFunc(row.Warnings, func(w Warning) bool { return w.Code == TimeImplausible })
	if r == nil || math.IsNaN(r.Origin_s) || !(r.TestVoltage_v > 0) || slipped {
		return nil
	}
	span := 2 * r.TimeToHalf_s
	if math.IsNaN(span) {
		span = 100e-6
	}
	i0 := max(0, int((r.Origin_s-0.1*span-r.Start_s)/r.Interval_s))
	i1 := min(len(r.TestVoltage), int((r.Origin_s+span-r.Start_s)/r.Interval_s)+1)
	if i1-i0 < 2 {
		return nil
	}
	t := &Trace{File: row.File, Channel: row.Channel, Verdict: row.Verdict, Polarity: row.Polarity, Fired: row.Fired}
	b := max(1, (i1-i0+traceColumns-1)/traceColumns)
	for i := i0; i < i1; i += b {
		lo, hi := -1, -1
		for k := i; k < min(i+b, i1); k++ {
			v := r.TestVoltage[k]
			if math.IsNaN(v) {
				continue
			}
			if lo < 0 || v < r.TestVoltage[lo] {
				lo = k
			}
			if hi < 0 || v > r.TestVoltage[hi] {
				hi = k
			}
		}
		if lo < 0 {
			continue // past a chop
		}
		for _, k := range []int{min(lo, hi), max(lo, hi)} {
			t.T_s = append(t.T_s, float32(r.Start_s+float64(k)*r.Interval_s-r.Origin_s))
			t.Y = append(t.Y, float32(r.TestVoltage[k]/r.TestVoltage_v))
			if lo == hi {
				break
			}
		}
	}
	return t
}
