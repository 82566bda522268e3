// Package readers turns oscilloscope exports into waveform.Records: delimited text in
// its many dialects and layouts, instruments' self-describing binary files, raw binary
// described by flags or a sidecar file, and NumPy .npy.
//
// Read sniffs the format from the content; each reader also works alone over an
// io.Reader, and every failure is a *ParseError naming the file and line or byte.
// ReadAll returns one record per segment of a segmented capture; Find lists the
// captures in folders.
package readers
