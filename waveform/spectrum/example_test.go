package spectrum_test

import (
	"fmt"

	"github.com/hvshot/hvshot/waveform/spectrum"
)

// A 1 V pulse lasting 1 us: its transform at 0 Hz is its area, 1 V us = 1e-6 V/Hz,
// and its energy 1 V^2 x 1 us (Parseval). Its main lobe, below 1/T = 1 MHz, holds about
// 90.3 % of the energy (common practice): 90 % lies just below 1 MHz.
func ExampleTransform() {
	x := make([]float64, 4000)
	for i := 1000; i < 2000; i++ {
		x[i] = 1
	}
	s, _ := spectrum.Transform(x, 1e-9, spectrum.DefaultSettings())
	fmt.Printf("%d samples, transform length %d, bins %.4g Hz apart\n", s.N, s.NFFT, s.Df_hz)
	fmt.Printf("|X(0)| = %.4g V/Hz, energy %.4g V^2 s\n", s.Amplitude(0), s.Energy())
	fmt.Printf("90 %% of the energy below %.3g MHz\n", s.Bandwidth(0.9, nil)/1e6)
	// Output:
	// 4000 samples, transform length 8000, bins 1.25e+05 Hz apart
	// |X(0)| = 1e-06 V/Hz, energy 1e-06 V^2 s
	// 90 % of the energy below 0.864 MHz
}
