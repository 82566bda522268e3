// Package compare sets one impulse record beside a reference record of the same test
// object: scaled to the same test voltage and aligned in time, their difference curve
// and the deviation of their transfer functions in a band.
//
// Its functions are pure, on plain slices with their time bases.
package compare
