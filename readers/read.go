package readers

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// Options collect what a file may not say about itself; the zero value asks the
// readers to find everything in the content.
type Options struct {
	Interval_s float64 // sample interval; replaces the file's own, with a warning when they differ
	// DefaultInterval_s is the sample interval for a file that states none (no time
	// column, no interval in its header); a file's own time base wins over it.
	DefaultInterval_s float64
	TimeColumn        string   // "auto" (default), "first" or "none"
	Raw               *RawSpec // describes a binary capture; ReadFile also finds a sidecar
	Names             []string // channel names for formats that carry none
	SizeHint          int64    // file size when known (ReadFile sets it); sizes buffers only
}

// Format names what Sniff found.
type Format string

const (
	FormatText Format = "text"
	FormatNPY  Format = "npy"
	FormatRaw  Format = "raw"
	// Self-describing binary captures, each named for its layout.
	FormatPreambleBlock Format = "preamble-block" // text preamble, then a definite-length block
	FormatDescriptor    Format = "descriptor"     // a block holding a binary descriptor and arrays
	FormatFixedHeader   Format = "fixed-header"   // fixed binary file and waveform headers
)

// ErrSegmented is Read's refusal of a capture that holds several records.
var ErrSegmented = errors.New("the capture holds several segments")

// SniffFormat decides the format from the first bytes: the .npy magic, one of the
// self-describing binary layouts (from their structure), other binary bytes (raw,
// which needs a description), or text. The extension is only a hint for raw.
func SniffFormat(head []byte, name string) Format {
	if len(head) >= 6 && string(head[:6]) == string(npyMagic) {
		return FormatNPY
	}
	switch {
	case sniffDescriptor(head):
		return FormatDescriptor
	case sniffFixed(head):
		return FormatFixedHeader
	case sniffPreamble(head):
		return FormatPreambleBlock
	}
	b := head
	if len(b) > 3 && b[0] == 0xEF && b[1] == 0xBB && b[2] == 0xBF {
		b = b[3:]
	}
	if len(b) > 4096 {
		b = b[:4096]
	}
	if binaryByte(b) >= 0 {
		return FormatRaw
	}
	switch strings.ToLower(filepath.Ext(name)) {
	case ".bin", ".raw", ".i16", ".f32", ".f64":
		if len(b) == 0 {
			return FormatRaw
		}
	}
	return FormatText
}

// Read reads one capture from r; name is used in messages and as a format hint. A
// segmented capture is refused with ErrSegmented: ReadAll reads its segments.
func Read(r io.Reader, name string, opt Options) (*waveform.Record, error) {
	recs, err := readAll(r, name, opt)
	if err != nil {
		return nil, err
	}
	if len(recs) > 1 {
		return nil, fileErr(name, ErrSegmented, fmt.Sprintf("%d segments, each a shot of its own; ReadAll reads them (as %s#1 to %s#%d)", len(recs), name, name, len(recs)))
	}
	return recs[0], nil
}

func readAll(r io.Reader, name string, opt Options) ([]*waveform.Record, error) {
	one := func(rec *waveform.Record, err error) ([]*waveform.Record, error) {
		if err != nil {
			return nil, err
		}
		return []*waveform.Record{rec}, nil
	}
	if opt.SizeHint <= 0 {
		// Before the peek below, which would leave an in-memory reader's Len short.
		opt.SizeHint = sizeHint(r, opt)
	}
	br := bufio.NewReaderSize(r, 1<<16)
	head, _ := br.Peek(4096)
	f := SniffFormat(head, name)
	// These files describe themselves: a raw description (a sidecar found beside the
	// file, or flags) has nothing to add, and is set aside with a note.
	var recs []*waveform.Record
	var err error
	switch f {
	case FormatDescriptor:
		recs, err = readDescriptor(br, name, sizeHint(r, opt))
	case FormatFixedHeader:
		recs, err = readFixed(br, name, sizeHint(r, opt))
	case FormatPreambleBlock:
		recs, err = one(readBlock(br, name, sizeHint(r, opt)))
	}
	switch f {
	case FormatDescriptor, FormatFixedHeader, FormatPreambleBlock:
		if err == nil && opt.Raw != nil {
			for _, rec := range recs {
				rec.Notes = append(rec.Notes, "the raw description given was not used: the file describes itself")
			}
		}
		return recs, err
	}
	return one(readOne(br, head, name, opt, r))
}

