package readers

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// codesPerDiv is how many integer screen codes make one vertical division in the
// layout that writes codes under a preamble giving the vertical scale (25 per
// division, counted from the centre line, as issue 19 quotes that family's
// documentation).
const codesPerDiv = 25

// maxScreenCode bounds what is taken for a screen code: larger integers are values.
const maxScreenCode = 32767

func fmtS(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) + " s" }

// tquant is the printed resolution of a column, from the cells of the head: the
// significant digits of numbers in exponent form and the decimals of the others.
type tquant struct {
	sig, dec   int
	sci, fixed bool
}

func (q *tquant) add(f []byte, dec byte) {
	f = trimQuotes(f)
	if v, ok := parseFloat(f, dec); !ok || v == 0 {
		return // a zero says nothing: numpy and pandas print it "0.0"
	}
	if len(f) > 0 && (f[0] == '+' || f[0] == '-') {
		f = f[1:]
	}
	e := -1
	for i, c := range f {
		if c == 'e' || c == 'E' {
			e = i
			break
		}
	}
	mant := f
	if e >= 0 {
		mant = f[:e]
	}
	if e >= 0 {
		sig, lead := 0, true
		for _, c := range mant {
			if c >= '0' && c <= '9' {
				if c == '0' && lead {
					continue
				}
				lead = false
				sig++
			}
		}
		q.sci, q.sig = true, max(q.sig, sig)
		return
	}
	d := 0
	for i, c := range mant {
		if c == dec {
			d = len(mant) - i - 1
		}
	}
	q.fixed, q.dec = true, max(q.dec, d)
}

func trimQuotes(f []byte) []byte {
	if len(f) >= 2 && f[0] == '"' && f[len(f)-1] == '"' {
		return f[1 : len(f)-1]
	}
	return f
}

// at is the printing step of a value of magnitude m, in the column's own unit.
func (q tquant) at(m float64) float64 {
	r := 0.0
	if q.sci && q.sig > 0 && m > 0 {
		r = math.Pow(10, math.Floor(math.Log10(m))-float64(q.sig)+1)
	}
	if q.fixed {
		r = math.Max(r, math.Pow(10, -float64(q.dec)))
	}
	return r
}

func (p *plan) timeQuantum(lines []sniffLine, start, field int) {
	for _, sl := range lines[start:] {
		k := 0
		splitFields(sl.text, p.d.Delim, func(f []byte, _ int) bool {
			if k == field {
				p.quantum.add(f, p.d.DecimalSep)
				return false
			}
			k++
			return true
		})
	}
}

// sideSettings reads the settings columns of the side layout.
func (p *plan) sideSettings(lines []sniffLine, start int, file string) error {
	p.blockPre = make([]preamble, p.blocks)
	above, err := parsePreamble(lines, p.d.DataLine, file)
	if err != nil {
		return err
	}
	for b := range p.blockPre {
		p.blockPre[b] = newPreamble()
		p.keep = append(p.keep, sideBlock*b+3, sideBlock*b+4)
	}
	last := 0
	for _, sl := range lines[start:] {
		c := fieldStrings(sl.text, p.d.Delim)
		for b := 0; b < p.blocks && sideBlock*b+1 < len(c); b++ {
			k, v := c[sideBlock*b], c[sideBlock*b+1]
			if k == "" || v == "" {
				continue
			}
			last = sl.no
			if err := p.blockPre[b].apply(kv{k, v, sl.no, 1}, file); err != nil {
				return err
			}
		}
	}
	for b := range p.blockPre {
		p.blockPre[b].finish()
	}
	p.pre = p.blockPre[0]
	for k, v := range above.meta {
		p.pre.meta[k] = v
	}
	p.pre.warnings = append(p.pre.warnings, above.warnings...)
	for b := 1; b < p.blocks; b++ {
		for k, v := range p.blockPre[b].meta {
			p.pre.meta[fmt.Sprintf("block %d: %s", b+1, k)] = v
		}
		p.pre.warnings = append(p.pre.warnings, p.blockPre[b].warnings...)
	}
	p.layout = fmt.Sprintf("settings beside the data: name and value columns left of time and value, %d channel block(s)", p.blocks)
	p.notes = append(p.notes, fmt.Sprintf("lines %d-%d: settings beside the data gave interval, channel names and units", p.d.DataLine, last))
	p.timeQuantum(lines, start, 3)
	return nil
}

