package spectrum

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/hvshot/hvshot/waveform"
)

// Window is the taper applied to a record before its transform.
type Window string

const (
	// Rectangular leaves the record as it is: right for a transient that starts and
	// ends inside the record, whose energy a taper would change.
	Rectangular Window = "rectangular"
	// Hann is 0.5 - 0.5 cos(2 pi n/N), periodic, as numpy's and scipy's spectral
	// estimates use it.
	Hann Window = "hann"
)

// Settings say how a record is transformed.
type Settings struct {
	Window Window
	// Pad: the transform length is the smallest length of at least Pad x N samples
	// with no prime factor above 5 (the record, then zeros). Padding interpolates the
	// spectrum on a finer grid; it adds no information and changes no energy.
	Pad int
}

// DefaultSettings: no taper (a transient's energy), zero padding to twice the length.
func DefaultSettings() Settings { return Settings{Window: Rectangular, Pad: 2} }

// Spectrum is a record's one-sided spectrum on the frequencies k Df_hz, k = 0 ..
// NFFT/2.
type Spectrum struct {
	N, NFFT    int // samples transformed, transform length after the padding
	Interval_s float64
	Df_hz      float64
	Window     Window
	// X is the continuous Fourier transform's estimate X(f) = integral x(t)
	// exp(-j 2 pi f t) dt, as dt times the DFT (numpy's rfft times dt), with the time
	// origin at the record's first sample. Unit: the record's unit times seconds, that
	// is per hertz.
	X []complex128
	// WindowPower is sum w_n^2 (N for the rectangular window), for the noise floor.
	WindowPower float64
}

// Transform computes the spectrum of x (sample interval dt) under s.
func Transform(x []float64, dt float64, s Settings) (*Spectrum, error) {
	n := len(x)
	if n < 2 {
		return nil, fmt.Errorf("spectrum: %d samples, need at least 2", n)
	}
	if !(dt > 0) {
		return nil, fmt.Errorf("spectrum: sample interval %g s is not positive", dt)
	}
	pad := max(s.Pad, 1)
	m := waveform.SmoothLen(pad * n)
	buf := make([]float64, m)
	copy(buf, x)
	sp := &Spectrum{N: n, NFFT: m, Interval_s: dt, Df_hz: 1 / (float64(m) * dt), Window: s.Window, WindowPower: float64(n)}
	switch s.Window {
	case Rectangular, "":
		sp.Window = Rectangular
	case Hann:
		sp.WindowPower = 0
		for i := range n {
			w := hann(i, n)
			buf[i] *= w
			sp.WindowPower += w * w
		}
	default:
		return nil, fmt.Errorf("spectrum: window %q: rectangular or hann", s.Window)
	}
	f, done := waveform.FFTPlan(m)
	sp.X = f.Coefficients(nil, buf)
	done()
	for k := range sp.X {
		sp.X[k] *= complex(dt, 0)
	}
	return sp, nil
}

func hann(i, n int) float64 { return 0.5 - 0.5*math.Cos(2*math.Pi*float64(i)/float64(n)) }

// Freq is bin k's frequency.
func (s *Spectrum) Freq(k int) float64 { return float64(k) * s.Df_hz }

// Amplitude is |X(f)| at bin k, in the record's unit per hertz.
func (s *Spectrum) Amplitude(k int) float64 { return cmplx.Abs(s.X[k]) }

// weight is 1 for the bins that have no mirror image (0 and, for an even length, the
// Nyquist bin), else 2: the one-sided spectrum folds the negative frequencies in.
func (s *Spectrum) weight(k int) float64 {
	if k == 0 || (s.NFFT%2 == 0 && k == s.NFFT/2) {
		return 1
	}
	return 2
}

// ESD is the one-sided energy spectral density at bin k, 2 |X(f)|^2 (|X|^2 at 0 and
// at the Nyquist frequency), in the record's unit squared times seconds per hertz:
// its integral over frequency is the record's energy (Parseval).
func (s *Spectrum) ESD(k int) float64 {
	a := s.X[k]
	return s.weight(k) * (real(a)*real(a) + imag(a)*imag(a))
}

// Energy is the sum of the ESD times Df over the bins: by Parseval's theorem for the
// DFT, exactly sum x_n^2 dt of the (windowed) record, in the unit squared times
// seconds (for a current, A^2 s: the action integral).
func (s *Spectrum) Energy() float64 {
	var e float64
	for k := range s.X {
		e += s.ESD(k)
	}
	return e * s.Df_hz
}

// Bandwidth is the frequency below which a share p (0.9 for 90 %) of the energy lies.
// Bin k holds the energy of the band k Df +- Df/2 (bin 0: 0 to Df/2), spread evenly
// over it: the cumulative energy rises linearly across each band, and the bandwidth
// is where it reaches p of the total. With a noise floor (NoiseFloor, the same bins),
// the floor's expected energy is taken off each bin first, never below zero: the share
// is of the signal's energy, not the noise's. NaN when there is no energy.
func (s *Spectrum) Bandwidth(p float64, floor []float64) float64 {
	e := s.signalESD(floor)
	var total float64
	for _, v := range e {
		total += v
	}
	if !(total > 0) || !(p > 0 && p < 1) {
		return math.NaN()
	}
	want, cum := p*total, 0.0
	for k, v := range e {
		if cum+v >= want && v > 0 {
			if k == 0 {
				return want / v * s.Df_hz / 2
			}
			return s.Freq(k) - s.Df_hz/2 + (want-cum)/v*s.Df_hz
		}
		cum += v
	}
	return s.Freq(len(e) - 1)
}

// signalESD is the ESD less the floor's, per bin.
func (s *Spectrum) signalESD(floor []float64) []float64 {
	e := make([]float64, len(s.X))
	for k := range e {
		e[k] = s.ESD(k)
		if floor != nil {
			e[k] = math.Max(0, e[k]-s.weight(k)*floor[k]*floor[k])
		}
	}
	return e
}

// NoiseEnergy is the energy the noise floor's amplitude would put into the record
// (sum of the floor's ESD times Df): about N sigma^2 dt for white noise.
func (s *Spectrum) NoiseEnergy(floor []float64) float64 {
	var e float64
	for k, f := range floor {
		e += s.weight(k) * f * f
	}
	return e * s.Df_hz
}

// DB is 20 log10(a/ref): an amplitude in decibels relative to ref, in the same unit.
// Zero and below give -Inf.
func DB(a, ref float64) float64 { return 20 * math.Log10(a/ref) }

// DBRef is the reference the report's spectra are drawn against: 1 micro-unit per
// megahertz (1 uV/MHz = 1e-12 V s), the reference that broadband impulse spectra are
// commonly stated against (common practice).
const DBRef = 1e-12
