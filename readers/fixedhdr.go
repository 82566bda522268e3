package readers

// The "fixed header" layout: a little-endian file header (a two-letter cookie, a
// two-digit version, the file size and the waveform count), then per waveform a fixed
// waveform header and, per buffer, a data header followed by the samples. Several
// waveforms are several channels; waveforms that carry distinct segment indices are
// the segments of a segmented capture.
//
// The field tables below are from memory. The reader checks what can be checked: the
// file size field against the bytes actually read, each header's own size field, each
// buffer's size against points x bytes per point, so that a misremembered field fails
// with a message naming it.

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"time"

	"github.com/hvshot/hvshot/waveform"
)

// fixedFileAt is the file header (from memory): cookie and version as ASCII, then the
// file size, four bytes wide in version "10" and eight in later versions, then the
// waveform count (int32).
var fixedFileAt = struct {
	cookie, version, size int
	narrowVersion         string
}{cookie: 0, version: 2, size: 4, narrowVersion: "10"}

// fixedWaveAt is the waveform header (from memory); offsets from its first byte, all
// little-endian.
var fixedWaveAt = struct {
	headerSize, waveType, buffers, points, count int // int32
	xRange                                       int // float32
	xDisplayOrigin, xIncrement, xOrigin          int // float64
	xUnits, yUnits                               int // int32 enums, fixedUnits
	date, clock                                  int // 16-byte texts "DD MMM YYYY", "HH:MM:SS"
	frame                                        int // 24-byte text, the instrument
	label                                        int // 16-byte text
	timeTag                                      int // float64, seconds from the first segment's trigger
	segment                                      int // uint32, 0 when not segmented
	minSize, size                                int // without and with the two segment fields
}{
	headerSize: 0, waveType: 4, buffers: 8, points: 12, count: 16, xRange: 20,
	xDisplayOrigin: 24, xIncrement: 32, xOrigin: 40, xUnits: 48, yUnits: 52,
	date: 56, clock: 72, frame: 88, label: 112, timeTag: 128, segment: 136,
	minSize: 128, size: 140,
}

// fixedDataAt is the data header (from memory): its size (int32), buffer type and bytes
// per point (int16), then the buffer's size in bytes, an int32 when the header is 12
// bytes long and an int64 when it is 16.
var fixedDataAt = struct{ headerSize, bufferType, bytesPerPoint, bufferSize int }{0, 4, 6, 8}

// fixedWaveTypes: the waveform kinds (from memory) and whether they are one value per
// point on a time base.
var fixedWaveTypes = map[int]struct {
	name string
	ok   bool
}{
	0: {"unknown", true}, 1: {"normal", true}, 2: {"peak detect (min/max pairs)", false}, 3: {"average", true},
	4: {"horizontal histogram", false}, 5: {"vertical histogram", false}, 6: {"logic", true},
}

// fixedBufferTypes: what a buffer holds (from memory); float buffers are scaled values,
// integer buffers whole numbers.
var fixedBufferTypes = map[int]struct {
	name  string
	float bool
	ok    bool
}{
	0: {"unknown", true, true}, 1: {"normal", true, true}, 2: {"maximum", true, false}, 3: {"minimum", true, false},
	4: {"time", true, false}, 5: {"counts", false, true}, 6: {"digital", false, true},
}

// fixedUnits: the unit enums (from memory).
var fixedUnits = map[int]struct{ name, si string }{
	0: {"unknown", ""}, 1: {"volts", "V"}, 2: {"seconds", "s"}, 3: {"constant", ""}, 4: {"amps", "A"},
	5: {"decibels", ""}, 6: {"hertz", "Hz"},
}

// maxFixedWaves bounds the waveform count a header may claim.
const maxFixedWaves = 1024

// sniffFixed says whether head opens with this layout's file header: two ASCII
// letters, two ASCII digits, and a waveform count and first waveform header size that
// make sense under one of the two widths of the file size field.
func sniffFixed(head []byte) bool {
	if len(head) < 20 || !isUpper(head[0]) || !isUpper(head[1]) || !isDigit(head[2]) || !isDigit(head[3]) {
		return false
	}
	_, ok := fixedWidth(head, string(head[2:4]), 0)
	return ok
}

func isUpper(c byte) bool { return c >= 'A' && c <= 'Z' }
func isDigit(c byte) bool { return c >= '0' && c <= '9' }