// build turns the rows into a record: the time base from a time column, a sample
// index or the settings, checked against each other; names and units; screen codes
// scaled to volts.
func (p *plan) build(rr *rowReader, opt TextOptions, file string) (*waveform.Record, error) {
	d := p.d
	cols := rr.cols
	rows := len(cols[0])
	lineOf := func(row int) int { return d.DataLine + row + rr.skips.before(row) }
	rec := &waveform.Record{Source: file, Format: "text (" + d.String() + ")", Meta: p.pre.meta, Trigger: p.pre.trigger}
	rec.Warnings = append(rec.Warnings, p.pre.warnings...)
	if p.emptyWarn != "" {
		rec.Warnings = append(rec.Warnings, p.emptyWarn)
	}
	rec.Notes = append(rec.Notes, p.notes...)
	if rows == 0 {
		return nil, lineErr(file, d.DataLine, 1, ErrNoData, "every row has empty value cells")
	}
	if rr.lead > 0 {
		rec.Notes = append(rec.Notes, fmt.Sprintf("dropped %d row(s) with empty value cells at the start (lines %d-%d)", rr.lead, rr.leadFrom, rr.leadTo))
	}
	if rr.pend > 0 {
		rec.Notes = append(rec.Notes, fmt.Sprintf("dropped %d row(s) with empty value cells at the end (lines %d-%d)", rr.pend, rr.pendLine, rr.pendTo))
	}
	if n := p.pre.length; n > 0 {
		switch total := rows + rr.lead + rr.pend; {
		case total < n:
			return nil, lineErr(file, rr.lastLine, 0, ErrTruncated, fmt.Sprintf("line %d states %d points; the file ends after %d rows", p.pre.lengthLine, n, total))
		case total > n:
			rec.Warnings = append(rec.Warnings, fmt.Sprintf("line %d states %d points; the file holds %d rows", p.pre.lengthLine, n, total))
		}
	}
	nc := len(cols)
	name := func(c int) string {
		if p.names == nil {
			return ""
		}
		return p.names[c]
	}
	unitText := func(c int) string {
		if p.units == nil {
			return ""
		}
		return p.units[c]
	}
	headerLine := p.unitLine
	if headerLine == 0 {
		headerLine = p.nameLine
	}

	// Roles of the columns.
	tc, ic := -1, -1
	var values []int
	if p.kind == layoutSide {
		tc = 0
		for b := 1; b < p.blocks; b++ {
			if i, ok := sameTimes(cols[0], cols[2*b], p.quantum.at(endsAbs(cols[0]))); !ok {
				return nil, lineErr(file, lineOf(i), 0, ErrTimeBase, fmt.Sprintf("the time of block %d (%g) differs from block 1 (%g): the channels are not on one time base", b+1, cols[2*b][i], cols[0][i]))
			}
		}
		for b := 0; b < p.blocks; b++ {
			values = append(values, 2*b+1)
		}
	} else {
		switch opt.TimeColumn {
		case "first":
			tc = 0
		case "none":
		default:
			c0 := 0
			if nc >= 2 && p.isIndex(cols, 0) {
				ic, c0 = 0, 1
			}
			if nc-c0 >= 2 && p.isTime(cols, c0) {
				tc = c0
			}
		}
		if p.units != nil && tc < 0 && ic < 0 && opt.TimeColumn != "none" {
			if si, _, _ := headerUnit(unitText(0)); si == unitIndex {
				return nil, lineErr(file, headerLine, 1, ErrHeader, fmt.Sprintf("column 1 (%q) should count samples but does not rise by 1 from row to row", name(0)))
			}
		}
		for c := 0; c < nc; c++ {
			if c != tc && c != ic {
				values = append(values, c)
			}
		}
	}
	if len(values) == 0 {
		return nil, lineErr(file, d.DataLine, 1, ErrNoData, "a time column and no channel")
	}

	// The time base.
	switch {
	case tc >= 0:
		tf := 1.0
		if u := unitText(tc); u != "" {
			si, f, ok := headerUnit(u)
			switch {
			case ok && si == unitIndex:
				return nil, lineErr(file, headerLine, p.field(tc)+1, ErrHeader, fmt.Sprintf("column %d (%q, %q) counts samples, it is not a time; read it without --time-column first", p.field(tc)+1, name(tc), u))
			case !ok || si != "s":
				return nil, lineErr(file, headerLine, p.field(tc)+1, ErrHeader, fmt.Sprintf("time unit %q is not a unit of time", u))
			}
			tf = f
			if p.pre.timeFactor > 0 && p.pre.timeFactor != f {
				return nil, lineErr(file, headerLine, p.field(tc)+1, ErrTimeBase, fmt.Sprintf("the header gives the time in %q, line %d in another unit", u, p.pre.timeUnitLine))
			}
		} else if p.pre.timeFactor > 0 {
			tf = p.pre.timeFactor
		}
		t := cols[tc]
		q := p.quantum.at(endsAbs(t)) * tf
		if tf != 1 {
			for i := range t {
				t[i] *= tf
			}
		}
		tb, err := timeBase(t, q, &p.pre, opt.Interval_s, lineOf, file, p.field(tc)+1)
		if err != nil {
			return nil, err
		}
		rec.Start_s, rec.Interval_s = tb.start, tb.dt
		rec.Notes = append(rec.Notes, tb.notes...)
		rec.Warnings = append(rec.Warnings, tb.warns...)
		if tb.resample {
			for _, c := range values {
				cols[c] = resample(t, cols[c], tb.dt)
			}
		}
		if ic >= 0 {
			rec.Notes = append(rec.Notes, fmt.Sprintf("column %d (%q: %g, %g, ...) counts rows: dropped", p.field(ic)+1, name(ic), cols[ic][0], cols[ic][min(1, rows-1)]))
		}
	default:
		dt, warn, note, err := p.interval(opt, rr, ic >= 0, file)
		if err != nil {
			return nil, err
		}
		rec.Interval_s = dt
		if warn != "" {
			rec.Warnings = append(rec.Warnings, warn)
		}
		if note != "" {
			rec.Notes = append(rec.Notes, note)
		}
		switch {
		case ic >= 0:
			rec.Start_s = p.pre.start + cols[ic][0]*dt
			rec.Notes = append(rec.Notes, fmt.Sprintf("column %d (%q) counts samples from %g: time = start + index x interval", p.field(ic)+1, name(ic), cols[ic][0]))
		case !p.pre.hasStart && p.pre.trigPoint > 0:
			rec.Start_s = (float64(rr.lead) - p.pre.trigPoint) * dt
			rec.Notes = append(rec.Notes, fmt.Sprintf("start from line %d: the trigger at sample %g, so the record starts %g s before it", p.pre.trigLine, p.pre.trigPoint, p.pre.trigPoint*dt))
		default:
			rec.Start_s = p.pre.start + float64(rr.lead)*dt
		}
	}

	// Channels.
	codes := p.kind == layoutColumns && tc < 0 && ic < 0 && len(values) == 1 && p.pre.scale > 0 && unitText(values[0]) == "" && screenCodes(cols[values[0]])
	for k, c := range values {
		ch := waveform.Channel{Name: fmt.Sprintf("CH%d", k+1), Samples: cols[c], Unit: p.pre.unit}
		f := p.pre.factor
		if p.kind == layoutSide {
			bp := p.blockPre[k]
			ch.Unit, f = bp.unit, bp.factor
			if bp.source != "" {
				ch.Name = bp.source
			}
		} else if n := name(c); n != "" {
			ch.Name = n
		} else if p.pre.source != "" && len(values) == 1 {
			ch.Name = p.pre.source
			rec.Notes = append(rec.Notes, fmt.Sprintf("line %d named the channel", p.pre.sourceLine))
		}
		if u := unitText(c); u != "" {
			si, uf, ok := headerUnit(u)
			if !ok || si == unitIndex {
				return nil, lineErr(file, headerLine, p.field(c)+1, ErrHeader, fmt.Sprintf("unit %q of column %q is not one hvshot knows", u, name(c)))
			}
			if p.pre.unitLine > 0 && (si != p.pre.unit || uf != p.pre.factor) {
				return nil, lineErr(file, headerLine, p.field(c)+1, ErrHeader, fmt.Sprintf("column %q is in %q, line %d says %q", name(c), u, p.pre.unitLine, p.pre.unitText))
			}
			ch.Unit, f = si, uf
		}
		if codes {
			g := p.pre.scale / codesPerDiv
			for i, v := range ch.Samples {
				ch.Samples[i] = (v*g - p.pre.offset) * f
			}
			note := fmt.Sprintf("integer screen codes, %d per division from the centre line: scaled by %g per division (line %d)", codesPerDiv, p.pre.scale, p.pre.scaleLine)
			if p.pre.offsetLine > 0 {
				note += fmt.Sprintf(", less the offset %g (line %d)", p.pre.offset, p.pre.offsetLine)
			}
			if p.pre.probeLine > 0 {
				note += fmt.Sprintf("; the probe factor %g (line %d) is taken as already in the vertical scale", p.pre.probe, p.pre.probeLine)
			}
			rec.Notes = append(rec.Notes, note)
			if ch.Unit == "" {
				ch.Unit = "V"
			}
			f = 1
		}
		if f != 1 {
			for i := range ch.Samples {
				ch.Samples[i] *= f
			}
		}
		if p.pre.rangeV > 0 {
			ch.HasRange, ch.RangeMin, ch.RangeMax = true, -p.pre.rangeV*f, p.pre.rangeV*f
		}
		ch.ADCBits = p.pre.bits
		rec.Channels = append(rec.Channels, ch)
	}
	rec.Layout = p.describe(tc, ic, codes)
	if err := rec.Validate(); err != nil {
		return nil, fileErr(file, ErrNoData, err.Error())
	}
	return rec, nil
}

