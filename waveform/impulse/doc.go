// Package impulse evaluates a divider channel as IEC 60060-1:2010 defines the impulse
// parameters: shape class, test voltage value, front time, time to half-value,
// overshoot, time to chopping and switching-impulse time to peak, with tolerance checks.
//
// Items the standard's text could not be read for are marked "from memory" here and are
// Settings, never buried constants.
package impulse
