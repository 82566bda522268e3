// Package waveform holds the Record type that every reader returns and the signal
// operations that all analyses share: baseline, polarity, level crossings, integration,
// the test voltage function filter, droop correction and clipping detection.
//
// Everything here works on plain []float64 samples on a uniform time base in SI units.
package waveform
