// Package atmos corrects disruptive-discharge and withstand voltages for the laboratory's
// air (pressure, temperature, humidity) to the standard reference atmosphere, after
// IEC 60060-1:2010 clause 4.3 as recalled from memory of the standard (docs/method.md).
//
// It is pure: Correct takes the readings and the discharge path and returns every
// factor of the correction, and ReadLog reads a logger's readings from an io.Reader
// for the one in force when a shot was fired.
package atmos
