package readers

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"sort"

	"github.com/hvshot/hvshot/waveform"
)

// MaxLineBytes bounds one line of delimited text; longer lines are an error rather
// than an unbounded buffer.
const MaxLineBytes = 64 << 10

const sniffBytes = 256 << 10

// Dialect is what the sniffer decided about a delimited text file.
type Dialect struct {
	Delim      byte // ',', ';', '\t' or ' ' (runs of blanks)
	DecimalSep byte // '.' or ','
	DataLine   int  // 1-based line of the first data row
	HeaderLine int  // 1-based line of the header row, 0 when none
	Fields     int  // fields per data row
}

func (d Dialect) String() string {
	name := map[byte]string{',': "comma", ';': "semicolon", '\t': "tab", ' ': "blanks"}[d.Delim]
	dec := "decimal point"
	if d.DecimalSep == ',' {
		dec = "decimal comma"
	}
	return name + ", " + dec
}

var dialects = []Dialect{
	{Delim: ',', DecimalSep: '.'}, {Delim: ';', DecimalSep: '.'}, {Delim: ';', DecimalSep: ','},
	{Delim: '\t', DecimalSep: '.'}, {Delim: '\t', DecimalSep: ','},
	{Delim: ' ', DecimalSep: '.'}, {Delim: ' ', DecimalSep: ','},
}

func isComment(l []byte) bool {
	l = bytes.TrimLeft(l, " \t")
	return len(l) > 0 && (l[0] == '#' || l[0] == '%' || bytes.HasPrefix(l, []byte("//")))
}

func isBlank(l []byte) bool { return len(bytes.Trim(l, " \t\r")) == 0 }

// splitFields calls fn for each field of line under delim, with the field's 0-based
// byte column; it stops early when fn returns false. Fields other than blank-separated
// ones are trimmed of blanks.
func splitFields(line []byte, delim byte, fn func(f []byte, col int) bool) {
	if delim == ' ' {
		i := 0
		for i < len(line) {
			for i < len(line) && (line[i] == ' ' || line[i] == '\t') {
				i++
			}
			if i == len(line) {
				return
			}
			j := i
			for j < len(line) && line[j] != ' ' && line[j] != '\t' {
				j++
			}
			if !fn(line[i:j], i) {
				return
			}
			i = j
		}
		return
	}
	start := 0
	for {
		j := bytes.IndexByte(line[start:], delim)
		end := len(line)
		if j >= 0 {
			end = start + j
		}
		f := line[start:end]
		col := start
		for len(f) > 0 && (f[0] == ' ' || f[0] == '\t') {
			f = f[1:]
			col++
		}
		for len(f) > 0 && (f[len(f)-1] == ' ' || f[len(f)-1] == '\t') {
			f = f[:len(f)-1]
		}
		// Some exports end every line with a delimiter: no field follows it.
		if j < 0 && len(f) == 0 && start > 0 {
			return
		}
		if !fn(f, col) {
			return
		}
		if j < 0 {
			return
		}
		start = end + 1
	}
}

func fieldStrings(line []byte, delim byte) []string {
	var out []string
	splitFields(line, delim, func(f []byte, _ int) bool {
		out = append(out, string(f))
		return true
	})
	return out
}

type sniffLine struct {
	text []byte
	no   int
}

// TextOptions are the settings a delimited file may lack.
type TextOptions struct {
	Interval_s float64 // the sample interval; replaces the file's own, with a warning when they differ
	// DefaultInterval_s is used when the file states no time base; its own wins.
	DefaultInterval_s float64
	TimeColumn        string // "auto" (default), "first" or "none"
	SizeHint          int64  // the file's size when known; only used to size buffers
}

