package readers

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

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

// numericFields returns the number of fields and whether all are numbers.
func numericFields(line []byte, d Dialect) (int, bool) {
	n, ok := 0, true
	splitFields(line, d.Delim, func(f []byte, _ int) bool {
		n++
		if _, good := parseFloat(f, d.DecimalSep); !good {
			ok = false
			return false
		}
		return true
	})
	return n, ok && n > 0
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

// sniff decides the dialect from the first lines of a file (BOM already removed).
func sniff(head []byte, complete bool, file string) (Dialect, []sniffLine, error) {
	var lines []sniffLine
	rest := head
	for no := 1; len(rest) > 0 && len(lines) < 2000; no++ {
		j := bytes.IndexByte(rest, '\n')
		if j < 0 {
			if !complete {
				if len(rest) > MaxLineBytes {
					return Dialect{}, nil, lineErr(file, no, 0, ErrLineTooLong, fmt.Sprintf("more than %d bytes", MaxLineBytes))
				}
				break // a partial last line of the sample
			}
			j = len(rest)
		}
		l := rest[:j]
		if len(l) > MaxLineBytes {
			return Dialect{}, nil, lineErr(file, no, 0, ErrLineTooLong, fmt.Sprintf("more than %d bytes", MaxLineBytes))
		}
		lines = append(lines, sniffLine{bytes.TrimSuffix(l, []byte{'\r'}), no})
		if j == len(rest) {
			break
		}
		rest = rest[j+1:]
	}
	if len(lines) == 0 {
		if len(head) > 0 {
			return Dialect{}, nil, lineErr(file, 1, 0, ErrLineTooLong, fmt.Sprintf("more than %d bytes", MaxLineBytes))
		}
		return Dialect{}, nil, fileErr(file, ErrEmpty, "")
	}
	best := Dialect{}
	bestRun, bestStart := 0, -1
	for _, d := range dialects {
		run, fields, start := 0, -1, -1
		for i := len(lines) - 1; i >= 0; i-- {
			l := lines[i].text
			if isBlank(l) || isComment(l) {
				continue
			}
			n, ok := numericFields(l, d)
			if !ok || (fields >= 0 && n != fields) {
				break
			}
			fields = n
			run++
			start = i
		}
		if run == 0 {
			continue
		}
		if run > bestRun || (run == bestRun && fields > best.Fields) {
			best, bestRun, bestStart = d, run, start
			best.Fields = fields
		}
	}
	if bestRun == 0 {
		// name the last line that should have been data
		for i := len(lines) - 1; i >= 0; i-- {
			if !isBlank(lines[i].text) && !isComment(lines[i].text) {
				return Dialect{}, nil, lineErr(file, lines[i].no, 1, ErrNoData, "no line of numbers found; last line is "+quote(lines[i].text))
			}
		}
		return Dialect{}, nil, fileErr(file, ErrNoData, "only blank or comment lines")
	}
	// Numeric lines of another width above the run are ragged data rows, not preamble:
	// take them in so the reader reports them where they are.
	counts := map[int]int{}
	for i := bestStart - 1; i >= 0; i-- {
		l := lines[i].text
		if isBlank(l) || isComment(l) {
			continue
		}
		n, ok := numericFields(l, best)
		if !ok {
			break
		}
		counts[n]++
		bestStart = i
	}
	for n, k := range counts {
		if k > bestRun {
			best.Fields, bestRun = n, k
		}
	}
	best.DataLine = lines[bestStart].no
	// A header row sits right above the data and has one cell per column; a lone cell
	// that reads "key: value" is preamble.
	h := bestStart - 1
	for h >= 0 && isComment(lines[h].text) {
		h--
	}
	if h >= 0 {
		l := lines[h].text
		cells := fieldStrings(l, best.Delim)
		lone := len(cells) == 1 && bytes.ContainsAny(l, ":=")
		if !isBlank(l) && !isComment(l) && len(cells) == best.Fields && !lone {
			best.HeaderLine = lines[h].no
		}
	}
	return best, lines, nil
}

// TextOptions are the settings a delimited file may lack.
type TextOptions struct {
	Interval_s float64 // used when there is no time column and no interval in the preamble
	TimeColumn string  // "auto" (default), "first" or "none"
	SizeHint   int64   // the file's size when known; only used to size buffers
}

// preamble keys, compared with case, blanks, underscores and dashes removed.
var (
	keyInterval = []string{"sampleinterval", "interval", "dt", "xincrement", "timestep", "samplingperiod", "sampleperiod", "horizontalinterval"}
	keyRate     = []string{"samplerate", "samplingrate", "fs", "samplingfrequency"}
	keyStart    = []string{"start", "starttime", "t0", "xorigin", "xstart", "firsttime"}
	keyUnit     = []string{"unit", "units", "yunit", "verticalunit", "verticalunits"}
	keyRange    = []string{"verticalrange", "fullscale", "yrange"}
	keyBits     = []string{"adcbits", "resolution", "bits", "verticalresolution"}
)

func normKey(k string) string {
	k = strings.ToLower(strings.TrimSpace(k))
	return strings.NewReplacer(" ", "", "_", "", "-", "", ".", "").Replace(k)
}

func hasKey(keys []string, k string) bool {
	for _, x := range keys {
		if x == k {
			return true
		}
	}
	return false
}

type preamble struct {
	meta     map[string]string
	interval float64
	start    float64
	hasStart bool
	unit     string
	factor   float64
	rangeV   float64
	bits     int
	warnings []string
}

func parsePreamble(lines []sniffLine, upto int, file string) (preamble, error) {
	p := preamble{meta: map[string]string{}, factor: 1}
	for _, sl := range lines {
		if sl.no >= upto {
			break
		}
		l := strings.TrimSpace(string(sl.text))
		l = strings.TrimLeft(l, "#%/ \t")
		if l == "" {
			continue
		}
		j := strings.IndexAny(l, ":=\t,;")
		if j <= 0 {
			continue
		}
		key := strings.TrimSpace(l[:j])
		val := strings.Trim(strings.TrimSpace(l[j+1:]), ",;\t \"")
		if val == "" {
			continue
		}
		p.meta[key] = val
		k := normKey(key)
		bad := func(err error) error {
			return lineErr(file, sl.no, j+2, ErrHeader, fmt.Sprintf("%s: %v", key, err))
		}
		switch {
		case hasKey(keyInterval, k):
			v, u, err := ParseQuantity(val)
			if err != nil {
				return p, bad(err)
			}
			if u == "S/s" {
				v = 1 / v
			} else if u != "s" && u != "" {
				return p, bad(fmt.Errorf("unit %q is not a time", u))
			}
			if !(v > 0) {
				return p, bad(fmt.Errorf("must be positive"))
			}
			p.interval = v
		case hasKey(keyRate, k):
			v, u, err := ParseQuantity(val)
			if err != nil {
				return p, bad(err)
			}
			if u == "Hz" || u == "S/s" || u == "" {
				if !(v > 0) {
					return p, bad(fmt.Errorf("must be positive"))
				}
				p.interval = 1 / v
			}
		case hasKey(keyStart, k):
			v, u, err := ParseQuantity(val)
			if err != nil {
				return p, bad(err)
			}
			if u != "s" && u != "" {
				return p, bad(fmt.Errorf("unit %q is not a time", u))
			}
			p.start, p.hasStart = v, true
		case hasKey(keyUnit, k):
			si, f, ok := ParseUnit(val)
			if !ok {
				p.warnings = append(p.warnings, fmt.Sprintf("line %d: unit %q not known; values kept as written", sl.no, val))
				continue
			}
			p.unit, p.factor = si, f
		case hasKey(keyRange, k):
			v, _, err := ParseQuantity(val)
			if err == nil && v > 0 {
				p.rangeV = v
			}
		case hasKey(keyBits, k):
			if n, err := strconv.Atoi(strings.Fields(val)[0]); err == nil && n > 0 && n <= 32 {
				p.bits = n
			}
		}
	}
	return p, nil
}

var timeNames = map[string]bool{"t": true, "time": true, "x": true, "s": true, "sec": true, "seconds": true, "zeit": true, "temps": true, "tiempo": true, "timestamp": true}

// ReadText reads a delimited text capture.
func ReadText(r io.Reader, file string, opt TextOptions) (*waveform.Record, error) {
	size, peek := sniffBytes+MaxLineBytes+16, sniffBytes
	if opt.SizeHint > 0 && opt.SizeHint < int64(sniffBytes) {
		// A small file: its size (plus slack) is enough to sniff it whole, and a line
		// may still be MaxLineBytes long should the file have grown since its size was
		// taken.
		peek = int(opt.SizeHint) + 64
		size = max(peek+16, MaxLineBytes+16)
	}
	br := bufio.NewReaderSize(r, size)
	if bom, _ := br.Peek(3); bytes.Equal(bom, []byte{0xEF, 0xBB, 0xBF}) {
		br.Discard(3)
	}
	head, err := br.Peek(peek)
	complete := err != nil // fewer bytes than asked: the whole file is in head
	if len(head) == 0 {
		return nil, fileErr(file, ErrEmpty, "")
	}
	if off := binaryByte(head); off >= 0 {
		return nil, byteErr(file, int64(off), ErrBinary, "give the raw description (a .hvraw sidecar or --raw flags) if this is a binary capture")
	}
	d, lines, err := sniff(head, complete, file)
	if err != nil {
		return nil, err
	}
	pre, err := parsePreamble(lines, func() int {
		if d.HeaderLine > 0 {
			return d.HeaderLine
		}
		return d.DataLine
	}(), file)
	if err != nil {
		return nil, err
	}
	var names, units []string
	if d.HeaderLine > 0 {
		for _, sl := range lines {
			if sl.no == d.HeaderLine {
				for _, c := range fieldStrings(sl.text, d.Delim) {
					n, u := SplitHeader(c)
					names = append(names, n)
					units = append(units, u)
				}
			}
		}
	}
	// Stream the data rows.
	cols := make([][]float64, d.Fields)
	if opt.SizeHint > 0 {
		// Size the columns from the file size and the sample's bytes per line, so a
		// large file is not copied over and over as the columns grow.
		var sum int
		for _, l := range lines {
			sum += len(l.text) + 1
		}
		per := float64(sum) / float64(len(lines))
		est := int(float64(opt.SizeHint)/per*1.02) + 16
		if est > MaxSamples {
			est = MaxSamples
		}
		for c := range cols {
			cols[c] = make([]float64, 0, est)
		}
	}
	row := make([]float64, d.Fields+1)
	var skips []int // row indices before which a blank or comment line was skipped
	lineNo := 0
	for {
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
		if lineNo < d.DataLine {
			continue
		}
		if len(line) > MaxLineBytes {
			return nil, lineErr(file, lineNo, 0, ErrLineTooLong, fmt.Sprintf("more than %d bytes", MaxLineBytes))
		}
		if n := len(line); n > 0 && line[n-1] == '\n' {
			line = line[:n-1]
		}
		if n := len(line); n > 0 && line[n-1] == '\r' {
			line = line[:n-1]
		}
		if len(line) == 0 || !startsNumber(line[0]) {
			if isBlank(line) || isComment(line) {
				skips = append(skips, len(cols[0]))
				continue
			}
		}
		k, col, cause := scanRow(line, d.Delim, d.DecimalSep, row)
		if cause != nil {
			f := fieldAt(line, col, d.Delim)
			return nil, lineErr(file, lineNo, col+1, cause, quote(f))
		}
		if k != d.Fields {
			return nil, lineErr(file, lineNo, 0, ErrRagged, fmt.Sprintf("%d fields, the data start at line %d with %d", k, d.DataLine, d.Fields))
		}
		for c := range cols {
			cols[c] = append(cols[c], row[c])
		}
		if len(cols[0])*d.Fields > MaxSamples {
			return nil, lineErr(file, lineNo, 0, ErrTooLarge, fmt.Sprintf("more than %d values", MaxSamples))
		}
		if err == io.EOF {
			break
		}
	}
	rows := len(cols[0])
	lineOf := func(row int) int {
		return d.DataLine + row + sort.SearchInts(skips, row+1)
	}
	// Time column.
	hasTime := false
	switch opt.TimeColumn {
	case "first":
		hasTime = true
	case "none":
	default:
		if d.Fields >= 2 {
			if names != nil {
				_, tf, ok := ParseUnit(units[0])
				hasTime = timeNames[strings.ToLower(names[0])] || (ok && units[0] != "" && isTimeUnit(units[0]) && tf > 0)
			} else {
				hasTime = looksUniform(cols[0])
			}
		}
	}
	rec := &waveform.Record{Source: file, Format: "text (" + d.String() + ")", Meta: pre.meta}
	rec.Warnings = append(rec.Warnings, pre.warnings...)
	first := 0
	if hasTime {
		first = 1
		tf := 1.0
		if names != nil && units[0] != "" {
			si, f, ok := ParseUnit(units[0])
			if !ok || si != "s" {
				return nil, lineErr(file, d.HeaderLine, 1, ErrHeader, fmt.Sprintf("time unit %q is not a unit of time", units[0]))
			}
			tf = f
		}
		t := cols[0]
		if tf != 1 {
			for i := range t {
				t[i] *= tf
			}
		}
		if rows < 2 {
			return nil, lineErr(file, d.DataLine, 1, ErrNoData, "one row cannot give a sample interval")
		}
		for i := 1; i < rows; i++ {
			if !(t[i] > t[i-1]) {
				return nil, lineErr(file, lineOf(i), 1, ErrNonMonotonic, fmt.Sprintf("%g s after %g s on line %d", t[i], t[i-1], lineOf(i-1)))
			}
		}
		interval, jitter, worst := uniformity(t)
		rec.Start_s, rec.Interval_s = t[0], interval
		switch {
		case jitter > 0.01:
			return nil, lineErr(file, lineOf(worst), 1, ErrNonUniform, fmt.Sprintf("step %.4g s against a median of %.4g s (%.2g %%, more than the 1 %% hvshot resamples)", t[worst]-t[worst-1], interval, 100*jitter))
		case jitter > 1e-4:
			for c := 1; c < d.Fields; c++ {
				cols[c] = resample(t, cols[c], interval)
			}
			rec.Warnings = append(rec.Warnings, fmt.Sprintf("time column not uniform (steps vary by up to %.2g %%): resampled onto %.6g s", 100*jitter, interval))
		}
	} else {
		switch {
		case pre.interval > 0:
			rec.Interval_s = pre.interval
		case opt.Interval_s > 0:
			rec.Interval_s = opt.Interval_s
		default:
			return nil, fileErr(file, ErrNoInterval, "the file has no time column and no sample interval in its preamble; give one with --interval")
		}
	}
	if pre.hasStart && !hasTime {
		rec.Start_s = pre.start
	}
	if d.Fields-first < 1 {
		return nil, lineErr(file, d.DataLine, 1, ErrNoData, "a time column and no channel")
	}
	for c := first; c < d.Fields; c++ {
		ch := waveform.Channel{Name: fmt.Sprintf("CH%d", c-first+1), Samples: cols[c], Unit: pre.unit}
		f := pre.factor
		if names != nil {
			if names[c] != "" {
				ch.Name = names[c]
			}
			if units[c] != "" {
				si, uf, ok := ParseUnit(units[c])
				if !ok {
					return nil, lineErr(file, d.HeaderLine, 0, ErrHeader, fmt.Sprintf("unit %q of column %q is not one hvshot knows", units[c], names[c]))
				}
				ch.Unit, f = si, uf
			}
		}
		if f != 1 {
			for i := range ch.Samples {
				ch.Samples[i] *= f
			}
		}
		if pre.rangeV > 0 {
			ch.HasRange, ch.RangeMin, ch.RangeMax = true, -pre.rangeV*f, pre.rangeV*f
		}
		ch.ADCBits = pre.bits
		rec.Channels = append(rec.Channels, ch)
	}
	if err := rec.Validate(); err != nil {
		return nil, fileErr(file, ErrNoData, err.Error())
	}
	return rec, nil
}

func isTimeUnit(u string) bool {
	si, _, ok := ParseUnit(u)
	return ok && si == "s"
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
