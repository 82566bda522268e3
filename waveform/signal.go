package waveform

import (
	"math"
	"sort"
)

// Baseline is the level and noise of a record before its event.
type Baseline struct {
	Level    float64 // mean of the pre-trigger samples
	NoiseRMS float64 // standard deviation of the pre-trigger samples
	Slope    float64 // least-squares slope per sample across the pre-trigger part (drift)
	Samples  int     // how many samples the estimate used
}

// PreTriggerLen estimates how many leading samples come before the event: the samples
// before the signal first departs from its start level by 2 % of its largest excursion
// (or 5 noise RMS, whichever is more) for 4 samples running, less a margin of a fifth,
// so that the onset itself never biases the baseline.
func PreTriggerLen(x []float64) int {
	n, _ := Onset(x)
	return n
}

// Onset is PreTriggerLen that also returns the whole-record noise estimate it used
// (NoiseFromDifferences), so callers need not compute it again.
func Onset(x []float64) (pre int, noise float64) {
	if len(x) == 0 {
		return 0, 0
	}
	m := 8
	if m > len(x) {
		m = len(x)
	}
	head := append([]float64(nil), x[:m]...)
	sort.Float64s(head)
	b0 := head[m/2]
	// The largest excursion sets the onset threshold; every fourth sample finds it to
	// well within the 2 % it is used at, unless the event is shorter than 4 samples.
	hi, lo := b0, b0
	for i := 0; i < len(x); i += 4 {
		if v := x[i]; v > hi {
			hi = v
		} else if v < lo {
			lo = v
		}
	}
	peak := math.Max(hi-b0, b0-lo)
	noise = NoiseFromDifferences(x)
	if peak == 0 {
		return len(x), noise
	}
	// Noise may cross 2 % early: the threshold is at least 5 noise RMS, and the
	// excursion must hold for 4 samples in a row.
	lim := math.Max(0.02*peak, 5*noise)
	run := 0
	for i, v := range x {
		if math.Abs(v-b0) > lim {
			run++
			if run == 4 {
				return (i - 3) * 4 / 5, noise
			}
		} else {
			run = 0
		}
	}
	return len(x), noise
}

// EstimateBaseline measures level, noise and drift over x[:n].
func EstimateBaseline(x []float64, n int) Baseline {
	if n > len(x) {
		n = len(x)
	}
	if n <= 0 {
		return Baseline{}
	}
	var s float64
	for _, v := range x[:n] {
		s += v
	}
	mean := s / float64(n)
	var ss, sxy, sxx float64
	c := float64(n-1) / 2
	for i, v := range x[:n] {
		d := v - mean
		ss += d * d
		xi := float64(i) - c
		sxy += xi * d
		sxx += xi * xi
	}
	b := Baseline{Level: mean, Samples: n}
	if n > 1 {
		b.NoiseRMS = math.Sqrt(ss / float64(n-1))
		b.Slope = sxy / sxx
	}
	return b
}

// Extreme returns the index and value of the sample farthest from zero.
func Extreme(x []float64) (int, float64) {
	hi, lo, ih, il := 0.0, 0.0, 0, 0
	for i, v := range x {
		if v > hi {
			hi, ih = v, i
		} else if v < lo {
			lo, il = v, i
		}
	}
	if -lo > hi {
		return il, lo
	}
	return ih, hi
}

// ArgMax returns the index and value of the largest sample in x[from:to].
func ArgMax(x []float64, from, to int) (int, float64) {
	bi, best := from, math.Inf(-1)
	for i := from; i < to; i++ {
		if x[i] > best {
			best, bi = x[i], i
		}
	}
	return bi, best
}

// CrossUp returns the fractional index of the first upward crossing of level in
// x[from:to], linearly interpolated, or -1 when there is none.
func CrossUp(x []float64, level float64, from, to int) float64 {
	if from < 0 {
		from = 0
	}
	if to > len(x) {
		to = len(x)
	}
	for i := from + 1; i < to; i++ {
		if x[i-1] < level && x[i] >= level {
			return float64(i-1) + (level-x[i-1])/(x[i]-x[i-1])
		}
	}
	return -1
}