// endsAbs is the larger magnitude of a time column's ends: the largest time it holds,
// the column rising.
func endsAbs(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	return math.Max(math.Abs(x[0]), math.Abs(x[len(x)-1]))
}

// sameTimes reports whether two time columns agree to their printed resolution q,
// and otherwise the first row where they do not.
func sameTimes(a, b []float64, q float64) (int, bool) {
	for i := range a {
		if math.Abs(a[i]-b[i]) > q*1.000001+4e-16*math.Abs(a[i]) {
			return i, false
		}
	}
	return 0, true
}

// screenCodes reports whether every value is an integer a screen can hold.
func screenCodes(x []float64) bool {
	for _, v := range x {
		if v != math.Trunc(v) || math.Abs(v) > maxScreenCode {
			return false
		}
	}
	return true
}

// isIndex reports whether column c counts rows: consecutive integers, named as an
// index ("", "index", "X" over a "Sequence" unit, ...), or with no header at all
// counting from 0 or 1. Scope captures are never sampled at one second, so such a
// column is not read as a time.
func (p *plan) isIndex(cols [][]float64, c int) bool {
	x := cols[c]
	if len(x) < 2 || x[0] != math.Trunc(x[0]) {
		return false
	}
	for i, v := range x {
		if v != x[0]+float64(i) {
			return false
		}
	}
	if p.names == nil {
		return x[0] == 0 || x[0] == 1
	}
	si, _, _ := headerUnit(p.units[c])
	n := strings.ToLower(p.names[c])
	return indexNames[n] && si == "" || si == unitIndex || (n == "x" && si == "")
}