// fixedWidth decides the width of the file size field: the one under which more of
// the fields after it make sense (a waveform count of 1 to maxFixedWaves, a first
// waveform header size, the file size when known); on a tie, the version's (from
// memory). ok is false when under neither width the count makes sense.
func fixedWidth(head []byte, version string, size int64) (int, bool) {
	le := binary.LittleEndian
	score := func(w int) int {
		fs := int64(le.Uint32(head[4:]))
		if w == 8 {
			fs = int64(le.Uint64(head[4:]))
		}
		n := le.Uint32(head[4+w:])
		hs := le.Uint32(head[8+w:])
		if n < 1 || n > maxFixedWaves {
			return 0
		}
		s := 1
		if hs >= uint32(fixedWaveAt.minSize) && hs <= 4096 {
			s++
		}
		if size > 0 && fs == size {
			s++
		}
		return s
	}
	w, other := 8, 4
	if version == fixedFileAt.narrowVersion {
		w, other = 4, 8
	}
	sw, so := score(w), score(other)
	if so > sw {
		return other, true
	}
	return w, sw > 0
}

// ReadFixedHeader reads a capture in the fixed header layout: one record, or one per
// segment when its waveforms carry segment indices.
func ReadFixedHeader(r io.Reader, file string) ([]*waveform.Record, error) {
	return readFixed(bufio.NewReaderSize(r, 1<<16), file, sizeOf(r))
}

type fixedWave struct {
	name, unit string
	samples    []float64
	points     int64
	xinc, x0   float64
	when       time.Time
	whenNote   string
	tag        float64
	segment    uint32
	at         int64 // the waveform header's offset
	note       string
}

func readFixed(br *bufio.Reader, file string, size int64) ([]*waveform.Record, error) {
	le := binary.LittleEndian
	head, err := br.Peek(20)
	if len(head) == 0 {
		return nil, fileErr(file, ErrEmpty, "")
	}
	if err != nil {
		return nil, byteErr(file, int64(len(head)), ErrTruncated, "inside the file header")
	}
	if !isUpper(head[0]) || !isUpper(head[1]) || !isDigit(head[2]) || !isDigit(head[3]) {
		return nil, byteErr(file, 0, ErrHeader, fmt.Sprintf("file header: cookie and version %q are not two letters and two digits", head[:4]))
	}
	version := string(head[2:4])
	width, ok := fixedWidth(head, version, size)
	if !ok {
		return nil, byteErr(file, int64(fixedFileAt.size), ErrHeader, fmt.Sprintf("file header: neither a 4-byte nor an 8-byte file size field is followed by a waveform count of 1 to %d and a waveform header", maxFixedWaves))
	}
	or := &offReader{r: br, file: file}
	fh := make([]byte, 4+width+4)
	if err := or.full(fh, "the file header"); err != nil {
		return nil, err
	}
	fileSize := int64(le.Uint32(fh[4:]))
	if width == 8 {
		fileSize = int64(le.Uint64(fh[4:]))
	}
	nWaves := int(le.Uint32(fh[4+width:]))
	rec := &waveform.Record{Source: file, Format: "fixed-header", Meta: map[string]string{"cookie": string(fh[:2]), "version": version}}
	note := func(format string, a ...any) { rec.Notes = append(rec.Notes, fmt.Sprintf(format, a...)) }
	wantW := 8
	if version == fixedFileAt.narrowVersion {
		wantW = 4
	}
	note("file header: version %q, %d-byte file size field %d, %d waveforms", version, width, fileSize, nWaves)
	if width != wantW {
		note("the file size field is %d bytes wide, not the %d expected for version %q: the fields after it only make sense so", width, wantW, version)
	}
	if size > 0 && int64(nWaves)*int64(fixedWaveAt.size+12) > size {
		return nil, byteErr(file, int64(4+width), ErrHeader, fmt.Sprintf("waveform count %d: the file's %d bytes cannot hold so many headers", nWaves, size))
	}

	var waves []fixedWave
	for k := 0; k < nWaves; k++ {
		w, err := readFixedWave(or, k, nWaves, 4+width)
		if err != nil {
			return nil, err
		}
		waves = append(waves, w)
	}
	if extra, _ := io.Copy(io.Discard, io.LimitReader(or, 1)); extra > 0 || or.off != fileSize {
		if extra > 0 {
			return nil, byteErr(file, or.off-1, ErrHeader, fmt.Sprintf("bytes after the last of %d waveforms; the file size field says %d", nWaves, fileSize))
		}
		return nil, byteErr(file, int64(fixedFileAt.size), ErrHeader, fmt.Sprintf("file size field %d, but the file holds %d bytes", fileSize, or.off))
	}

	// Group waveforms into records: one per distinct segment index, in file order.
	var order []uint32
	groups := map[uint32][]fixedWave{}
	for _, w := range waves {
		if _, ok := groups[w.segment]; !ok {
			order = append(order, w.segment)
		}
		groups[w.segment] = append(groups[w.segment], w)
	}
	rec.Layout = fmt.Sprintf("fixed binary file header (version %q), then per waveform a waveform header, a data header and its buffer; %d waveforms", version, nWaves)
	var out []*waveform.Record
	for si, seg := range order {
		ws := groups[seg]
		r := *rec
		r.Meta = map[string]string{}
		for k, v := range rec.Meta {
			r.Meta[k] = v
		}
		r.Notes = append([]string{}, rec.Notes...)
		r.Interval_s, r.Start_s = ws[0].xinc, ws[0].x0
		r.Trigger = ws[0].when
		if ws[0].whenNote != "" {
			r.Notes = append(r.Notes, ws[0].whenNote)
		}
		if len(order) > 1 {
			r.Segment = si + 1
			r.Notes = append(r.Notes, fmt.Sprintf("segment %d of %d: the waveforms with segment index %d; time tag %g s", si+1, len(order), seg, ws[0].tag))
			if !r.Trigger.IsZero() && ws[0].tag != 0 {
				r.Trigger = r.Trigger.Add(time.Duration(math.Round(ws[0].tag * 1e9)))
				r.Notes = append(r.Notes, "trigger: the waveform header's date and time + the segment's time tag")
			}
		}
		for _, w := range ws {
			if w.points != ws[0].points || math.Abs(w.xinc-ws[0].xinc) > 1e-9*ws[0].xinc || math.Abs(w.x0-ws[0].x0) > 1e-6*ws[0].xinc {
				return nil, byteErr(file, w.at, ErrUnsupported, fmt.Sprintf("waveform %s: %d points from %g s every %g s, unlike %s's %d from %g s every %g s; hvshot records share one time base",
					w.name, w.points, w.x0, w.xinc, ws[0].name, ws[0].points, ws[0].x0, ws[0].xinc))
			}
			name := w.name
			if r.Channel(name) != nil {
				name = fmt.Sprintf("%s_%d", name, len(r.Channels)+1)
			}
			r.Channels = append(r.Channels, waveform.Channel{Name: name, Unit: w.unit, Samples: w.samples})
			r.Notes = append(r.Notes, w.note)
		}
		fr, err := finish(&r, file)
		if err != nil {
			return nil, err
		}
		out = append(out, fr)
	}
	return out, nil
}

