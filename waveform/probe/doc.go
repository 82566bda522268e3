// Package probe turns sensor voltages into the quantities they sense: the discharge
// current from a B-dot pickup coil (integrated, corrected for the coil's L/R and load),
// and the electric field from a short antenna (corrected for its RC droop).
//
// Models are lumped circuits with closed-form inversions; geometry helpers give the
// coupling from dimensions, and calibration factors replace them where a lab has one.
package probe
