// Package report presents evaluated shots to people: the console table, the plots of
// each shot (gonum/plot), the HTML report, and the self-check table.
//
// Everything here writes to an io.Writer; which files exist and where is the caller's
// business, so the same report can be written to disk, a network or a test buffer.
package report