// LastCrossUp returns the fractional index of the last upward crossing of level in
// x[from:to], or -1. On a noisy front it picks the crossing nearest the peak.
func LastCrossUp(x []float64, level float64, from, to int) float64 {
	if from < 0 {
		from = 0
	}
	if to > len(x) {
		to = len(x)
	}
	for i := to - 1; i > from; i-- {
		if x[i-1] < level && x[i] >= level {
			return float64(i-1) + (level-x[i-1])/(x[i]-x[i-1])
		}
	}
	return -1
}

// CrossDown returns the fractional index of the first downward crossing of level in
// x[from:to], or -1.
func CrossDown(x []float64, level float64, from, to int) float64 {
	if from < 0 {
		from = 0
	}
	if to > len(x) {
		to = len(x)
	}
	for i := from + 1; i < to; i++ {
		if x[i-1] > level && x[i] <= level {
			return float64(i-1) + (x[i-1]-level)/(x[i-1]-x[i])
		}
	}
	return -1
}

// CumTrapz writes the cumulative trapezoidal integral of x with step dt into out
// (allocated when nil or short) and returns it; out[0] is 0.
func CumTrapz(x []float64, dt float64, out []float64) []float64 {
	if len(out) < len(x) {
		out = make([]float64, len(x))
	}
	out = out[:len(x)]
	if len(x) == 0 {
		return out
	}
	out[0] = 0
	acc, h := 0.0, dt/2
	for i := 1; i < len(x); i++ {
		acc += (x[i-1] + x[i]) * h
		out[i] = acc
	}
	return out
}

// Derivative writes the central-difference derivative of x into out (one-sided at the
// ends) and returns it.
func Derivative(x []float64, dt float64, out []float64) []float64 {
	n := len(x)
	if len(out) < n {
		out = make([]float64, n)
	}
	out = out[:n]
	if n < 2 {
		for i := range out {
			out[i] = 0
		}
		return out
	}
	out[0] = (x[1] - x[0]) / dt
	out[n-1] = (x[n-1] - x[n-2]) / dt
	h := 1 / (2 * dt)
	for i := 1; i < n-1; i++ {
		out[i] = (x[i+1] - x[i-1]) * h
	}
	return out
}

// UndoDroop inverts a first-order high-pass (time constant tau_s) in place: a signal
// v measured through C-R coupling is restored as x = v + (1/tau) integral v dt.
// The trapezoidal integral makes the inverse exact for signals linear between samples.
func UndoDroop(v []float64, dt, tau_s float64) {
	acc, prev := 0.0, 0.0
	k := dt / (2 * tau_s)
	for i, s := range v {
		if i > 0 {
			acc += (prev + s) * k
		}
		prev = s
		v[i] = s + acc
	}
}

// ZeroPhaseLowPass runs a first-order low-pass with time constant tau_s forward and
// then backward over x in place, so the phase cancels; its power gain is
// 1/(1 + (2 pi f tau)^2) where the discretisation is fine against tau.
func ZeroPhaseLowPass(x []float64, dt, tau_s float64) {
	if len(x) == 0 || tau_s <= 0 {
		return
	}
	a := math.Exp(-dt / tau_s)
	b := 1 - a
	y := x[0]
	for i := range x {
		y = a*y + b*x[i]
		x[i] = y
	}
	y = x[len(x)-1]
	for i := len(x) - 1; i >= 0; i-- {
		y = a*y + b*x[i]
		x[i] = y
	}
}

// Clip describes a run of samples stuck at a limit.
type Clip struct {
	Index, Length int
	Level         float64
}

