package waveform

import (
	"math"
	"sync"

	"gonum.org/v1/gonum/dsp/fourier"
)

// TestVoltageGain is the test voltage function of IEC 60060-1:2010,
// k(f) = 1/(1 + 2.2 f^2) with f in MHz.
func TestVoltageGain(f_hz float64) float64 {
	f := f_hz / 1e6
	return 1 / (1 + 2.2*f*f)
}

// TestVoltageTau_s is the time constant of the first-order low-pass whose power gain
// equals the test voltage function: sqrt(2.2)/(2 pi) us.
var TestVoltageTau_s = math.Sqrt(2.2) / (2 * math.Pi) * 1e-6

// plans caches FFT plans per length. A plan holds work space, so a worker takes one
// out and puts it back; a sync.Pool would be emptied by every GC and the twiddle
// factors recomputed, so this is a plain free list, bounded per length.
var plans = struct {
	sync.Mutex
	free map[int][]*fourier.FFT
}{free: map[int][]*fourier.FFT{}}

func plan(n int) *fourier.FFT {
	plans.Lock()
	defer plans.Unlock()
	if l := plans.free[n]; len(l) > 0 {
		f := l[len(l)-1]
		plans.free[n] = l[:len(l)-1]
		return f
	}
	return fourier.NewFFT(n)
}

func release(n int, f *fourier.FFT) {
	plans.Lock()
	defer plans.Unlock()
	if len(plans.free) > 64 {
		plans.free = map[int][]*fourier.FFT{} // many odd lengths: start over
	}
	if len(plans.free[n]) < 8 {
		plans.free[n] = append(plans.free[n], f)
	}
}

// FFTPlan lends a cached FFT plan of length n (use a length from SmoothLen); the
// function returned gives it back for the next caller of that length.
func FFTPlan(n int) (*fourier.FFT, func()) {
	f := plan(n)
	return f, func() { release(n, f) }
}

// SmoothLen returns the smallest length >= n with no prime factor above 5; gonum's
// FFT slows sharply on lengths with a large prime factor.
func SmoothLen(n int) int {
	if n < 1 {
		return 1
	}
	for m := n; ; m++ {
		k := m
		for _, p := range []int{2, 3, 5} {
			for k%p == 0 {
				k /= p
			}
		}
		if k == 1 {
			return m
		}
	}
}

// RecursiveTVFMaxInterval_s is the longest sample interval at which the test voltage
// function is applied as a first-order low-pass run forward and backward: at dt <=
// tau_k/40 (about 170 MS/s) its power gain is within 1 % of k(f) up to 5 MHz, where k
// itself is below 0.02. Slower records are filtered in the frequency domain.
var RecursiveTVFMaxInterval_s = TestVoltageTau_s / 40

// ApplyTestVoltageFunction filters x (sample interval dt) in place by the test voltage
// function with zero phase. The line joining the ends is taken out first and put back
// after. In the frequency domain the sequence is zero-padded to at least twice its
// length, so the circular transform neither wraps the tail onto the front nor sees a
// jump at the seam.
func ApplyTestVoltageFunction(x []float64, dt float64) {
	n := len(x)
	if n < 2 {
		return
	}
	a, b := x[0], x[n-1]
	slope := (b - a) / float64(n-1)
	if dt <= RecursiveTVFMaxInterval_s {
		// ZeroPhaseLowPass with the line's removal and return fused into its passes.
		ka := math.Exp(-dt / TestVoltageTau_s)
		kb := 1 - ka
		y := 0.0 // x[0] less the line is 0
		for i := range x {
			y = ka*y + kb*(x[i]-(a+slope*float64(i)))
			x[i] = y
		}
		y = x[n-1]
		for i := n - 1; i >= 0; i-- {
			y = ka*y + kb*x[i]
			x[i] = y + a + slope*float64(i)
		}
		return
	}
	m := SmoothLen(2 * n)
	buf := make([]float64, m)
	for i, v := range x {
		buf[i] = v - (a + slope*float64(i))
	}
	f := plan(m)
	defer release(m, f)
	spec := f.Coefficients(nil, buf)
	df := 1 / (float64(m) * dt)
	for k := range spec {
		spec[k] *= complex(TestVoltageGain(float64(k)*df), 0)
	}
	f.Sequence(buf, spec)
	inv := 1 / float64(m)
	for i := range x {
		x[i] = buf[i]*inv + a + slope*float64(i)
	}
}

