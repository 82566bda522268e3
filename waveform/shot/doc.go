// Package shot evaluates one capture under a test series' setup, and a series of them:
// the setup file's schema, channel planning, scaling and droop, the impulse and sensor
// evaluations, result rows declared once in a column table, and series statistics.
//
// It does no file I/O: Evaluate takes a record and returns rows together with the
// curves a plot needs, so a lab's own program can call it the way the command does.
package shot
