// Package fit fits the double-exponential base curve of an impulse,
// u(t) = U (exp(-(t-td)/tau1) - exp(-(t-td)/tau2)) for t >= td and 0 before, by
// Levenberg-Marquardt with the analytic Jacobian.
//
// It works on uniformly sampled []float64 in SI units and is usable on its own: it knows
// nothing of files, channels or the standard's tolerances.
package fit