// isTime reports whether column c holds times: by its name or unit, or with no
// header when it rises in even steps.
func (p *plan) isTime(cols [][]float64, c int) bool {
	if p.names != nil {
		si, f, ok := headerUnit(p.units[c])
		if si == unitIndex {
			return false
		}
		return timeNames[strings.ToLower(p.names[c])] || (ok && si == "s" && f > 0)
	}
	return looksUniform(cols[c])
}

// interval is the sample interval of a file without a time column: --interval over
// the file's own, with a warning when they differ.
func (p *plan) interval(opt TextOptions, rr *rowReader, index bool, file string) (dt float64, warn, note string, err error) {
	pi := p.pre.interval
	switch {
	case opt.Interval_s > 0:
		if pi > 0 && math.Abs(pi-opt.Interval_s) > 1e-9*pi {
			return opt.Interval_s, fmt.Sprintf("--interval %s replaces the interval of %s that line %d states", fmtS(opt.Interval_s), fmtS(pi), p.pre.intervalLine), "", nil
		}
		return opt.Interval_s, "", "", nil
	case pi > 0:
		return pi, "", fmt.Sprintf("interval %s from line %d", fmtS(pi), p.pre.intervalLine), nil
	case opt.DefaultInterval_s > 0:
		return opt.DefaultInterval_s, "", fmt.Sprintf("the file states no sample interval: the default of %s applies", fmtS(opt.DefaultInterval_s)), nil
	}
	var b strings.Builder
	if index {
		fmt.Fprintf(&b, "column 1 (%q) counts samples and the file states no interval", p.nameOr(0))
	} else {
		b.WriteString("no time column and no sample interval in the file")
	}
	for i, h := range p.headerLines {
		fmt.Fprintf(&b, "; header line %d %s", p.headerNos[i], quote([]byte(h)))
	}
	fmt.Fprintf(&b, "; first data line %d %s; give the interval with --interval", p.d.DataLine, quote([]byte(p.firstData)))
	if !index && len(rr.cols) >= 2 && looksUniform(rr.cols[0]) {
		fmt.Fprintf(&b, ", or, if column 1 holds the time in seconds, --time-column first")
	}
	return 0, "", "", fileErr(file, ErrNoInterval, b.String())
}

