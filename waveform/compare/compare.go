package compare

import (
	"math"
)

// Curve is a signal on a uniform time base: sample i at Start_s + i Interval_s.
type Curve struct {
	Y          []float64
	Start_s    float64
	Interval_s float64
}

// At is the curve at time t, linear between samples; NaN outside the record.
func (c Curve) At(t float64) float64 {
	x := (t - c.Start_s) / c.Interval_s
	n := len(c.Y)
	if n == 0 || x < 0 || x > float64(n-1) {
		return math.NaN()
	}
	i := int(x)
	if i >= n-1 {
		return c.Y[n-1]
	}
	a := x - float64(i)
	return c.Y[i]*(1-a) + c.Y[i+1]*a
}

// Time is sample i's time.
func (c Curve) Time(i int) float64 { return c.Start_s + float64(i)*c.Interval_s }

// Resample puts k times test, shifted earlier by shift_s, on the grid of onto: the
// value at onto's time t is k test(t + shift_s), linear between the test's samples,
// NaN where the test has none. Linear interpolation is exact for a straight line
// between samples and changes a smooth impulse by about dt^2/8 times its curvature.
func Resample(test Curve, k, shift_s float64, onto Curve) []float64 {
	out := make([]float64, len(onto.Y))
	for i := range out {
		out[i] = k * test.At(onto.Time(i)+shift_s)
	}
	return out
}

// Filled is y with its NaN ends (where a resampled record has no sample) filled with
// the nearest sample that has a value, for a transform: zeros there would put a step
// into the record that the reference does not have.
func Filled(y []float64) []float64 {
	out := append([]float64(nil), y...)
	first, last := -1, -1
	for i, v := range out {
		if !math.IsNaN(v) {
			if first < 0 {
				first = i
			}
			last = i
		}
	}
	if first < 0 {
		return make([]float64, len(y))
	}
	for i := range out {
		switch {
		case i < first:
			out[i] = out[first]
		case i > last:
			out[i] = out[last]
		case math.IsNaN(out[i]):
			out[i] = 0
		}
	}
	return out
}

// HalfCrossing is the first time the curve reaches half its largest magnitude, on
// the side of that extreme, interpolated linearly between samples: a point on the front
// that trigger jitter moves with the record and noise barely moves (the front is
// steepest near it). NaN for an empty or all-zero curve.
func HalfCrossing(c Curve) float64 {
	ip, peak := 0, 0.0
	for i, v := range c.Y {
		if math.Abs(v) > math.Abs(peak) {
			ip, peak = i, v
		}
	}
	if peak == 0 {
		return math.NaN()
	}
	sgn, half := math.Copysign(1, peak), math.Abs(peak)/2
	for i := 1; i <= ip; i++ {
		a, b := sgn*c.Y[i-1], sgn*c.Y[i]
		if a < half && b >= half {
			return c.Time(i-1) + (half-a)/(b-a)*c.Interval_s
		}
	}
	return c.Time(ip)
}

// Peak is the largest magnitude of y, NaN samples left out.
func Peak(y []float64) float64 {
	var p float64
	for _, v := range y {
		if a := math.Abs(v); a > p {
			p = a
		}
	}
	return p
}

// Difference is a test record less its reference on the reference's time base.
type Difference struct {
	D          []float64 // test - reference; NaN where the test has no sample
	Peak_pct   float64   // largest |D| over the reference's peak magnitude, in percent
	PeakTime_s float64   // when it occurs, on the reference's time base
	RMS_pct    float64   // RMS of D over the event window, over the reference's peak magnitude
	From, To   int       // the event window: sample indices [From, To)
}

// EventShare bounds the window the difference's RMS is taken over: from the first to
// the last sample where the reference's magnitude reaches this share of its peak
// (ours). The RMS over the whole record would fall as the record grew longer.
const EventShare = 0.05

// Diff is test (on ref's time base, see Resample) less ref. The peak is taken over the
// whole overlap; the RMS over the reference's event window (EventShare).
func Diff(ref Curve, test []float64) Difference {
	d := Difference{D: make([]float64, len(ref.Y)), Peak_pct: math.NaN(), RMS_pct: math.NaN(), PeakTime_s: math.NaN()}
	peak := Peak(ref.Y)
	d.From, d.To = len(ref.Y), 0
	for i, v := range ref.Y {
		if math.Abs(v) >= EventShare*peak {
			d.From, d.To = min(d.From, i), i+1
		}
	}
	if !(peak > 0) || len(test) != len(ref.Y) {
		return d
	}
	var worst, ss float64
	iw, n := -1, 0
	for i, v := range ref.Y {
		d.D[i] = test[i] - v
		if math.IsNaN(d.D[i]) {
			continue
		}
		if a := math.Abs(d.D[i]); a > worst || iw < 0 {
			worst, iw = a, i
		}
		if i >= d.From && i < d.To {
			ss += d.D[i] * d.D[i]
			n++
		}
	}
	if iw >= 0 {
		d.Peak_pct, d.PeakTime_s = 100*worst/peak, ref.Time(iw)
	}
	if n > 0 {
		d.RMS_pct = 100 * math.Sqrt(ss/float64(n)) / peak
	}
	return d
}
