package readers

// The "descriptor block" layout: an IEEE 488.2 definite-length block, '#9' and nine
// digits of byte count, that holds a fixed binary descriptor followed by variable
// arrays (user text, a trigger-time array for segmented records, the samples). An
// instrument's response may put a short text header before the '#'.
//
// The offsets in descriptorAt are from memory. Because of that the reader trusts no
// single length: the descriptor's array lengths must add up to the block length, the
// data array must be the point count times the sample size, the trigger-time array
// must hold one entry per segment, and nothing may follow the block but a line end.
// A misremembered field therefore fails with a message naming it.

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/hvshot/hvshot/waveform"
)

// descriptorAt is the layout's field table: byte offsets from the descriptor's first
// byte (from memory). Numbers are in the byte order the descriptor states.
var descriptorAt = struct {
	blockName, templateName int // 16-byte padded texts
	sampleSize, byteOrder   int // int16 enums: 0 one-byte, 1 two-byte; 0 big-endian, 1 little
	descLen, userTextLen    int // int32 lengths in bytes, in file order from here on
	resDescLen, trigTimeLen int
	risTimeLen, resArrLen   int
	wave1Len, wave2Len      int
	res2Len, res3Len        int
	instrument, instNumber  int // 16-byte text, int32
	traceLabel              int // 16-byte text
	pointCount              int // int32, all segments together
	segmentCount            int // int32, 1 for a single record
	vertGain, vertOffset    int // float32: value = gain x code - offset
	maxCode, minCode        int // float32, in codes: the edges of the vertical range
	nominalBits             int // int16
	interval                int // float32, seconds
	horizOffset             int // float64: time of the first sample from the trigger
	vertUnit, horUnit       int // 48-byte texts
	triggerTime             int // float64 seconds, then minutes, hours, day, month (bytes), year int16
	recordType              int // int16 enum
	waveSource              int // int16 enum: 0-3 the inputs 1-4, 9 none
	size                    int // the descriptor's length in this template
}{
	blockName: 0, templateName: 16,
	sampleSize: 32, byteOrder: 34,
	descLen: 36, userTextLen: 40, resDescLen: 44, trigTimeLen: 48,
	risTimeLen: 52, resArrLen: 56, wave1Len: 60, wave2Len: 64, res2Len: 68, res3Len: 72,
	instrument: 76, instNumber: 92, traceLabel: 96,
	pointCount: 116, segmentCount: 144,
	vertGain: 156, vertOffset: 160, maxCode: 164, minCode: 168, nominalBits: 172,
	interval: 176, horizOffset: 180,
	vertUnit: 196, horUnit: 244,
	triggerTime: 296, recordType: 316, waveSource: 344,
	size: 346,
}

// descRecordTypes are the record kinds (from memory) and whether hvshot reads them:
// one value per point on a uniform time base.
var descRecordTypes = map[int]struct {
	name string
	ok   bool
}{
	0: {"single sweep", true}, 1: {"interleaved (equivalent-time)", true}, 2: {"histogram", false},
	3: {"graph", false}, 4: {"filter coefficients", false}, 5: {"complex", false},
	6: {"extrema (min/max pairs)", false}, 7: {"sequence", true}, 8: {"centred interleaved", true},
	9: {"peak detect (min/max pairs)", false},
}

// maxDescPrefix bounds the text an instrument's response may put before the '#'.
const maxDescPrefix = 64

// sniffDescriptor says whether head holds this layout's block header and the start of
// a descriptor: two padded text names, the sample-size and byte-order enums, and a
// plausible descriptor length.
func sniffDescriptor(head []byte) bool {
	i := 0
	for i < len(head) && i < maxDescPrefix && head[i] != '#' {
		if head[i] < 0x20 || head[i] > 0x7e {
			return false
		}
		i++
	}
	if i+2 >= len(head) || head[i] != '#' || head[i+1] < '1' || head[i+1] > '9' {
		return false
	}
	p := i + 2 + int(head[i+1]-'0')
	if len(head) < p+40 {
		return false
	}
	for _, c := range head[i+2 : p] {
		if c < '0' || c > '9' {
			return false
		}
	}
	d := head[p:]
	at := descriptorAt
	if !printable(d[at.blockName:at.blockName+16], 1) || !printable(d[at.templateName:at.templateName+16], 1) {
		return false
	}
	order, ok := descOrder(d)
	if !ok {
		return false
	}
	ss := order.Uint16(d[at.sampleSize:])
	dl := order.Uint32(d[at.descLen:])
	return ss <= 1 && dl >= uint32(at.size) && dl <= 1<<16
}