func (p *plan) nameOr(c int) string {
	if p.names == nil {
		return fmt.Sprintf("column %d", c+1)
	}
	return p.names[c]
}

// describe says in words which layout was read.
func (p *plan) describe(tc, ic int, codes bool) string {
	if p.kind == layoutSide {
		return p.layout
	}
	var parts []string
	switch {
	case p.nameLine > 0 && p.unitLine > 0:
		parts = append(parts, "a row of names over a row of units over columns of numbers")
	case p.unitLine > 0:
		parts = append(parts, "a row of units over columns of numbers")
	case p.nameLine > 0:
		parts = append(parts, "a row of names over columns of numbers")
	default:
		parts = append(parts, "columns of numbers without a header")
	}
	if len(p.extras) > 0 {
		parts = append(parts, "settings in cells right of the header rows")
	}
	if len(p.pre.meta) > len(p.extras) {
		parts = append(parts, "a preamble of settings above")
	}
	switch {
	case ic >= 0 && tc >= 0:
		parts = append(parts, "a row-number column before the time column")
	case ic >= 0:
		parts = append(parts, "a sample-index column")
	case tc >= 0:
		parts = append(parts, "a time column")
	}
	if codes {
		parts = append(parts, "integer screen codes scaled by the preamble's vertical scale")
	}
	return strings.Join(parts, "; ")
}

type timeBaseResult struct {
	dt, start    float64
	resample     bool
	notes, warns []string
}

