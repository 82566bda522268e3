package compare

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/hvshot/hvshot/waveform/spectrum"
)

// Pair is one record's input and output spectra with their noise floors (nil when
// the pre-trigger is too short to give one).
type Pair struct {
	X, Y           *spectrum.Spectrum
	FloorX, FloorY []float64
}

// Band are the frequencies the transfer functions are compared over, and how well
// the four spectra must stand above their noise there.
type Band struct {
	Lo_hz, Hi_hz float64 // Hi 0: up to the Nyquist frequency
	// Margin_db: each of the four spectra at least this far above its noise floor.
	Margin_db float64
	// MaxNoise_pct: the noise alone may move |H_test|/|H_ref| by at most this much
	// (one standard deviation, in percent) at a bin compared; see NoiseShare. It ties
	// the band to the deviation that is to be found: noise of a quarter of the
	// threshold gives a noise-only maximum over a hundred bins of about three
	// quarters of it.
	MaxNoise_pct float64
	// Smooth_hz is the width of the moving mean over H (complex, over the bins
	// compared): a single record's H scatters bin to bin by the noise; averaging over
	// a few bins narrower than the object's resonances keeps the shape and cuts the
	// scatter.
	Smooth_hz float64
}

// NoiseShare is the standard deviation, relative, that noise at the floors gives
// |H_test|/|H_ref| at bin k: the four spectra's noise-to-signal ratios added in
// quadrature, halved in power because only the part in phase with each spectrum
// changes a magnitude (first order). NaN without floors.
func NoiseShare(ref, test Pair, k int) float64 {
	var v float64
	for _, p := range []struct {
		s *spectrum.Spectrum
		f []float64
	}{{ref.X, ref.FloorX}, {ref.Y, ref.FloorY}, {test.X, test.FloorX}, {test.Y, test.FloorY}} {
		if p.f == nil {
			return math.NaN()
		}
		r := p.f[k] / p.s.Amplitude(k)
		v += r * r
	}
	return math.Sqrt(v / 2)
}

// Transfer is two records' transfer functions H = Y/X and their largest deviation.
type Transfer struct {
	Df_hz     float64
	Ref, Test []complex128 // smoothed H of the reference and of the test record
	In        []bool       // the bins compared
	// MaxDev_pct is the largest | |H_test| / |H_ref| - 1 | over the band, in percent,
	// at Freq_hz; NaN when no bin qualifies.
	MaxDev_pct, Freq_hz float64
	Bins                int // how many bins were compared
}

// CompareTransfer computes both transfer functions and their largest magnitude
// deviation over the bins within the band where every one of the four spectra (both
// records' input and output) stands above its noise floor by the margin and the noise
// moves the ratio by no more than MaxNoise_pct: where the output sinks into its noise
// (near a zero of H) the ratio says nothing. Both pairs must be on one grid (the test resampled onto the
// reference's time base).
func CompareTransfer(ref, test Pair, b Band) (*Transfer, error) {
	hr, err := spectrum.Transfer(ref.X, ref.Y)
	if err != nil {
		return nil, err
	}
	ht, err := spectrum.Transfer(test.X, test.Y)
	if err != nil {
		return nil, err
	}
	if len(hr) != len(ht) {
		return nil, fmt.Errorf("transfer function: %d bins against %d", len(hr), len(ht))
	}
	in := spectrum.Band(ref.X, ref.FloorX, b.Margin_db, b.Lo_hz, b.Hi_hz)
	masks := [][]bool{spectrum.Band(ref.Y, ref.FloorY, b.Margin_db, b.Lo_hz, b.Hi_hz),
		spectrum.Band(test.X, test.FloorX, b.Margin_db, b.Lo_hz, b.Hi_hz), spectrum.Band(test.Y, test.FloorY, b.Margin_db, b.Lo_hz, b.Hi_hz)}
	for k := range in {
		for _, m := range masks {
			in[k] = in[k] && m[k]
		}
		if b.MaxNoise_pct > 0 && in[k] {
			in[k] = NoiseShare(ref, test, k) <= b.MaxNoise_pct/100
		}
		in[k] = in[k] && !cmplx.IsNaN(hr[k]) && !cmplx.IsNaN(ht[k]) && hr[k] != 0
		if !in[k] {
			hr[k], ht[k] = cmplx.NaN(), cmplx.NaN() // out of the smoothing too
		}
	}
	half := int(b.Smooth_hz / ref.X.Df_hz / 2)
	t := &Transfer{Df_hz: ref.X.Df_hz, Ref: spectrum.Smooth(hr, half), Test: spectrum.Smooth(ht, half), MaxDev_pct: math.NaN(), Freq_hz: math.NaN()}
	worst := -1.0
	for k := range in {
		if !in[k] {
			continue
		}
		t.Bins++
		if d := math.Abs(cmplx.Abs(t.Test[k])/cmplx.Abs(t.Ref[k]) - 1); d > worst {
			worst, t.Freq_hz = d, float64(k)*t.Df_hz
		}
	}
	t.In = in
	if worst >= 0 {
		t.MaxDev_pct = 100 * worst
	}
	return t, nil
}
