// Package spectrum gives a record's frequency domain: the amplitude spectrum in physical
// units per hertz, the energy spectral density and the bandwidths that hold a share of
// the energy, the noise floor from the pre-trigger part, and transfer functions.
//
// Its functions are pure, on plain slices with the sample interval beside them.
package spectrum