// timeBase decides the sample interval and start from a time column t (in s) whose
// cells were printed to a resolution of about q s. In order: --interval when given
// (with a warning when the column disagrees); the interval the file states when the
// column agrees with it to the printed resolution, an error naming both when it
// clearly does not; the span over the samples when the steps vary only within the
// printed resolution; an error for times written twice; then the jitter rules.
func timeBase(t []float64, q float64, pre *preamble, user float64, lineOf func(int) int, file string, col int) (timeBaseResult, error) {
	n := len(t)
	if n < 2 {
		return timeBaseResult{}, lineErr(file, lineOf(0), col, ErrNoData, "one row cannot give a sample interval")
	}
	dtLine := (t[n-1] - t[0]) / float64(n-1)
	first, last := lineOf(0), lineOf(n-1)
	if user > 0 {
		r := timeBaseResult{dt: user, start: t[0]}
		if !(math.Abs(dtLine-user) <= 1e-6*user) {
			r.warns = append(r.warns, fmt.Sprintf("--interval %s replaces the step of %s of the time column (column %d, lines %d-%d)", fmtS(user), fmtS(dtLine), col, first, last))
		}
		return r, nil
	}
	eps := 4e-16 * endsAbs(t)
	worstOff := func(dt float64) float64 {
		w, t0 := 0.0, t[0]
		for i, v := range t {
			if d := math.Abs(v - (t0 + float64(i)*dt)); d > w {
				w = d
			}
		}
		return w
	}
	if P := pre.interval; P > 0 {
		if w := worstOff(P); w <= math.Max(q, eps)*1.000001+1e-9*P {
			return timeBaseResult{dt: P, start: t[0], notes: []string{fmt.Sprintf("interval %s from line %d; the time column agrees", fmtS(P), pre.intervalLine)}}, nil
		}
		if !(math.Abs(dtLine-P) <= 1e-3*P) {
			return timeBaseResult{}, lineErr(file, pre.intervalLine, 0, ErrTimeBase, fmt.Sprintf("line %d states %q (%s) but the time column (column %d, lines %d-%d) steps by %s; if you know which is right, give it with --interval", pre.intervalLine, pre.intervalText, fmtS(P), col, first, last, fmtS(dtLine)))
		}
	}
	if dtLine > 0 && q > 0 && q <= 0.1*dtLine {
		if w := worstOff(dtLine); w <= q*1.000001+eps {
			r := timeBaseResult{dt: dtLine, start: t[0]}
			if w > 1e-4*dtLine {
				r.notes = append(r.notes, fmt.Sprintf("the time column is printed to about %s: its steps vary by up to %s within that, so the interval is its span over the samples, %s", fmtS(q), fmtS(w), fmtS(dtLine)))
			}
			return r, nil
		}
	}
	if n >= 4 && n%2 == 0 {
		twice := true
		for i := 0; i+1 < n && twice; i += 2 {
			twice = t[i] == t[i+1] && (i+2 >= n || t[i+2] > t[i+1])
		}
		if twice {
			return timeBaseResult{}, lineErr(file, lineOf(1), col, ErrUnsupported, fmt.Sprintf("every time is written twice (lines %d and %d at %g s): two acquisitions interleaved row by row; hvshot reads one acquisition per file, so write them to two files", lineOf(0), lineOf(1), t[0]))
		}
	}
	for i := 1; i < n; i++ {
		if !(t[i] > t[i-1]) {
			return timeBaseResult{}, lineErr(file, lineOf(i), col, ErrNonMonotonic, fmt.Sprintf("%g s after %g s on line %d", t[i], t[i-1], lineOf(i-1)))
		}
	}
	interval, jitter, worst := uniformity(t)
	r := timeBaseResult{dt: interval, start: t[0]}
	switch {
	case jitter > 0.01:
		return r, lineErr(file, lineOf(worst), col, ErrNonUniform, fmt.Sprintf("step %.4g s against a median of %.4g s (%.2g %%, more than the 1 %% hvshot resamples)", t[worst]-t[worst-1], interval, 100*jitter))
	case jitter > 1e-4:
		r.resample = true
		r.warns = append(r.warns, fmt.Sprintf("time column not uniform (steps vary by up to %.2g %%): resampled onto %.6g s", 100*jitter, interval))
	}
	return r, nil
}
