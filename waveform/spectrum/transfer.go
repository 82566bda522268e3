package spectrum

import (
	"fmt"
	"math"
	"math/cmplx"
)

// Transfer is H(f) = Y(f)/X(f) of two spectra on one grid (the same length, interval
// and padding), bin by bin; NaN where X is zero.
func Transfer(x, y *Spectrum) ([]complex128, error) {
	if x.NFFT != y.NFFT || x.Interval_s != y.Interval_s {
		return nil, fmt.Errorf("transfer function: the spectra are on different grids (%d bins of %g Hz against %d of %g Hz)", x.NFFT, x.Df_hz, y.NFFT, y.Df_hz)
	}
	h := make([]complex128, len(x.X))
	for k := range h {
		if x.X[k] == 0 {
			h[k] = cmplx.NaN()
			continue
		}
		h[k] = y.X[k] / x.X[k]
	}
	return h, nil
}

// Band marks the bins of s within [lo, hi] (hi 0: up to Nyquist) where the amplitude
// stands above floor by margin_db or more. A transfer function is trusted only where
// its input carries the signal well above the noise: a band selection that needs no
// coherence, and so no repeated shots. A nil floor marks the frequency range alone.
func Band(s *Spectrum, floor []float64, margin_db, lo, hi float64) []bool {
	k := math.Pow(10, margin_db/20)
	out := make([]bool, len(s.X))
	for i := range out {
		f := s.Freq(i)
		if f < lo || (hi > 0 && f > hi) || i == 0 {
			continue
		}
		out[i] = floor == nil || s.Amplitude(i) >= k*floor[i]
	}
	return out
}

// Smooth averages complex h over a centred window of 2 half + 1 bins, the window
// shrinking at the ends; NaN bins are left out of each mean. Averaging the complex
// values (not magnitudes) keeps a noisy bin's error from biasing the magnitude up.
func Smooth(h []complex128, half int) []complex128 {
	if half <= 0 {
		return append([]complex128(nil), h...)
	}
	out := make([]complex128, len(h))
	for i := range h {
		var s complex128
		n := 0
		for j := max(0, i-half); j <= min(len(h)-1, i+half); j++ {
			if !cmplx.IsNaN(h[j]) {
				s += h[j]
				n++
			}
		}
		if n == 0 {
			out[i] = cmplx.NaN()
			continue
		}
		out[i] = s / complex(float64(n), 0)
	}
	return out
}
