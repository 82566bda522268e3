// Package uncert estimates how well a record's parameters are known: a Monte Carlo over
// the record's own noise (modelled from its pre-trigger part), type B components such
// as a scale factor, a time base and the resolution of read instants, and their GUM
// combination into standard and expanded uncertainties.
//
// It knows no parameter: an evaluation is passed in as a function, so data flow from
// the evaluating packages to this one only.
package uncert