// ReadText reads a delimited text capture. The head of the file (256 KiB, or further
// until data appear) decides the dialect and layout; the rows are then streamed.
func ReadText(r io.Reader, file string, opt TextOptions) (*waveform.Record, error) {
	br := bufio.NewReaderSize(r, MaxLineBytes+16)
	if bom, _ := br.Peek(3); bytes.Equal(bom, []byte{0xEF, 0xBB, 0xBF}) {
		br.Discard(3)
	}
	// The head's lines are copied into one arena: the head's size for a file of known
	// size, else a small one that append grows (lines already stored keep their
	// backing array), so that a short input costs no 320 KiB.
	arena := 16 << 10
	switch {
	case opt.SizeHint > 0 && opt.SizeHint < int64(sniffBytes):
		arena = int(opt.SizeHint) + 64
	case opt.SizeHint > 0:
		arena = sniffBytes + MaxLineBytes
	}
	h := headReader{br: br, file: file, arena: make([]byte, 0, arena)}
	lines, err := h.read(nil, sniffBytes)
	if err != nil {
		return nil, err
	}
	if len(lines) == 0 {
		return nil, fileErr(file, ErrEmpty, "")
	}
	var p *plan
	for {
		p, err = detect(lines, h.complete, file)
		if err != errNeedMore {
			break
		}
		if lines, err = h.more(lines); err != nil {
			return nil, err
		}
	}
	if err != nil {
		return nil, err
	}
	if h.dropped[0] > 0 && p.d.DataLine <= h.dropped[1] {
		// never: data are found at the end of the head that was kept, not before
		return nil, lineErr(file, h.dropped[0], 0, ErrUnsupported, "the data start in a part of a long head that was not kept")
	}
	if h.dropped[0] > 0 {
		p.notes = append(p.notes, fmt.Sprintf("lines %d-%d of a long head were searched for data only, not for settings", h.dropped[0], h.dropped[1]))
	}
	rr := newRowReader(p, file, opt.SizeHint, lines)
	for _, sl := range lines {
		if sl.no >= p.d.DataLine {
			if h.leaveOut(sl.no, sl.text, rr) {
				continue
			}
			if err := rr.add(sl.text, sl.no); err != nil && !h.cut(sl.no, err) {
				return nil, err
			}
		}
	}
	lineNo := h.no
	// The common row (all fields numbers, nothing pending) is taken here without a
	// call; everything else goes through rr.add.
	fast := p.keep == nil
	cols, row, width := rr.cols, rr.row, p.d.Fields
	delim, dec := p.d.Delim, p.d.DecimalSep
	for !h.complete {
		line, err := br.ReadSlice('\n')
		if err == bufio.ErrBufferFull {
			return nil, lineErr(file, lineNo+1, 0, ErrLineTooLong, fmt.Sprintf("more than %d bytes", MaxLineBytes))
		}
		if len(line) == 0 && err != nil {
			if err == io.EOF {
				break
			}
			return nil, fileErr(file, err, "")
		}
		lineNo++
		if len(line) > MaxLineBytes {
			return nil, lineErr(file, lineNo, 0, ErrLineTooLong, fmt.Sprintf("more than %d bytes", MaxLineBytes))
		}
		if err == io.EOF && line[len(line)-1] != '\n' {
			h.unended = lineNo
		}
		line = trimEOL(line)
		if h.leaveOut(lineNo, line, rr) {
			break
		}
		if fast && len(line) > 0 && startsNumber(line[0]) && rr.pend == 0 {
			if k, _, cause := scanRow(line, delim, dec, row); cause == nil && k == width {
				for c := range cols {
					cols[c] = append(cols[c], row[c])
				}
				rr.nfull++
				rr.lastFull, rr.lastLine = lineNo, lineNo
				if rr.nfull*width > MaxSamples {
					return nil, lineErr(file, lineNo, 0, ErrTooLarge, fmt.Sprintf("more than %d values", MaxSamples))
				}
				if err == io.EOF {
					break
				}
				continue
			}
		}
		if aerr := rr.add(line, lineNo); aerr != nil && !h.cut(lineNo, aerr) {
			return nil, aerr
		}
		if err == io.EOF {
			break
		}
	}
	rec, err := p.build(rr, opt, file)
	if err == nil && h.cutRow > 0 {
		// Writers end every line; a last row without its end is what a copy or a save
		// cut short leaves, and a number cut in half can still read as a number.
		rec.Warnings = append(rec.Warnings, fmt.Sprintf("line %d, the last, has no line end and is left out: a file cut short while it was written can end in a cut number", h.cutRow))
	}
	return rec, err
}

// binaryByte returns the offset of the first byte no text export contains, or -1.
func binaryByte(b []byte) int {
	for i, c := range b {
		if c == 0 || (c < 0x20 && c != '\n' && c != '\r' && c != '\t' && c != '\f') {
			return i
		}
	}
	return -1
}

