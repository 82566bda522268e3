package spectrum

import (
	"fmt"
	"math"

	"github.com/hvshot/hvshot/waveform"
)

// MinPreTrigger is the fewest pre-trigger samples a noise floor is estimated from.
const MinPreTrigger = 16

// maxSegment bounds the noise estimate's segment: longer segments resolve the floor
// more finely but average fewer of them.
const maxSegment = 1024

// PSD is a two-sided power spectral density on the frequencies k Df_hz, k = 0 ..
// len(S)-1, in the record's unit squared per hertz.
type PSD struct {
	Df_hz    float64
	S        []float64
	Segment  int // samples per segment
	Segments int // how many were averaged
}

// Welch estimates the noise's power spectral density from x (the pre-trigger part,
// sample interval dt) by Welch's method: segments of L samples (the largest length up
// to min(len(x), 1024) with no prime factor above 5) overlapping by half, each with
// its mean taken out and a periodic Hann window applied, their periodograms averaged:
// S(f) = mean |DFT(w (x - mean))|^2 dt / sum w^2. This is scipy.signal.welch's
// 'density' estimate with window 'hann', detrend 'constant' (one-sided there: twice
// this, except at 0 and Nyquist).
func Welch(x []float64, dt float64) (*PSD, error) {
	n := len(x)
	if n < MinPreTrigger {
		return nil, fmt.Errorf("noise floor: %d pre-trigger samples, need at least %d", n, MinPreTrigger)
	}
	l := min(n, maxSegment)
	for waveform.SmoothLen(l) != l {
		l--
	}
	step := l / 2
	w := make([]float64, l)
	var wp float64
	for i := range w {
		w[i] = hann(i, l)
		wp += w[i] * w[i]
	}
	f, done := waveform.FFTPlan(l)
	defer done()
	buf := make([]float64, l)
	var coef []complex128
	p := &PSD{Df_hz: 1 / (float64(l) * dt), S: make([]float64, l/2+1), Segment: l}
	for at := 0; at+l <= n; at += step {
		var mean float64
		for _, v := range x[at : at+l] {
			mean += v
		}
		mean /= float64(l)
		for i, v := range x[at : at+l] {
			buf[i] = (v - mean) * w[i]
		}
		coef = f.Coefficients(coef, buf)
		for k, c := range coef {
			p.S[k] += real(c)*real(c) + imag(c)*imag(c)
		}
		p.Segments++
	}
	for k := range p.S {
		p.S[k] *= dt / (wp * float64(p.Segments))
	}
	return p, nil
}

// At is the density at frequency f, interpolated linearly between the estimate's
// frequencies. Below the first nonzero frequency it is the value there (the zero
// bin lost its level with each segment's mean); above the last, the last value.
func (p *PSD) At(f float64) float64 {
	x := f / p.Df_hz
	last := len(p.S) - 1
	switch {
	case last < 1:
		return p.S[0]
	case x <= 1:
		return p.S[1]
	case x >= float64(last):
		return p.S[last]
	}
	k := int(x)
	a := x - float64(k)
	return p.S[k]*(1-a) + p.S[k+1]*a
}

// NoiseFloor is, for each bin of s, the amplitude |X(f)| that noise of density p
// would have in a record like s's: sqrt(dt sum w_n^2 S(f)), the expected magnitude
// (root mean square) of the noise's transform. For white noise of RMS sigma it is
// dt sigma sqrt(N).
func NoiseFloor(s *Spectrum, p *PSD) []float64 {
	out := make([]float64, len(s.X))
	for k := range out {
		out[k] = math.Sqrt(s.Interval_s * s.WindowPower * p.At(s.Freq(k)))
	}
	return out
}
