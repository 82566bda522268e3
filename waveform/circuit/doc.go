// Package circuit identifies an impulse generator's effective front and tail resistances
// from a fitted base curve by the exact inversion of the two-capacitor circuit, and
// designs the resistors that give a nominal shape with a given generator and load.
//
// It holds pure functions on plain types in SI units; docs/method.md derives the formulas.
package circuit