// readOne reads the formats that hold one record.
func readOne(br *bufio.Reader, head []byte, name string, opt Options, r io.Reader) (*waveform.Record, error) {
	switch SniffFormat(head, name) {
	case FormatNPY:
		iv := opt.Interval_s
		if iv == 0 {
			iv = opt.DefaultInterval_s
		}
		return ReadNPY(br, name, NPYOptions{Interval_s: iv, TimeColumn: opt.TimeColumn, Names: opt.Names, SizeHint: sizeHint(r, opt)})
	case FormatRaw:
		if opt.Raw == nil {
			if len(head) == 0 {
				return nil, fileErr(name, ErrEmpty, "")
			}
			// advice that fits the file: an image is no capture at all, and text that
			// turns to binary is damaged, neither needs a raw description
			if ok, what := IsCapture(head); !ok {
				return nil, fileErr(name, ErrNotCapture, what)
			}
			off := binaryByte(head)
			if off > 0 && bytes.IndexByte(head[:off], '\n') >= 0 {
				return nil, byteErr(name, int64(off), ErrBinary, "the file begins as text and turns to binary data here: damaged, or cut off while it was written?")
			}
			return nil, byteErr(name, int64(off), ErrBinary, "binary data with no description: put a "+SidecarSuffix+" file beside it or give --raw-sample and --interval")
		}
		return readRaw(br, name, *opt.Raw, sizeHint(r, opt))
	}
	if opt.Raw != nil && len(head) > 0 {
		// The user said raw: believe them over a sniff that found only printable bytes.
		return readRaw(br, name, *opt.Raw, sizeHint(r, opt))
	}
	return ReadText(br, name, TextOptions{Interval_s: opt.Interval_s, DefaultInterval_s: opt.DefaultInterval_s, TimeColumn: opt.TimeColumn, SizeHint: sizeHint(r, opt)})
}

func sizeHint(r io.Reader, opt Options) int64 {
	if opt.SizeHint > 0 {
		return opt.SizeHint
	}
	if l, ok := r.(interface{ Len() int }); ok {
		return int64(l.Len())
	}
	return 0
}

// ReadAll reads every record a capture holds: one for most files, one per segment for
// a segmented (sequence) capture, each with its Segment set.
func ReadAll(r io.Reader, name string, opt Options) ([]*waveform.Record, error) {
	return readAll(r, name, opt)
}

// ReadFileAll is ReadAll on a file, with ReadFile's sidecar lookup.
func ReadFileAll(path string, opt Options) ([]*waveform.Record, error) {
	return readFile(path, opt, readAll)
}

// SidecarFor returns the raw description path for a capture, if one exists.
func SidecarFor(path string) (string, bool) {
	for _, p := range []string{path + SidecarSuffix, strings.TrimSuffix(path, filepath.Ext(path)) + SidecarSuffix} {
		if st, err := os.Stat(p); err == nil && st.Mode().IsRegular() {
			return p, true
		}
	}
	return "", false
}

// ReadFile opens and reads one capture, using a sidecar raw description when there is
// one and opt has none.
func ReadFile(path string, opt Options) (*waveform.Record, error) {
	recs, err := readFile(path, opt, func(r io.Reader, name string, opt Options) ([]*waveform.Record, error) {
		rec, err := Read(r, name, opt)
		if err != nil {
			return nil, err
		}
		return []*waveform.Record{rec}, nil
	})
	if err != nil {
		return nil, err
	}
	return recs[0], nil
}

func readFile(path string, opt Options, read func(io.Reader, string, Options) ([]*waveform.Record, error)) ([]*waveform.Record, error) {
	// A named pipe would block the open until a writer comes, and a device never ends:
	// refuse both by their type before opening.
	if st, err := os.Stat(path); err == nil && !st.Mode().IsRegular() {
		return nil, fileErr(path, ErrNotAFile, specialKind(st.Mode()))
	}
	if opt.Raw == nil {
		if sc, ok := SidecarFor(path); ok {
			f, err := os.Open(sc)
			if err != nil {
				return nil, fileErr(sc, err, "")
			}
			spec, err := ParseSidecar(f, sc)
			f.Close()
			if err != nil {
				return nil, err
			}
			opt.Raw = &spec
		}
	}
	f, err := os.Open(path)
	if err != nil {
		var pe *os.PathError
		if errors.As(err, &pe) {
			return nil, fileErr(path, pe.Err, "")
		}
		return nil, fileErr(path, err, "")
	}
	defer f.Close()
	if st, err := f.Stat(); err == nil && opt.SizeHint == 0 {
		opt.SizeHint = st.Size()
	}
	recs, err := read(f, path, opt)
	for _, rec := range recs {
		rec.Source = path
	}
	return recs, err
}

// specialKind names what a path that is not a regular file is.
func specialKind(m os.FileMode) string {
	switch {
	case m.IsDir():
		return "a folder"
	case m&os.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&os.ModeSocket != 0:
		return "a socket"
	case m&os.ModeDevice != 0:
		return "a device"
	}
	return "a special file"
}