// DetectClipping reports runs of samples stuck at the channel's limit, or the samples
// the instrument itself marked as over range (Channel.OverRange). With a stated
// vertical range, any sample within half a code of either edge counts. Without one, a
// run of equal samples at the record's maximum or minimum counts only when the signal
// ran into it faster than a rounded, quantised peak would: a smooth peak spends about
// 6 quanta of slope-times-width in its top code, a clipped one far more.
func DetectClipping(c *Channel) (Clip, bool) {
	x := c.Samples
	if len(x) < 3 {
		return Clip{}, false
	}
	if c.OverRange > 0 {
		// The instrument coded samples as beyond its range: clipped, whatever the values.
		i := 0
		for k, v := range x {
			if c.HasRange && (v > c.RangeMax || v < c.RangeMin) {
				i = k
				break
			}
		}
		return Clip{Index: i, Length: c.OverRange, Level: x[i]}, true
	}
	if c.HasRange && c.RangeMax > c.RangeMin {
		tol := (c.RangeMax - c.RangeMin) * 1e-9
		if c.ADCBits > 0 && c.ADCBits < 40 {
			tol = (c.RangeMax - c.RangeMin) / math.Exp2(float64(c.ADCBits)) / 2
		}
		for i, v := range x {
			if v >= c.RangeMax-tol || v <= c.RangeMin+tol {
				n := 1
				for i+n < len(x) && (x[i+n] >= c.RangeMax-tol || x[i+n] <= c.RangeMin+tol) {
					n++
				}
				return Clip{Index: i, Length: n, Level: v}, true
			}
		}
		return Clip{}, false
	}
	lo, hi := x[0], x[0]
	q := math.Inf(1)
	for i, v := range x {
		if v < lo {
			lo = v
		}
		if v > hi {
			hi = v
		}
		if i > 0 {
			if d := math.Abs(v - x[i-1]); d > 0 && d < q {
				q = d
			}
		}
	}
	if math.IsInf(q, 1) {
		return Clip{}, false
	}
	// A run at the level the record rests at (a quiet baseline) is not clipping: only
	// levels far from the record's typical value count.
	stride := len(x)/1024 + 1
	var sample []float64
	for i := 0; i < len(x); i += stride {
		sample = append(sample, x[i])
	}
	sort.Float64s(sample)
	typical := sample[len(sample)/2]
	for _, lvl := range []float64{hi, lo} {
		if math.Abs(lvl-typical) < 0.25*(hi-lo) {
			continue
		}
		i := 0
		for i < len(x) {
			if x[i] != lvl {
				i++
				continue
			}
			n := 1
			for i+n < len(x) && x[i+n] == lvl {
				n++
			}
			if n >= 3 && i > 0 {
				k := n / 2
				if k > i-1 {
					k = i - 1
				}
				if k >= 1 {
					slope := math.Abs(x[i-1]-x[i-1-k]) / float64(k)
					// the step from the last free sample into the run counts too
					step := math.Abs(lvl - x[i-1])
					if slope*float64(n) > 20*q || step > 0.05*math.Max(math.Abs(hi), math.Abs(lo)) {
						return Clip{Index: i, Length: n, Level: lvl}, true
					}
				}
			}
			i += n
		}
	}
	return Clip{}, false
}

// NoiseFromDifferences estimates white noise RMS from the whole record: the median of
// |x[i+1] - x[i]| over 0.6745 sqrt 2 (the normal distribution's MAD). A smooth impulse
// adds little to sample-to-sample differences, so this holds without a pre-trigger part.
func NoiseFromDifferences(x []float64) float64 {
	n := len(x) - 1
	if n < 2 {
		return 0
	}
	// 1024 differences put the median within a few percent, enough for thresholds.
	stride := 1
	if n > 1024 {
		stride = n / 1024
	}
	d := make([]float64, 0, n/stride+1)
	for i := 0; i < n; i += stride {
		d = append(d, math.Abs(x[i+1]-x[i]))
	}
	sort.Float64s(d)
	return d[len(d)/2] / (0.6745 * math.Sqrt2)
}

// MovingMean returns the mean of x over 2w+1 samples centred on each, fewer at the
// ends, in one pass: a smoothing that shifts nothing in time.
func MovingMean(x []float64, w int) []float64 {
	out := make([]float64, len(x))
	var sum float64
	lo, hi := 0, 0 // x[lo:hi] is in the sum
	for i := range x {
		for hi < len(x) && hi <= i+w {
			sum += x[hi]
			hi++
		}
		for lo < i-w {
			sum -= x[lo]
			lo++
		}
		out[i] = sum / float64(hi-lo)
	}
	return out
}
