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

// plans caches FFT plans per length; a plan holds work space, so each length keeps a
// pool and concurrent batch workers never share one.
var plans sync.Map // int -> *sync.Pool of *fourier.FFT

func plan(n int) *fourier.FFT {
	p, _ := plans.LoadOrStore(n, &sync.Pool{New: func() any { return fourier.NewFFT(n) }})
	return p.(*sync.Pool).Get().(*fourier.FFT)
}

func release(n int, f *fourier.FFT) {
	p, _ := plans.Load(n)
	p.(*sync.Pool).Put(f)
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

// ApplyTestVoltageFunction filters x (sample interval dt) in place by the test voltage
// function with zero phase. The line joining the ends is taken out first and put back
// after, and the sequence is zero-padded to at least twice its length, so the circular
// transform neither wraps the tail onto the front nor sees a jump at the seam.
func ApplyTestVoltageFunction(x []float64, dt float64) {
	n := len(x)
	if n < 2 {
		return
	}
	a, b := x[0], x[n-1]
	slope := (b - a) / float64(n-1)
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

// DominantFrequency returns the frequency of the largest spectral line of x above
// minF_hz, and that line's amplitude, from a zero-padded, Hann-windowed transform.
func DominantFrequency(x []float64, dt, minF_hz float64) (f_hz, amp float64) {
	n := len(x)
	if n < 8 {
		return 0, 0
	}
	m := SmoothLen(4 * n)
	buf := make([]float64, m)
	var mean float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(n)
	var wsum float64
	for i, v := range x {
		w := 0.5 - 0.5*math.Cos(2*math.Pi*float64(i)/float64(n-1))
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