// ApplyTestVoltageFunctionRecursive is ApplyTestVoltageFunction's first-order
// low-pass forward and backward at any sample interval: exact in the limit of fine
// sampling, and at 10 ns still within 1 % of k(f) up to 5 MHz (measured against
// scipy.signal.freqz, TestRecursiveTVFAt10ns), for a Monte Carlo's spread, which needs
// the filter's effect on noise more than its last digit, at a fraction of the cost of
// the transforms.
func ApplyTestVoltageFunctionRecursive(x []float64, dt float64) {
	n := len(x)
	if n < 2 {
		return
	}
	a, b := x[0], x[n-1]
	slope := (b - a) / float64(n-1)
	ka := math.Exp(-dt / TestVoltageTau_s)
	kb := 1 - ka
	k2 := ka * ka
	// Two samples a step: y[i+1] = ka^2 y[i-1] + ka kb u[i] + kb u[i+1] carries the
	// recursion's dependency over two samples at once, so the loop runs at about twice
	// the speed of the one-sample form; the same filter to rounding.
	y := 0.0 // x[0] less the line is 0
	x[0] = 0
	i := 1
	for ; i+1 < n; i += 2 {
		u0 := kb * (x[i] - (a + slope*float64(i)))
		u1 := kb * (x[i+1] - (a + slope*float64(i+1)))
		x[i] = ka*y + u0
		y = k2*y + (ka*u0 + u1)
		x[i+1] = y
	}
	for ; i < n; i++ {
		y = ka*y + kb*(x[i]-(a+slope*float64(i)))
		x[i] = y
	}
	y = x[n-1]
	i = n - 1
	for ; i-1 >= 0; i -= 2 {
		u0 := kb * x[i]
		u1 := kb * x[i-1]
		v0 := ka*y + u0
		y = k2*y + (ka*u0 + u1)
		x[i] = v0 + a + slope*float64(i)
		x[i-1] = y + a + slope*float64(i-1)
	}
	for ; i >= 0; i-- {
		y = ka*y + kb*x[i]
		x[i] = y + a + slope*float64(i)
	}
}

// DominantFrequency returns the frequency of the largest spectral line of x above
// minF_hz, and that line's amplitude, from a Hann-windowed transform.
func DominantFrequency(x []float64, dt, minF_hz float64) (f_hz, amp float64) {
	n := len(x)
	if n < 8 {
		return 0, 0
	}
	m := SmoothLen(n)
	buf := make([]float64, m)
	var mean float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(n)
	// Hann window; the cosine by rotation, re-anchored every 1024 samples.
	var wsum float64
	th := 2 * math.Pi / float64(n-1)
	cr, sr := math.Cos(th), math.Sin(th)
	var c, sn float64
	for i, v := range x {
		if i&1023 == 0 {
			c, sn = math.Cos(th*float64(i)), math.Sin(th*float64(i))
		} else {
			c, sn = c*cr-sn*sr, sn*cr+c*sr
		}
		w := 0.5 - 0.5*c
		wsum += w
		buf[i] = (v - mean) * w
	}
	fp := plan(m)
	defer release(m, fp)
	spec := fp.Coefficients(nil, buf)
	df := 1 / (float64(m) * dt)
	best, bk := 0.0, 0
	for k := range spec {
		if float64(k)*df < minF_hz {
			continue
		}
		if a := cmplxAbs(spec[k]); a > best {
			best, bk = a, k
		}
	}
	return float64(bk) * df, 2 * best / wsum
}

func cmplxAbs(c complex128) float64 { return math.Hypot(real(c), imag(c)) }