func readFixedWave(or *offReader, k, n, countAt int) (fixedWave, error) {
	le := binary.LittleEndian
	at := fixedWaveAt
	file := or.file
	w := fixedWave{at: or.off}
	hs := make([]byte, 4)
	if got, _ := io.ReadFull(or, hs); got == 0 && k > 0 {
		return w, byteErr(file, int64(countAt), ErrTruncated, fmt.Sprintf("waveform count field %d, but the file ends after %d waveforms", n, k))
	} else if got < len(hs) {
		return w, byteErr(file, w.at+int64(got), ErrTruncated, fmt.Sprintf("inside waveform %d's header", k+1))
	}
	hsize := int64(int32(le.Uint32(hs)))
	if hsize < int64(at.minSize) || hsize > 4096 {
		return w, byteErr(file, w.at, ErrHeader, fmt.Sprintf("waveform %d: header size field %d, expected %d to 4096", k+1, hsize, at.size))
	}
	h := make([]byte, hsize)
	copy(h, hs)
	if err := or.full(h[4:], fmt.Sprintf("waveform %d's header", k+1)); err != nil {
		return w, err
	}
	fieldErr := func(off int, err error, format string, a ...any) error {
		return byteErr(file, w.at+int64(off), err, fmt.Sprintf("waveform %d: ", k+1)+fmt.Sprintf(format, a...))
	}
	i32 := func(off int) int64 { return int64(int32(le.Uint32(h[off:]))) }
	f64 := func(off int) float64 { return math.Float64frombits(le.Uint64(h[off:])) }

	wt := int(i32(at.waveType))
	kind, known := fixedWaveTypes[wt]
	if !known || !kind.ok {
		name := "not one hvshot knows"
		if known {
			name = kind.name
		}
		return w, fieldErr(at.waveType, ErrUnsupported, "waveform type %d, %s: hvshot reads one value per point", wt, name)
	}
	if nb := i32(at.buffers); nb != 1 {
		return w, fieldErr(at.buffers, ErrUnsupported, "buffer count %d: hvshot reads waveforms of one buffer (several are min/max pairs)", nb)
	}
	w.points = i32(at.points)
	if w.points <= 0 || w.points > MaxSamples {
		return w, fieldErr(at.points, ErrHeader, "point count %d: expected 1 to %d", w.points, MaxSamples)
	}
	w.xinc, w.x0 = f64(at.xIncrement), f64(at.xOrigin)
	if !(w.xinc > 0) || math.IsInf(w.xinc, 0) {
		return w, fieldErr(at.xIncrement, ErrHeader, "x increment %g is not a positive finite interval", w.xinc)
	}
	if err := finite(file, w.at+int64(at.xOrigin), fmt.Sprintf("waveform %d: x origin", k+1), w.x0); err != nil {
		return w, err
	}
	xu, yu := int(i32(at.xUnits)), int(i32(at.yUnits))
	var unitNote string
	switch xu {
	case 2:
	case 0:
		unitNote = "; x unit unknown: seconds taken"
	default:
		u, ok := fixedUnits[xu]
		if !ok {
			u.name = "not known"
		}
		return w, fieldErr(at.xUnits, ErrUnsupported, "x unit %d (%s): not a time record", xu, u.name)
	}
	yun, ok := fixedUnits[yu]
	if !ok {
		return w, fieldErr(at.yUnits, ErrHeader, "y unit %d is not one of the unit codes 0-6", yu)
	}
	w.unit = yun.si
	label := cString(h[at.label : at.label+16])
	w.name = channelName(label, k)
	date, clock := cString(h[at.date:at.date+16]), cString(h[at.clock:at.clock+16])
	if date != "" {
		if t, err := time.Parse("2 Jan 2006 15:04:05", date+" "+clock); err == nil {
			w.when = t
			w.whenNote = fmt.Sprintf("trigger time %s from the waveform header's date %q and time %q (no zone stated: taken as UTC)", t.Format(time.RFC3339), date, clock)
		} else {
			w.whenNote = fmt.Sprintf("date %q and time %q not understood: no trigger time", date, clock)
		}
	}
	if hsize >= int64(at.size) {
		w.tag = f64(at.timeTag)
		w.segment = le.Uint32(h[at.segment:])
		if math.IsNaN(w.tag) || math.IsInf(w.tag, 0) {
			w.tag = 0
		}
	}

	// The buffer's data header.
	dat := or.off
	dh := make([]byte, 4)
	if err := or.full(dh, fmt.Sprintf("waveform %d's data header", k+1)); err != nil {
		return w, err
	}
	dhs := int64(int32(le.Uint32(dh)))
	if dhs != 12 && dhs != 16 {
		return w, byteErr(file, dat, ErrHeader, fmt.Sprintf("waveform %d: data header size field %d, expected 12 or 16", k+1, dhs))
	}
	d := make([]byte, dhs)
	copy(d, dh)
	if err := or.full(d[4:], fmt.Sprintf("waveform %d's data header", k+1)); err != nil {
		return w, err
	}
	da := fixedDataAt
	bt := int(int16(le.Uint16(d[da.bufferType:])))
	bpp := int(int16(le.Uint16(d[da.bytesPerPoint:])))
	bsize := int64(int32(le.Uint32(d[da.bufferSize:])))
	if dhs == 16 {
		bsize = int64(le.Uint64(d[da.bufferSize:]))
	}
	btype, known := fixedBufferTypes[bt]
	if !known || !btype.ok {
		name := "not one hvshot knows"
		if known {
			name = btype.name
		}
		return w, byteErr(file, dat+int64(da.bufferType), ErrUnsupported, fmt.Sprintf("waveform %d: buffer type %d, %s", k+1, bt, name))
	}
	var tname string
	switch {
	case btype.float && bpp == 4:
		tname = "float32"
	case btype.float && bpp == 8:
		tname = "float64"
	case !btype.float && bpp == 1:
		tname = "uint8"
	case !btype.float && bpp == 2:
		tname = "int16"
	case !btype.float && bpp == 4:
		tname = "int32"
	default:
		return w, byteErr(file, dat+int64(da.bytesPerPoint), ErrUnsupported, fmt.Sprintf("waveform %d: %d bytes per point in a %s buffer", k+1, bpp, btype.name))
	}
	if bsize != w.points*int64(bpp) {
		return w, byteErr(file, dat+int64(da.bufferSize), ErrHeader, fmt.Sprintf("waveform %d: buffer size field %d is not the point count %d x %d bytes per point", k+1, bsize, w.points, bpp))
	}
	st, _ := newSampleType(tname, le)
	s, err := or.samples(st, int(w.points), fmt.Sprintf("waveform %d's buffer", k+1))
	if err != nil {
		return w, err
	}
	w.samples = s
	frame := cString(h[at.frame : at.frame+24])
	w.note = fmt.Sprintf("%s: waveform %d of %d, label %q, type %s, %s %s buffer, %d points, x increment %g s and x origin %g s (float64), y unit %s%s; instrument %q",
		w.name, k+1, n, label, kind.name, btype.name, tname, w.points, w.xinc, w.x0, yun.name, unitNote, frame)
	return w, nil
}
