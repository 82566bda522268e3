package readers

import (
	"errors"
	"fmt"
)

// Sentinel causes, wrapped by ParseError; test with errors.Is.
var (
	ErrEmpty        = errors.New("file is empty")
	ErrNoData       = errors.New("no numeric data")
	ErrRagged       = errors.New("wrong number of fields")
	ErrSyntax       = errors.New("not a number")
	ErrNotFinite    = errors.New("value is NaN or infinite")
	ErrBinary       = errors.New("binary data in a text file")
	ErrTruncated    = errors.New("file is truncated")
	ErrTooLarge     = errors.New("declared size is too large")
	ErrLineTooLong  = errors.New("line too long")
	ErrNonMonotonic = errors.New("time column does not increase")
	ErrNonUniform   = errors.New("time column is not uniformly spaced")
	ErrNoInterval   = errors.New("no sample interval")
	ErrUnsupported  = errors.New("unsupported")
	ErrHeader       = errors.New("bad header")
	ErrSidecar      = errors.New("bad raw description")
	ErrNotAFile     = errors.New("not a regular file")
	ErrNotCapture   = errors.New("not a capture")
)

// ParseError is a read failure with its place in the file. Line and Column are 1-based
// and 0 when they do not apply; Offset is a byte offset, -1 when it does not apply.
type ParseError struct {
	File   string
	Line   int
	Column int
	Offset int64
	Err    error  // one of the sentinels above, possibly wrapped with detail
	Detail string // extra words for the reader, e.g. the offending cell
}

func (e *ParseError) Error() string {
	f := e.File
	if f == "" {
		f = "<input>"
	}
	var where string
	switch {
	case e.Line > 0 && e.Column > 0:
		where = fmt.Sprintf("%s:%d:%d", f, e.Line, e.Column)
	case e.Line > 0:
		where = fmt.Sprintf("%s:%d", f, e.Line)
	case e.Offset >= 0:
		where = fmt.Sprintf("%s: byte %d", f, e.Offset)
	default:
		where = f
	}
	if e.Detail != "" {
		return fmt.Sprintf("%s: %v: %s", where, e.Err, e.Detail)
	}
	return fmt.Sprintf("%s: %v", where, e.Err)
}

func (e *ParseError) Unwrap() error { return e.Err }

func lineErr(file string, line, col int, err error, detail string) *ParseError {
	return &ParseError{File: file, Line: line, Column: col, Offset: -1, Err: err, Detail: detail}
}

func byteErr(file string, off int64, err error, detail string) *ParseError {
	return &ParseError{File: file, Offset: off, Err: err, Detail: detail}
}

func fileErr(file string, err error, detail string) *ParseError {
	return &ParseError{File: file, Offset: -1, Err: err, Detail: detail}
}

// quote shortens a cell for a message.
func quote(b []byte) string {
	if len(b) > 40 {
		return fmt.Sprintf("%q...", b[:40])
	}
	return fmt.Sprintf("%q", b)
}
