package readers

// The "preamble and block" layout: a text preamble of KEY value units, then the samples
// as one IEEE 488.2 definite-length block. Everything below about the keys is from
// memory; the block syntax is the standard's (IEEE 488.2, 7.7.6).
//
//	:PREFIX:KEY value;KEY value;KEY "quoted, with commas";...;:CURVEKEY #<n><n digits><bytes>
//
// A unit's header is a path of mnemonics; the last one is the key. A path that starts
// with ':' is from the root, so the prefix may be restated mid-preamble; one without
// keeps the previous prefix. Units end at ';' or at a line end (a preamble saved as
// the instrument's response to a query ends with one). Several preamble+block pairs
// in a row are several channels on one time base.

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// preKey is a preamble field hvshot uses.
type preKey int

const (
	pkBytes preKey = iota
	pkBits
	pkEncoding
	pkBinFormat
	pkByteOrder
	pkWaveID
	pkPoints
	pkPointFormat
	pkXUnit
	pkXIncr
	pkXZero
	pkPointOff
	pkYUnit
	pkYMult
	pkYOff
	pkYZero
	pkCurve
	numPreKeys
)

// preambleKeys is the layout's field table: each key's long and abbreviated spelling
// (from memory; matched without regard to case) and what it holds.
var preambleKeys = [numPreKeys]struct{ long, short, what string }{
	pkBytes:       {"BYT_NR", "BYT_N", "bytes per sample"},
	pkBits:        {"BIT_NR", "BIT_N", "bits per sample"},
	pkEncoding:    {"ENCDG", "ENC", "encoding (binary or ASCII)"},
	pkBinFormat:   {"BN_FMT", "BN_F", "number format (RI signed, RP unsigned, FP float)"},
	pkByteOrder:   {"BYT_OR", "BYT_O", "byte order (MSB or LSB first)"},
	pkWaveID:      {"WFID", "WFI", "free-text waveform id, naming the source channel first"},
	pkPoints:      {"NR_PT", "NR_P", "point count"},
	pkPointFormat: {"PT_FMT", "PT_F", "point format (Y; ENV is min/max pairs)"},
	pkXUnit:       {"XUNIT", "XUN", "horizontal unit"},
	pkXIncr:       {"XINCR", "XIN", "sample interval"},
	pkXZero:       {"XZERO", "XZE", "time of the point PT_OFF"},
	pkPointOff:    {"PT_OFF", "PT_O", "point offset"},
	pkYUnit:       {"YUNIT", "YUN", "vertical unit"},
	pkYMult:       {"YMULT", "YMU", "vertical scale per code"},
	pkYOff:        {"YOFF", "YOF", "vertical offset in codes"},
	pkYZero:       {"YZERO", "YZE", "vertical offset in units"},
	pkCurve:       {"CURVE", "CURV", "the curve: a definite-length block"},
}

// maxPreamble bounds one waveform's preamble; the longest real ones are a few hundred
// bytes.
const maxPreamble = 64 << 10

func lookupPreKey(k string) (preKey, bool) {
	k = strings.ToUpper(k)
	for i, s := range preambleKeys {
		if k == s.long || k == s.short {
			return preKey(i), true
		}
	}
	return 0, false
}

// sniffPreamble says whether head opens with a preamble of this layout: a header path
// whose key is in the table, a blank and a value, and a unit separator or the block
// marker further on.
func sniffPreamble(head []byte) bool {
	i := 0
	if i < len(head) && head[i] == ':' {
		i++
	}
	j := i
	for j < len(head) && isMnemonicByte(head[j]) {
		j++
	}
	if j == i || j >= len(head) || (head[j] != ' ' && head[j] != '\t') {
		return false
	}
	path := strings.Split(string(head[i:j]), ":")
	if _, ok := lookupPreKey(path[len(path)-1]); !ok {
		return false
	}
	rest := head[j:]
	if k := bytes.IndexAny(rest, ";\n"); k >= 0 && rest[k] == ';' {
		return true
	}
	// One unit per line: text exports have lines like that too, so the curve's block
	// header must be in sight as well.
	return reCurveBlock.Match(head)
}

var reCurveBlock = regexp.MustCompile(`(?i)[:;\n]CURVE?[ \t]+#[0-9]`)