// descOrder reads the byte-order enum, itself written in that order: 0 as big-endian
// is 00 00, 1 as little-endian is 01 00.
func descOrder(d []byte) (binary.ByteOrder, bool) {
	b := d[descriptorAt.byteOrder:]
	switch {
	case b[0] == 0 && b[1] == 0:
		return binary.BigEndian, true
	case b[0] == 1 && b[1] == 0:
		return binary.LittleEndian, true
	}
	return nil, false
}

// ReadDescriptor reads a capture in the descriptor block layout: one record, or one per
// segment of a segmented (sequence) capture, each with its Segment set.
func ReadDescriptor(r io.Reader, file string) ([]*waveform.Record, error) {
	return readDescriptor(bufio.NewReaderSize(r, 1<<16), file, sizeOf(r))
}

func readDescriptor(r io.Reader, file string, size int64) ([]*waveform.Record, error) {
	or := &offReader{r: r, file: file}
	at := descriptorAt

	// The block header, after an optional short text such as a query's echo.
	var prefix []byte
	one := make([]byte, 1)
	for {
		if err := or.full(one, "the block header"); err != nil {
			if or.off == 0 {
				return nil, fileErr(file, ErrEmpty, "")
			}
			return nil, err
		}
		if one[0] == '#' {
			break
		}
		if len(prefix) >= maxDescPrefix || one[0] < 0x20 || one[0] > 0x7e {
			return nil, byteErr(file, or.off-1, ErrHeader, fmt.Sprintf("no '#' block header in the first %d bytes", maxDescPrefix))
		}
		prefix = append(prefix, one[0])
	}
	if err := or.full(one, "the block header"); err != nil {
		return nil, err
	}
	nd := int(one[0] - '0')
	if one[0] < '1' || one[0] > '9' {
		return nil, byteErr(file, or.off-1, ErrHeader, fmt.Sprintf("block header: expected a digit 1-9 after '#', found byte 0x%02x", one[0]))
	}
	lenAt := or.off
	digits := make([]byte, nd)
	if err := or.full(digits, "the block length"); err != nil {
		return nil, err
	}
	blockLen, err := strconv.ParseInt(string(digits), 10, 64)
	if err != nil || blockLen < 0 {
		return nil, byteErr(file, lenAt, ErrHeader, fmt.Sprintf("block length %q is not a number", digits))
	}
	base := or.off // the descriptor's first byte; offsets below are from here
	if size > 0 && base+blockLen > size {
		return nil, byteErr(file, lenAt, ErrTruncated, fmt.Sprintf("block length %d, but the file ends %d bytes after the block header", blockLen, size-base))
	}

	head := make([]byte, at.descLen+4)
	if err := or.full(head, "the descriptor"); err != nil {
		return nil, err
	}
	fieldErr := func(off int, err error, format string, a ...any) error {
		return byteErr(file, base+int64(off), err, fmt.Sprintf(format, a...))
	}
	order, ok := descOrder(head)
	if !ok {
		return nil, fieldErr(at.byteOrder, ErrHeader, "byte-order field is %02x %02x, not 0 (big-endian) or 1 (little-endian)", head[at.byteOrder], head[at.byteOrder+1])
	}
	descLen := int64(int32(order.Uint32(head[at.descLen:])))
	if descLen < int64(at.size) || descLen > 1<<16 || descLen > blockLen {
		return nil, fieldErr(at.descLen, ErrHeader, "descriptor length %d: expected %d to 65536 and within the block of %d bytes", descLen, at.size, blockLen)
	}
	d := make([]byte, descLen)
	copy(d, head)
	if err := or.full(d[len(head):], "the descriptor"); err != nil {
		return nil, err
	}
	i16 := func(off int) int { return int(int16(order.Uint16(d[off:]))) }
	i32 := func(off int) int64 { return int64(int32(order.Uint32(d[off:]))) }
	f32 := func(off int) float32 { return math.Float32frombits(order.Uint32(d[off:])) }
	f64 := func(off int) float64 { return math.Float64frombits(order.Uint64(d[off:])) }

	// The lengths, in the order their arrays follow the descriptor.
	arrays := []struct {
		what string
		off  int
		n    int64
	}{
		{"descriptor length", at.descLen, 0}, {"user text length", at.userTextLen, 0},
		{"second descriptor length", at.resDescLen, 0}, {"trigger-time array length", at.trigTimeLen, 0},
		{"interleave-time array length", at.risTimeLen, 0}, {"reserved array length", at.resArrLen, 0},
		{"data array length", at.wave1Len, 0}, {"second data array length", at.wave2Len, 0},
		{"second reserved array length", at.res2Len, 0}, {"third reserved array length", at.res3Len, 0},
	}
	var sum int64
	for k := range arrays {
		a := &arrays[k]
		a.n = i32(a.off)
		if a.n < 0 {
			return nil, fieldErr(a.off, ErrHeader, "%s is %d", a.what, a.n)
		}
		sum += a.n
		if size > 0 && base+sum > size {
			return nil, fieldErr(a.off, ErrTruncated, "%s %d runs past the end of the file (%d bytes)", a.what, a.n, size)
		}
	}
	if sum != blockLen {
		return nil, fieldErr(at.descLen, ErrHeader, "the descriptor's lengths add up to %d bytes, the block header says %d", sum, blockLen)
	}
	userLen, trigLen, risLen := arrays[1].n, arrays[3].n, arrays[4].n
	dataLen, data2Len := arrays[6].n, arrays[7].n

	ss := i16(at.sampleSize)
	var st sampleType
	switch ss {
	case 0:
		st, _ = newSampleType("int8", order)
	case 1:
		st, _ = newSampleType("int16", order)
	default:
		return nil, fieldErr(at.sampleSize, ErrHeader, "sample-size field is %d, not 0 (one byte) or 1 (two bytes)", ss)
	}
	points := i32(at.pointCount)
	if points <= 0 {
		return nil, fieldErr(at.pointCount, ErrNoData, "point count is %d", points)
	}
	if points > MaxSamples {
		return nil, fieldErr(at.pointCount, ErrTooLarge, "point count %d is more than %d", points, MaxSamples)
	}
	if points*int64(st.size) != dataLen {
		return nil, fieldErr(at.wave1Len, ErrHeader, "data array length %d is not the point count %d x %d bytes", dataLen, points, st.size)
	}
	segs := i32(at.segmentCount)
	if segs < 1 || segs > points {
		return nil, fieldErr(at.segmentCount, ErrHeader, "segment count %d: expected 1 to the point count %d", segs, points)
	}
	if segs > 1 {
		if points%segs != 0 {
			return nil, fieldErr(at.segmentCount, ErrHeader, "%d points do not divide into %d segments", points, segs)
		}
		if trigLen != 16*segs {
			return nil, fieldErr(at.trigTimeLen, ErrHeader, "trigger-time array length %d: a record of %d segments has %d (two float64 per segment)", trigLen, segs, 16*segs)
		}
	} else if trigLen != 0 && trigLen != 16 {
		return nil, fieldErr(at.trigTimeLen, ErrHeader, "trigger-time array length %d in a single record: expected 0 or 16", trigLen)
	}
	rt := i16(at.recordType)
	kind, known := descRecordTypes[rt]
	if !known {
		return nil, fieldErr(at.recordType, ErrUnsupported, "record type %d is not one hvshot knows", rt)
	}
	if !kind.ok {
		return nil, fieldErr(at.recordType, ErrUnsupported, "record type %d, %s: hvshot reads one value per point", rt, kind.name)
	}

	rec := &waveform.Record{Source: file, Format: "descriptor", Meta: map[string]string{}}
	note := func(format string, a ...any) { rec.Notes = append(rec.Notes, fmt.Sprintf(format, a...)) }
	interval32 := f32(at.interval)
	interval, iNote := note32("interval", interval32)
	if !(interval > 0) || math.IsInf(interval, 0) {
		return nil, fieldErr(at.interval, ErrHeader, "interval is %g, not a positive finite time", interval32)
	}
	gain, gNote := note32("vertical gain", f32(at.vertGain))
	voff, oNote := note32("vertical offset", f32(at.vertOffset))
	hoff := f64(at.horizOffset)
	maxCode, minCode := float64(f32(at.maxCode)), float64(f32(at.minCode))
	for _, c := range []struct {
		what string
		off  int
		v    float64
	}{{"vertical gain", at.vertGain, gain}, {"vertical offset", at.vertOffset, voff}, {"first-sample offset", at.horizOffset, hoff},
		{"largest code", at.maxCode, maxCode}, {"smallest code", at.minCode, minCode}} {
		if err := finite(file, base+int64(c.off), c.what, c.v); err != nil {
			return nil, err
		}
	}
	if gain == 0 {
		return nil, fieldErr(at.vertGain, ErrHeader, "vertical gain is 0")
	}
	if minCode > maxCode {
		return nil, fieldErr(at.minCode, ErrHeader, "smallest code %g is above the largest %g", minCode, maxCode)
	}
	unit, factor := "", 1.0
	if u := cString(d[at.vertUnit : at.vertUnit+48]); u != "" {
		if si, f, ok := instrumentUnit(u); ok {
			unit, factor = si, f
		} else {
			note("vertical unit %q not known: values kept without a unit", u)
		}
	}
	switch hu := cString(d[at.horUnit : at.horUnit+48]); {
	case hu == "":
		note("no horizontal unit: seconds taken")
	default:
		if si, _, ok := instrumentUnit(hu); !ok || si != "s" {
			return nil, fieldErr(at.horUnit, ErrUnsupported, "horizontal unit %q: not a time record", hu)
		}
	}
	name := "CH1"
	switch src := i16(at.waveSource); {
	case src >= 0 && src <= 3:
		name = fmt.Sprintf("CH%d", src+1)
		note("channel %s from the source field %d", name, src)
	default:
		if l := cString(d[at.traceLabel : at.traceLabel+16]); l != "" {
			name = channelName(l, 0)
			note("channel %s from the trace label %q (source field %d)", name, l, src)
		}
	}
	bits := i16(at.nominalBits)
	if bits < 1 || bits > 32 {
		bits = 0
	}
	trigger, tNote := descTime(d[at.triggerTime:at.triggerTime+16], order)

	orderName := "big-endian"
	if order == binary.LittleEndian {
		orderName = "little-endian"
	}
	template := cString(d[at.templateName : at.templateName+16])
	rec.Layout = fmt.Sprintf("definite-length block holding a %d-byte binary descriptor (template %q), then its arrays; %s %s samples", descLen, template, orderName, st.name)
	rec.Meta["descriptor name"] = cString(d[at.blockName : at.blockName+16])
	rec.Meta["descriptor template"] = template
	rec.Meta["instrument"] = cString(d[at.instrument : at.instrument+16])
	rec.Meta["instrument number"] = strconv.FormatInt(i32(at.instNumber), 10)
	if l := cString(d[at.traceLabel : at.traceLabel+16]); l != "" {
		rec.Meta["trace label"] = l
	}
	if len(prefix) > 0 {
		rec.Meta["block prefix"] = string(prefix)
	}
	rec.Meta["record type"] = kind.name
	dataStart := base + descLen + userLen + arrays[2].n + trigLen + risLen + arrays[5].n
	note("samples: %s %s from the descriptor's sample-size field %d and byte-order field", orderName, st.name, ss)
	note("data start at byte %d: block at %d + descriptor %d + user text %d + second descriptor %d + trigger-time array %d + interleave-time array %d + reserved array %d",
		dataStart, base, descLen, userLen, arrays[2].n, trigLen, risLen, arrays[5].n)
	note("%s", iNote)
	note("value = vertical gain x code - vertical offset; %s; %s", gNote, oNote)
	note("vertical range: codes %g to %g from the descriptor; codes beyond are over-range", minCode, maxCode)
	if tNote != "" {
		note("%s", tNote)
	}
	if data2Len > 0 {
		note("second data array (%d bytes) not read", data2Len)
	}

	// The arrays, in file order.
	if err := or.skip(descLen-int64(len(d)), "the descriptor"); err != nil {
		return nil, err
	}
	if userLen > 1<<20 {
		return nil, fieldErr(at.userTextLen, ErrTooLarge, "user text length %d is more than 1 MiB", userLen)
	}
	ut, err := or.claimed(userLen, "the user text length")
	if err != nil {
		return nil, err
	}
	if s := strings.TrimSpace(cString(ut)); s != "" {
		rec.Meta["user text"] = s
	}
	if err := or.skip(arrays[2].n, "the second descriptor length"); err != nil {
		return nil, err
	}
	trig, err := or.claimed(trigLen, "the trigger-time array length")
	if err != nil {
		return nil, err
	}
	if err := or.skip(risLen+arrays[5].n, "the interleave-time and reserved array lengths"); err != nil {
		return nil, err
	}
	codes, err := or.samples(st, int(points), "the data array")
	if err != nil {
		return nil, err
	}
	if err := or.skip(data2Len+arrays[8].n+arrays[9].n, "the second data and reserved array lengths"); err != nil {
		return nil, err
	}
	if err := or.trailer("the block"); err != nil {
		return nil, err
	}

	over := make([]int, segs)
	per := int(points / segs)
	for i, c := range codes {
		if c > maxCode || c < minCode {
			over[i/per]++
		}
		codes[i] = (gain*c - voff) * factor
	}
	lo, hi := (gain*minCode-voff)*factor, (gain*maxCode-voff)*factor
	if lo > hi {
		lo, hi = hi, lo
	}
	if segs == 1 {
		rec.Start_s, rec.Interval_s, rec.Trigger = hoff, interval, trigger
		rec.Channels = []waveform.Channel{{Name: name, Unit: unit, Samples: codes, HasRange: true, RangeMin: lo, RangeMax: hi, ADCBits: bits, OverRange: over[0]}}
		note("start %g s from the first-sample offset (float64)", hoff)
		if over[0] > 0 {
			rec.Warnings = append(rec.Warnings, fmt.Sprintf("%s: %d samples coded beyond the vertical range (clipped)", name, over[0]))
		}
		r, err := finish(rec, file)
		if err != nil {
			return nil, err
		}
		return []*waveform.Record{r}, nil
	}

	out := make([]*waveform.Record, 0, segs)
	trigAt := dataStart - risLen - arrays[5].n - trigLen
	for k := 0; k < int(segs); k++ {
		tt := math.Float64frombits(order.Uint64(trig[16*k:]))
		toff := math.Float64frombits(order.Uint64(trig[16*k+8:]))
		if err := finite(file, trigAt+int64(16*k), fmt.Sprintf("trigger-time array entry %d", k+1), tt+toff); err != nil {
			return nil, err
		}
		sr := *rec
		sr.Meta = make(map[string]string, len(rec.Meta))
		for key, v := range rec.Meta {
			sr.Meta[key] = v
		}
		sr.Notes = append(append([]string{}, rec.Notes...),
			fmt.Sprintf("segment %d of %d: start %g s from its trigger-time array entry (time from trigger to first sample); trigger = the descriptor's trigger time + the entry's %g s", k+1, segs, toff, tt))
		sr.Warnings = append([]string{}, rec.Warnings...)
		sr.Segment, sr.Start_s, sr.Interval_s = k+1, toff, interval
		if !trigger.IsZero() {
			sr.Trigger = trigger.Add(time.Duration(math.Round(tt * 1e9)))
		}
		s := codes[k*per : (k+1)*per : (k+1)*per]
		sr.Channels = []waveform.Channel{{Name: name, Unit: unit, Samples: s, HasRange: true, RangeMin: lo, RangeMax: hi, ADCBits: bits, OverRange: over[k]}}
		if over[k] > 0 {
			sr.Warnings = append(sr.Warnings, fmt.Sprintf("%s: %d samples coded beyond the vertical range (clipped)", name, over[k]))
		}
		r, err := finish(&sr, file)
		if err != nil {
			err.(*ParseError).Detail = fmt.Sprintf("segment %d: %s", k+1, err.(*ParseError).Detail)
			return nil, err
		}
		out = append(out, r)
	}
	return out, nil
}

