// Package outcome judges a series of impulse applications as the dielectric test IEC
// 60060-1 clause 7 describes: the withstand procedures A, B and C, and the 50 %
// disruptive-discharge voltage by the up-and-down and the multiple-level methods.
//
// It works on plain applications (a level, a polarity, whether the object discharged)
// and knows nothing of records: which shots count, and whether one discharged, is the
// caller's to say.
package outcome