func isMnemonicByte(c byte) bool {
	return c == '_' || c == ':' || (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || (c >= '0' && c <= '9')
}

// preScanner walks the preamble, counting bytes for messages.
type preScanner struct {
	br   *bufio.Reader
	off  int64
	file string
}

func (s *preScanner) peek() (byte, bool) {
	b, err := s.br.Peek(1)
	if err != nil {
		return 0, false
	}
	return b[0], true
}

func (s *preScanner) next() (byte, bool) {
	c, err := s.br.ReadByte()
	if err != nil {
		return 0, false
	}
	s.off++
	return c, true
}

// preWave is one waveform's preamble as read.
type preWave struct {
	val      [numPreKeys]string
	at       [numPreKeys]int64 // byte offset of each value, for messages
	spelled  [numPreKeys]string
	path     []string // the current header path
	chanHint string   // a channel named in a header path of this preamble
	extra    map[string]string
}

// ReadBlock reads a capture in the preamble and block layout.
func ReadBlock(r io.Reader, file string) (*waveform.Record, error) {
	return readBlock(bufio.NewReaderSize(r, 1<<16), file, sizeOf(r))
}

func readBlock(br *bufio.Reader, file string, size int64) (*waveform.Record, error) {
	s := &preScanner{br: br, file: file}
	rec := &waveform.Record{Source: file, Format: "preamble-block", Meta: map[string]string{}}
	var prev preWave
	for k := 0; ; k++ {
		w, done, err := s.preamble(prev, k)
		if err != nil {
			return nil, err
		}
		if done {
			break
		}
		if err := blockWave(s, w, k, size, rec); err != nil {
			return nil, err
		}
		prev = w
	}
	if len(rec.Channels) == 0 {
		if s.off == 0 {
			return nil, fileErr(file, ErrEmpty, "")
		}
		return nil, byteErr(file, s.off, ErrHeader, "a preamble with no curve block")
	}
	return finish(rec, file)
}

// preamble reads units up to and including the block marker's '#'. done is true at the
// end of the file before any unit of a new waveform.
func (s *preScanner) preamble(prev preWave, k int) (w preWave, done bool, err error) {
	w = prev
	w.extra = map[string]string{}
	w.chanHint = ""
	start := s.off
	path := prev.path
	units := 0
	for {
		if s.off-start > maxPreamble {
			return w, false, byteErr(s.file, s.off, ErrTooLarge, fmt.Sprintf("preamble longer than %d bytes without a curve block", maxPreamble))
		}
		c, ok := s.peek()
		for ok && (c == ';' || c == '\n' || c == '\r' || c == ' ' || c == '\t') {
			s.next()
			c, ok = s.peek()
		}
		if !ok {
			if units == 0 && k > 0 {
				return w, true, nil
			}
			return w, false, byteErr(s.file, s.off, ErrHeader, "the preamble ends without a curve block")
		}
		hdrAt := s.off
		var hdr []byte
		for ok && isMnemonicByte(c) {
			hdr = append(hdr, c)
			s.next()
			c, ok = s.peek()
			if len(hdr) > 256 {
				return w, false, byteErr(s.file, hdrAt, ErrHeader, "a header longer than 256 bytes")
			}
		}
		if len(hdr) == 0 {
			return w, false, byteErr(s.file, hdrAt, ErrHeader, fmt.Sprintf("expected a preamble key, found byte 0x%02x", c))
		}
		h := string(hdr)
		rooted := strings.HasPrefix(h, ":")
		parts := strings.Split(strings.Trim(h, ":"), ":")
		key := parts[len(parts)-1]
		if rooted || len(parts) > 1 {
			path = parts[:len(parts)-1]
		}
		w.path = path
		for _, p := range path {
			if n := channelName(p, k); strings.HasPrefix(n, "CH") && len(n) > 2 && strings.Trim(n[2:], "0123456789") == "" {
				w.chanHint = n
			}
		}
		units++
		pk, known := lookupPreKey(key)
		for ok && (c == ' ' || c == '\t') {
			s.next()
			c, ok = s.peek()
		}
		if known && pk == pkCurve {
			if !ok || c != '#' {
				return w, false, byteErr(s.file, s.off, ErrHeader, fmt.Sprintf("%s: expected a block starting with '#'", key))
			}
			s.next()
			w.at[pkCurve] = s.off - 1
			w.spelled[pkCurve] = key
			return w, false, nil
		}
		valAt := s.off
		v, err := s.value()
		if err != nil {
			return w, false, err
		}
		if known {
			w.val[pk], w.at[pk], w.spelled[pk] = v, valAt, strings.ToUpper(key)
		} else if len(w.extra) < 256 {
			w.extra[strings.ToUpper(strings.Join(append(append([]string{}, path...), key), ":"))] = v
		}
	}
}

// value reads a unit's value up to ';' or a line end; quoted strings (either quote,
// doubled to escape) may hold both.
func (s *preScanner) value() (string, error) {
	var b []byte
	at := s.off
	for {
		c, ok := s.peek()
		if !ok || c == ';' || c == '\n' {
			return strings.TrimSpace(string(b)), nil
		}
		if len(b) > 4096 {
			return "", byteErr(s.file, at, ErrHeader, "a preamble value longer than 4096 bytes")
		}
		s.next()
		if c == '"' || c == '\'' {
			q := c
			for {
				d, ok := s.next()
				if !ok {
					return "", byteErr(s.file, at, ErrTruncated, "a quoted preamble value is not closed")
				}
				if d == q {
					if e, ok := s.peek(); ok && e == q {
						s.next()
						b = append(b, q)
						continue
					}
					break
				}
				b = append(b, d)
				if len(b) > 4096 {
					return "", byteErr(s.file, at, ErrHeader, "a preamble value longer than 4096 bytes")
				}
			}
			continue
		}
		b = append(b, c)
	}
}

// blockWave turns one preamble and its block into a channel of rec.
func blockWave(s *preScanner, w preWave, k int, size int64, rec *waveform.Record) error {
	file := s.file
	field := func(pk preKey) string {
		sp := w.spelled[pk]
		if sp == "" {
			sp = preambleKeys[pk].long
		}
		return sp
	}
	bad := func(pk preKey, err error, format string, a ...any) error {
		return byteErr(file, w.at[pk], err, field(pk)+" "+fmt.Sprintf(format, a...))
	}
	num := func(pk preKey, def float64, required bool) (float64, error) {
		v := w.val[pk]
		if v == "" {
			if required {
				return 0, byteErr(file, w.at[pkCurve], ErrHeader, fmt.Sprintf("no %s (%s) before the curve block", field(pk), preambleKeys[pk].what))
			}
			return def, nil
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			return 0, bad(pk, ErrHeader, "%q is not a finite number", v)
		}
		return f, nil
	}

	// The block header: one digit n, then n digits of byte count.
	nd, ok := s.next()
	if !ok {
		return byteErr(file, s.off, ErrTruncated, "in the block header")
	}
	if nd == '0' {
		return byteErr(file, s.off-1, ErrUnsupported, "an indefinite-length block (#0); hvshot reads definite-length blocks")
	}
	if nd < '1' || nd > '9' {
		return byteErr(file, s.off-1, ErrHeader, fmt.Sprintf("block header: expected a digit 1-9 after '#', found byte 0x%02x", nd))
	}
	lenAt := s.off
	var blockLen int64
	for i := 0; i < int(nd-'0'); i++ {
		c, ok := s.next()
		if !ok {
			return byteErr(file, s.off, ErrTruncated, "in the block's length digits")
		}
		if c < '0' || c > '9' {
			return byteErr(file, s.off-1, ErrHeader, fmt.Sprintf("block length: byte 0x%02x is not a digit", c))
		}
		blockLen = blockLen*10 + int64(c-'0')
	}
	dataAt := s.off

	// What the samples are.
	switch strings.ToUpper(w.val[pkEncoding]) {
	case "", "BIN", "BINARY":
	default:
		return bad(pkEncoding, ErrUnsupported, "%q: hvshot reads binary curves", w.val[pkEncoding])
	}
	switch strings.ToUpper(w.val[pkPointFormat]) {
	case "", "Y":
	case "ENV", "ENVELOPE":
		return bad(pkPointFormat, ErrUnsupported, "%q: an envelope record (min/max pairs per point), not one value per point", w.val[pkPointFormat])
	default:
		return bad(pkPointFormat, ErrUnsupported, "%q: hvshot reads Y point records", w.val[pkPointFormat])
	}
	nb, err := num(pkBytes, 0, true)
	if err != nil {
		return err
	}
	bn := strings.ToUpper(w.val[pkBinFormat])
	if bn == "" {
		bn = "RI"
		if k == 0 {
			rec.Notes = append(rec.Notes, "no number format in the preamble: signed integers (RI) taken")
		}
	}
	types := map[string]string{"RI1": "int8", "RI2": "int16", "RI4": "int32", "RI8": "int64", "RP1": "uint8", "RP2": "uint16", "RP4": "uint32", "FP4": "float32", "FP8": "float64"}
	tname, ok := types[bn+strconv.FormatFloat(nb, 'f', -1, 64)]
	if !ok {
		return bad(pkBytes, ErrUnsupported, "%s with number format %s: hvshot reads 1, 2, 4 or 8-byte RI, RP and 4 or 8-byte FP", w.val[pkBytes], bn)
	}
	order := "big-endian"
	st, _ := newSampleType(tname, binary.BigEndian)
	switch strings.ToUpper(w.val[pkByteOrder]) {
	case "MSB":
	case "LSB":
		st.order, order = binary.LittleEndian, "little-endian"
	case "":
		if st.size > 1 {
			return byteErr(file, w.at[pkCurve], ErrHeader, fmt.Sprintf("no %s before the curve block: the order of %d-byte samples is unknown", field(pkByteOrder), st.size))
		}
	default:
		return bad(pkByteOrder, ErrHeader, "%q: expected MSB or LSB", w.val[pkByteOrder])
	}
	if w.val[pkBits] != "" {
		bits, err := num(pkBits, 0, false)
		if err != nil {
			return err
		}
		if bits < 1 || bits > float64(8*st.size) || bits != math.Trunc(bits) {
			return bad(pkBits, ErrHeader, "%s does not fit in %s %s", w.val[pkBits], field(pkBytes), w.val[pkBytes])
		}
	}
	if blockLen%int64(st.size) != 0 {
		return byteErr(file, lenAt, ErrHeader, fmt.Sprintf("block length %d is not a whole number of %d-byte samples (%s %s)", blockLen, st.size, field(pkBytes), w.val[pkBytes]))
	}
	count := blockLen / int64(st.size)
	if count > MaxSamples {
		return byteErr(file, lenAt, ErrTooLarge, fmt.Sprintf("block length %d claims %d samples, more than %d", blockLen, count, MaxSamples))
	}
	if size > 0 && dataAt+blockLen > size {
		return byteErr(file, lenAt, ErrTruncated, fmt.Sprintf("block length %d, but the file ends %d bytes after the block header", blockLen, size-dataAt))
	}
	if w.val[pkPoints] != "" {
		np, err := num(pkPoints, 0, false)
		if err != nil {
			return err
		}
		if np != float64(count) {
			return bad(pkPoints, ErrHeader, "%s disagrees with the block, which holds %d samples of %d bytes", w.val[pkPoints], count, st.size)
		}
	}

	// The time base.
	if u := w.val[pkXUnit]; u != "" {
		if si, _, ok := instrumentUnit(u); !ok || si != "s" {
			return bad(pkXUnit, ErrUnsupported, "%q: not a time record", u)
		}
	}
	xincr, err := num(pkXIncr, 0, true)
	if err != nil {
		return err
	}
	if !(xincr > 0) {
		return bad(pkXIncr, ErrHeader, "%s is not a positive interval", w.val[pkXIncr])
	}
	xzero, err := num(pkXZero, 0, false)
	if err != nil {
		return err
	}
	ptoff, err := num(pkPointOff, 0, false)
	if err != nil {
		return err
	}
	start := xzero - xincr*ptoff

	// The vertical scale.
	ymult, err := num(pkYMult, 0, true)
	if err != nil {
		return err
	}
	if ymult == 0 {
		return bad(pkYMult, ErrHeader, "is 0")
	}
	yoff, err := num(pkYOff, 0, false)
	if err != nil {
		return err
	}
	yzero, err := num(pkYZero, 0, false)
	if err != nil {
		return err
	}
	unit, factor := "", 1.0
	if u := w.val[pkYUnit]; u != "" {
		si, f, ok := instrumentUnit(u)
		if ok {
			unit, factor = si, f
		} else {
			rec.Notes = append(rec.Notes, fmt.Sprintf("vertical unit %q not known: values kept without a unit", u))
		}
	}

	or := &offReader{r: s.br, off: dataAt, file: file}
	codes, err := or.samples(st, int(count), "the curve block")
	if err != nil {
		return err
	}
	s.off = or.off
	for i, c := range codes {
		codes[i] = ((c-yoff)*ymult + yzero) * factor
	}
	name := ""
	if id := w.val[pkWaveID]; id != "" {
		first, _, _ := strings.Cut(id, ",")
		name = channelName(first, k)
	} else {
		name = w.chanHint
	}
	if name == "" {
		name = fmt.Sprintf("CH%d", k+1)
	}
	ch := waveform.Channel{Name: name, Unit: unit, Samples: codes}
	if st.name != "float32" && st.name != "float64" {
		lo, hi := codeLimits(st)
		a, b := ((lo-yoff)*ymult+yzero)*factor, ((hi-yoff)*ymult+yzero)*factor
		ch.HasRange, ch.RangeMin, ch.RangeMax = true, math.Min(a, b), math.Max(a, b)
	}

	if k == 0 {
		rec.Interval_s, rec.Start_s = xincr, start
		rec.Layout = fmt.Sprintf("text preamble of key-value units, then a definite-length binary block of %s %s samples", order, st.name)
		rec.Notes = append(rec.Notes,
			fmt.Sprintf("samples: %s %s from %s %s, %s %s, %s %q", order, st.name, field(pkBytes), w.val[pkBytes], field(pkBinFormat), bn, field(pkByteOrder), w.val[pkByteOrder]),
			fmt.Sprintf("time: t = %s %g + %s %g x (i - %s %g)", field(pkXZero), xzero, field(pkXIncr), xincr, field(pkPointOff), ptoff))
	} else {
		if int(count) != rec.Len() || math.Abs(xincr-rec.Interval_s) > 1e-9*rec.Interval_s || math.Abs(start-rec.Start_s) > 1e-6*rec.Interval_s {
			return byteErr(file, w.at[pkCurve], ErrUnsupported, fmt.Sprintf("waveform %d (%s): %d samples from %g s every %g s, unlike waveform 1's %d from %g s every %g s; hvshot records share one time base",
				k+1, name, count, start, xincr, rec.Len(), rec.Start_s, rec.Interval_s))
		}
		if rec.Channel(name) != nil {
			ch.Name = fmt.Sprintf("%s_%d", name, k+1)
		}
	}
	rec.Notes = append(rec.Notes,
		fmt.Sprintf("%s: %s %s codes; value = (code - %s %g) x %s %g + %s %g, unit %q from %s", ch.Name, order, st.name, field(pkYOff), yoff, field(pkYMult), ymult, field(pkYZero), yzero, w.val[pkYUnit], field(pkYUnit)))
	if w.val[pkWaveID] != "" {
		rec.Notes = append(rec.Notes, fmt.Sprintf("%s: name from the waveform id %q", ch.Name, w.val[pkWaveID]))
		rec.Meta[fmt.Sprintf("waveform id %d", k+1)] = w.val[pkWaveID]
	}
	if ch.HasRange && k == 0 {
		rec.Notes = append(rec.Notes, fmt.Sprintf("range: the %s code limits scaled; a sample there is at the end of what the file can express", st.name))
	}
	for key, v := range w.extra {
		rec.Meta[key] = v
	}
	rec.Channels = append(rec.Channels, ch)
	return nil
}

// codeLimits is the smallest and largest code an integer sample type holds.
func codeLimits(st sampleType) (float64, float64) {
	switch st.name {
	case "int8":
		return math.MinInt8, math.MaxInt8
	case "uint8":
		return 0, math.MaxUint8
	case "int16":
		return math.MinInt16, math.MaxInt16
	case "uint16":
		return 0, math.MaxUint16
	case "int32":
		return math.MinInt32, math.MaxInt32
	case "uint32":
		return 0, math.MaxUint32
	}
	return math.MinInt64, math.MaxInt64
}