// descTime reads the trigger time stamp: float64 seconds, then minutes, hours, day and
// month as bytes, then the year as int16 (from memory). The instrument's clock states
// no zone; it is taken as UTC and the note says so.
func descTime(b []byte, order binary.ByteOrder) (time.Time, string) {
	sec := math.Float64frombits(order.Uint64(b))
	mi, h, day, mo := int(b[8]), int(b[9]), int(b[10]), int(b[11])
	y := int(int16(order.Uint16(b[12:])))
	if y == 0 && mo == 0 && day == 0 {
		return time.Time{}, "no trigger time in the descriptor"
	}
	if !(sec >= 0 && sec < 61) || mi > 59 || h > 23 || day < 1 || day > 31 || mo < 1 || mo > 12 || y < 1900 || y > 2200 {
		return time.Time{}, fmt.Sprintf("trigger time field out of range (%d-%d-%d %d:%d:%g): not used", y, mo, day, h, mi, sec)
	}
	whole := math.Floor(sec)
	t := time.Date(y, time.Month(mo), day, h, mi, int(whole), int(math.Round((sec-whole)*1e9)), time.UTC)
	return t, fmt.Sprintf("trigger time %s from the descriptor's time stamp (instrument clock, no zone stated: taken as UTC)", t.Format(time.RFC3339Nano))
}