// looksUniform reports whether x rises in steps equal to within 1 %: a time column.
func looksUniform(x []float64) bool {
	if len(x) < 3 {
		return false
	}
	for i := 1; i < len(x); i++ {
		if !(x[i] > x[i-1]) {
			return false
		}
	}
	_, j, _ := uniformity(x)
	return j <= 0.01
}

// uniformity returns the median step of t, the largest relative deviation of a step
// from it, and the index ending that step. A sample of steps keeps the median cheap.
func uniformity(t []float64) (median, jitter float64, worst int) {
	n := len(t)
	stride := 1
	if n > 4096 {
		stride = n / 4096
	}
	var steps []float64
	for i := 1; i < n; i += stride {
		steps = append(steps, t[i]-t[i-1])
	}
	sort.Float64s(steps)
	median = steps[len(steps)/2]
	worst = 1
	for i := 1; i < n; i++ {
		if d := math.Abs((t[i]-t[i-1])-median) / median; d > jitter {
			jitter, worst = d, i
		}
	}
	// Steps that only differ by rounding of the printed times are uniform.
	if jitter > 0 {
		span := t[n-1] - t[0]
		exact := span / float64(n-1)
		if math.Abs(exact-median)/median < 1e-6 && jitter < 1e-4 {
			return exact, 0, worst
		}
	}
	return median, jitter, worst
}

// resample interpolates y(t) linearly onto t[0] + i dt.
func resample(t, y []float64, dt float64) []float64 {
	n := int(math.Floor((t[len(t)-1]-t[0])/dt+1e-9)) + 1
	out := make([]float64, n)
	j := 0
	for i := range out {
		ti := t[0] + float64(i)*dt
		for j+1 < len(t)-1 && t[j+1] < ti {
			j++
		}
		if j+1 >= len(t) {
			out[i] = y[len(y)-1]
			continue
		}
		f := (ti - t[j]) / (t[j+1] - t[j])
		out[i] = y[j] + f*(y[j+1]-y[j])
	}
	return out
}

func startsNumber(c byte) bool {
	return (c >= '0' && c <= '9') || c == '-' || c == '+' || c == '.'
}

func isBlankByte(c byte) bool { return c == ' ' || c == '\t' }

// scanRow parses the numbers of one data row into dst (len(dst) is one more than the
// expected fields, to notice an extra one) in a single pass over its bytes. It returns
// the number of fields, and on failure the 0-based column of the bad field and why.
func scanRow(line []byte, delim, dec byte, dst []float64) (int, int, error) {
	n, i, k := len(line), 0, 0
	for {
		for i < n && isBlankByte(line[i]) {
			i++
		}
		if delim == ' ' && i == n {
			return k, 0, nil
		}
		start := i
		v, end, ok := fastPrefix(line, i, dec)
		j := end
		for j < n && isBlankByte(line[j]) && delim != ' ' {
			j++
		}
		term := j == n || (delim == ' ' && isBlankByte(line[j])) || line[j] == delim
		if !ok || !term || end == start {
			// The slow path: the whole field, through strconv.
			fe := start
			for fe < n && line[fe] != delim && !(delim == ' ' && isBlankByte(line[fe])) {
				fe++
			}
			f := bytes.TrimRight(line[start:fe], " \t")
			var good bool
			v, good = parseFloat(f, dec)
			if !good {
				if binaryByte(f) >= 0 {
					return k, start, ErrBinary
				}
				return k, start, ErrSyntax
			}
			j = fe
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return k, start, ErrNotFinite
		}
		if k < len(dst) {
			dst[k] = v
		}
		k++
		if k > len(dst) {
			return k, 0, nil
		}
		if j >= n {
			return k, 0, nil
		}
		i = j
		if delim != ' ' {
			i++ // past the delimiter
			if i == n {
				// a trailing delimiter ends the row
				return k, 0, nil
			}
		}
	}
}

// fieldAt returns the field starting at byte col, for messages.
func fieldAt(line []byte, col int, delim byte) []byte {
	if col >= len(line) {
		return nil
	}
	e := col
	for e < len(line) && line[e] != delim && !(delim == ' ' && isBlankByte(line[e])) {
		e++
	}
	return line[col:e]
}
