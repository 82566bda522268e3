package readers

import (
	"bytes"
	"fmt"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// The sniffing phase: everything about a text file's layout is decided here, from the
// lines at its head, so that the data loop stays a plain scan of numbers.

type layoutKind int

const (
	// layoutColumns: columns of numbers, with header rows, a preamble or neither.
	layoutColumns layoutKind = iota
	// layoutSide: settings in name and value columns beside the data on every row,
	// then time and value; a further channel as another such block after an empty
	// column.
	layoutSide
)

// sideBlock is the width of one channel block of the side layout: name, value, an
// empty cell, time, value, and the empty cell that separates blocks.
const sideBlock = 6

// plan is what the sniffing phase decided.
type plan struct {
	d    Dialect
	kind layoutKind
	// keep lists the fields read, in order; nil reads all d.Fields on the fast path.
	keep []int
	// strict: a field outside keep must be empty (an empty column), not text.
	strict bool
	// empty lists the columns empty on every row of the head; emptyWarn names those
	// the header names, for the record's warnings.
	empty     []int
	emptyWarn string
	all       []int // 0..d.Fields-1, to classify a row the fast path refused
	blocks    int   // side layout: channel blocks

	names, units []string // per kept column; nil without a header
	nameLine     int
	unitLine     int
	headerLines  []string // as written, for messages
	headerNos    []int    // their line numbers
	extras       []kv     // settings in cells right of the columns on the header rows
	pre          preamble
	blockPre     []preamble // side layout: the settings beside each block
	quantum      tquant     // printed resolution of the first kept column
	firstData    string
	notes        []string
	layout       string
}

// errNeedMore says the head holds no data yet; the caller reads further.
var errNeedMore = fmt.Errorf("no data in the head")

type shapeInfo struct {
	i, n       int
	full, ends bool
}

// classify looks at one line under a dialect: its fields, whether all are numbers or
// empty (ok), all numbers (full), all empty, and whether it ends with the delimiter.
func classify(l []byte, d Dialect) (n int, ok, full, allEmpty, ends bool) {
	ok, full, allEmpty = true, true, true
	splitFields(l, d.Delim, func(f []byte, _ int) bool {
		n++
		if len(f) == 0 {
			full = false
			return true
		}
		allEmpty = false
		if _, good := parseFloat(f, d.DecimalSep); !good {
			ok = false
			return false
		}
		return true
	})
	t := bytes.TrimRight(l, " \t")
	ends = d.Delim != ' ' && len(t) > 0 && t[len(t)-1] == d.Delim
	return
}

// dataRun finds the longest block of data lines under d: lines of numbers and empty
// cells between lines with text. A block's width is the commonest count of fields
// among its rows without an empty cell; rows with fewer fields that end in the
// delimiter are rows with empty cells at the end. Rows of numbers of another width
// are kept in the block so that the reader reports them where they are.
func dataRun(lines []sniffLine, d Dialect, buf []shapeInfo) (start, end, run, width int) {
	start = -1
	cur := buf[:0]
	finish := func() {
		s, r, w := blockRun(cur)
		if r > run || (r == run && w > width) {
			start, run, width = s, r, w
			end = cur[len(cur)-1].i
		}
		cur = cur[:0]
	}
	for i, sl := range lines {
		l := sl.text
		if isBlank(l) || isComment(l) {
			continue
		}
		n, ok, full, empty, ends := classify(l, d)
		if !ok {
			if len(cur) > 0 {
				finish()
			}
			continue
		}
		if empty {
			continue
		}
		cur = append(cur, shapeInfo{i, n, full, ends})
	}
	if len(cur) > 0 {
		finish()
	}
	return start, end, run, width
}

// blockRun measures one block of data lines, walking up from its last line.
func blockRun(got []shapeInfo) (start, run, width int) {
	counts := map[int]int{}
	for _, g := range got {
		if g.full {
			counts[g.n]++
		}
	}
	if len(counts) == 0 {
		// No row without an empty cell: an empty column runs through the data.
		for _, g := range got {
			counts[g.n]++
		}
	}
	for n, k := range counts {
		if k > counts[width] || (k == counts[width] && n > width) {
			width = n
		}
	}
	if width == 0 {
		return -1, 0, 0
	}
	start = -1
	for k := len(got) - 1; k >= 0; k-- {
		g := got[k]
		switch {
		case g.n == width || (g.n < width && g.ends):
			run++
		case g.full:
		default:
			return start, run, width
		}
		start = g.i
	}
	return start, run, width
}

func isNum(c string, d Dialect) bool {
	_, ok := parseFloat([]byte(c), d.DecimalSep)
	return ok
}

// sideBlocks counts the channel blocks of a side-layout row, 0 when it is none.
func sideBlocks(c [][]byte, d Dialect) int {
	num := func(f []byte) bool { _, ok := parseFloat(f, d.DecimalSep); return ok }
	b := 0
	for ; sideBlock*b+4 < len(c); b++ {
		o := sideBlock * b
		if len(c[o+2]) != 0 || !num(c[o+3]) || !(len(c[o+4]) == 0 || num(c[o+4])) {
			break
		}
		if o+5 < len(c) && len(c[o+5]) != 0 {
			break
		}
	}
	if b == 0 || len(c) != sideBlock*b-1 {
		return 0
	}
	return b
}

// appendFields appends the fields of line to dst, without copying.
func appendFields(dst [][]byte, line []byte, delim byte) [][]byte {
	splitFields(line, delim, func(f []byte, _ int) bool {
		dst = append(dst, f)
		return true
	})
	return dst
}

// sideRun finds the longest block of side-layout rows under d.
func sideRun(lines []sniffLine, d Dialect) (start, run, blocks int, settings bool) {
	start = -1
	if d.Delim == ' ' {
		return
	}
	cs, cr, cb, cset := -1, 0, 0, false
	var c [][]byte
	for i, sl := range lines {
		l := sl.text
		if isBlank(l) || isComment(l) {
			continue
		}
		// The third field of a side row is empty: most lines fail on that cheaply.
		c = appendFields(c[:0], l, d.Delim)
		b := 0
		if len(c) >= 5 && len(c[2]) == 0 {
			b = sideBlocks(c, d)
		}
		if b == 0 || (cb != 0 && b != cb) {
			cs, cr, cb, cset = -1, 0, 0, false
			if b == 0 {
				continue
			}
		}
		if cs < 0 {
			cs = i
		}
		cb = b
		cset = cset || len(c[0]) != 0
		cr++
		if cset && cr > run {
			start, run, blocks, settings = cs, cr, cb, cset
		}
	}
	return
}

// detect decides the dialect and layout from the lines at the head of a file.
func detect(lines []sniffLine, complete bool, file string) (*plan, error) {
	if len(lines) == 0 {
		return nil, fileErr(file, ErrEmpty, "")
	}
	best := Dialect{}
	bestRun, bestStart, bestEnd := 0, -1, -1
	// A semicolon or tab dialect when the head holds no such byte reads every line as
	// one field, as the comma dialect then does where it has no comma: skip it.
	var seen [256]bool
	for _, sl := range lines {
		for _, c := range sl.text {
			seen[c] = true
		}
	}
	absent := func(d Dialect) bool { return (d.Delim == ';' || d.Delim == '\t') && !seen[d.Delim] }
	shapes := make([]shapeInfo, 0, len(lines))
	for _, d := range dialects {
		if absent(d) {
			continue
		}
		start, end, run, width := dataRun(lines, d, shapes)
		if run == 0 {
			continue
		}
		if run > bestRun || (run == bestRun && width > best.Fields) {
			best, bestRun, bestStart, bestEnd = d, run, start, end
			best.Fields = width
		}
	}
	p := &plan{}
	for _, d := range dialects {
		if absent(d) || (d.Delim == ',' && !seen[',']) {
			continue
		}
		start, run, blocks, settings := sideRun(lines, d)
		if settings && run > bestRun {
			p.kind, p.blocks = layoutSide, blocks
			best, bestRun, bestStart, bestEnd = d, run, start, len(lines)-1
			best.Fields = sideBlock*blocks - 1
		}
	}
	if !complete {
		// Too few rows for a record, with text after them: a table inside a
		// preamble, not the data. Read on.
		last := len(lines) - 1
		for last > 0 && (isBlank(lines[last].text) || isComment(lines[last].text)) {
			last--
		}
		if bestRun == 0 || (bestRun < waveform.MinSamples && bestEnd < last) {
			return nil, errNeedMore
		}
	}
	if bestRun == 0 {
		// name the last line that should have been data
		for i := len(lines) - 1; i >= 0; i-- {
			if !isBlank(lines[i].text) && !isComment(lines[i].text) {
				return nil, lineErr(file, lines[i].no, 1, ErrNoData, "no line of numbers in the file; its last line is "+quote(lines[i].text))
			}
		}
		return nil, fileErr(file, ErrNoData, "only blank or comment lines")
	}
	if err := badRowAbove(lines, bestStart, best, file); err != nil {
		return nil, err
	}
	best.DataLine = lines[bestStart].no
	p.d = best
	p.firstData = string(lines[bestStart].text)
	p.all = make([]int, best.Fields)
	for i := range p.all {
		p.all[i] = i
	}
	if p.kind == layoutSide {
		return p, p.sideSettings(lines, bestStart, file)
	}
	p.emptyColumns(lines, bestStart)
	if err := p.findHeader(lines, bestStart, file); err != nil {
		return nil, err
	}
	if err := p.emptyNamed(file); err != nil {
		return nil, err
	}
	upto := p.d.DataLine
	if p.d.HeaderLine > 0 {
		upto = p.d.HeaderLine
	}
	var err error
	if p.pre, err = parsePreamble(lines, upto, file); err != nil {
		return nil, err
	}
	for _, e := range p.extras {
		if err := p.pre.apply(e, file); err != nil {
			return nil, err
		}
	}
	if len(p.extras) > 0 {
		var k []string
		for _, e := range p.extras {
			k = append(k, e.key)
		}
		p.notes = append(p.notes, fmt.Sprintf("line %d gave %s beside the units", p.unitLine, strings.Join(k, " and ")))
	}
	p.timeQuantum(lines, bestStart, p.field(0))
	return p, nil
}

// badRowAbove reports a row of the data's width with a cell that is not a number,
// right above the data block and itself below rows of numbers of that width: a bad
// cell inside the data (an "overload" written by an instrument, a hand edit), not the
// end of a preamble. Without this, the rows above it would be taken for preamble and
// the record silently cut.
func badRowAbove(lines []sniffLine, start int, d Dialect, file string) error {
	above := func(i int) int {
		for i--; i >= 0 && (isBlank(lines[i].text) || isComment(lines[i].text)); i-- {
		}
		return i
	}
	b := above(start)
	if b < 0 {
		return nil
	}
	a := above(b)
	if a < 0 {
		return nil
	}
	if n, ok, full, _, _ := classify(lines[a].text, d); !ok || !full || n != d.Fields {
		return nil
	}
	nums, col := 0, -1
	var bad []byte
	n := 0
	splitFields(lines[b].text, d.Delim, func(f []byte, c int) bool {
		n++
		if _, good := parseFloat(f, d.DecimalSep); good {
			nums++
		} else if col < 0 {
			col, bad = c, f
		}
		return true
	})
	if n != d.Fields || col < 0 {
		return nil
	}
	if nums == 0 {
		// A row of words: a header repeated inside the data (two files joined) when a
		// record's worth of data rows stands above it; a preamble's small table does not.
		rows := 0
		for i := a; i >= 0 && rows < 16; i = above(i) {
			if k, ok, full, _, _ := classify(lines[i].text, d); !ok || !full || k != d.Fields {
				break
			}
			rows++
		}
		if rows < 16 {
			return nil
		}
		return lineErr(file, lines[b].no, col+1, ErrSyntax, quote(lines[b].text)+": a row of words among the data (a header repeated, or two files joined?)")
	}
	return lineErr(file, lines[b].no, col+1, ErrSyntax, quote(bad)+" among the numbers of the data (the rows above and below it are data)")
}

// field is the field index of kept column c.
func (p *plan) field(c int) int {
	if p.keep == nil {
		return c
	}
	return p.keep[c]
}

// emptyColumns drops fields that are empty on every data row of the head (a column
// of nothing between two delimiters): the rows are then read on the slow path, and
// a value that turns up in such a column later is an error, never ignored.
func (p *plan) emptyColumns(lines []sniffLine, start int) {
	used := make([]bool, p.d.Fields)
	for _, sl := range lines[start:] {
		k := 0
		splitFields(sl.text, p.d.Delim, func(f []byte, _ int) bool {
			if k < len(used) && len(f) > 0 {
				used[k] = true
			}
			k++
			return true
		})
	}
	var keep []int
	for i, u := range used {
		if u {
			keep = append(keep, i)
		}
	}
	if len(keep) < p.d.Fields && len(keep) > 0 {
		p.keep, p.strict = keep, true
		p.notes = append(p.notes, fmt.Sprintf("%d empty column(s) between the delimiters ignored", p.d.Fields-len(keep)))
		for i, u := range used {
			if !u {
				p.empty = append(p.empty, i)
			}
		}
	}
}

// emptyNamed turns empty columns that the header names into a warning, or, when no
// column of values is left, an error: a named channel with no values is a channel of
// NaN (pandas writes NaN as an empty cell) or one not recorded, never nothing.
func (p *plan) emptyNamed(file string) error {
	var cells []string
	for i, no := range p.headerNos {
		if no == p.nameLine {
			splitFields([]byte(p.headerLines[i]), p.d.Delim, func(f []byte, _ int) bool {
				cells = append(cells, strings.TrimSpace(string(f)))
				return true
			})
		}
	}
	var named []string
	for _, c := range p.empty {
		// a column of the names (not a setting named beside them, which has its value
		// on the line below and nothing in the rows)
		if c < len(cells) && c < len(p.names) && cells[c] != "" {
			named = append(named, fmt.Sprintf("column %d (%q)", c+1, cells[c]))
		}
	}
	if len(named) == 0 {
		return nil
	}
	what := strings.Join(named, ", ") + " empty on every row read: NaN written as empty cells, or a channel not recorded"
	kept := len(p.keep)
	if p.keep == nil {
		kept = p.d.Fields
	}
	if kept < 2 {
		return lineErr(file, p.d.DataLine, 0, ErrNoData, what+"; no column of values is left")
	}
	p.emptyWarn = what + "; left out"
	return nil
}

// unitsRow reports whether the first w cells of a header line are units or empty,
// at least one of them a unit.
func unitsRow(c []string, w int) bool {
	if len(c) < w {
		return false
	}
	some := false
	for _, x := range c[:w] {
		if x == "" {
			continue
		}
		if _, _, ok := headerUnit(x); !ok {
			return false
		}
		some = true
	}
	return some
}

func loneKeyValue(c []string, l []byte) bool {
	return len(c) == 1 && bytes.ContainsAny(l, ":=")
}

// dataMarkers are lone header cells that announce the data rather than name them.
var dataMarkers = map[string]bool{"waveformdata": true, "data": true, "values": true}

// findHeader finds the header rows above the data: one row of names, a row of units
// (with or without names above it, and with blank lines below it), and key/value
// cells to the right of the columns on such rows.
func (p *plan) findHeader(lines []sniffLine, start int, file string) error {
	w := p.d.Fields
	i := start - 1
	blank := false
	for i >= 0 && (isComment(lines[i].text) || isBlank(lines[i].text)) {
		blank = blank || isBlank(lines[i].text)
		i--
	}
	if i < 0 {
		return nil
	}
	h1 := lines[i]
	c1 := fieldStrings(h1.text, p.d.Delim)
	var names, units []string
	isUnits := unitsRow(c1, w)
	j := i - 1
	var c0 []string
	if isUnits {
		for j >= 0 && isComment(lines[j].text) {
			j--
		}
		if j >= 0 && !isBlank(lines[j].text) {
			c0 = fieldStrings(lines[j].text, p.d.Delim)
			if len(c0) < w || unitsRow(c0, w) || loneKeyValue(c0, lines[j].text) {
				c0 = nil
			}
		}
		// A lone "V" or "A" over one column names it as much as it gives its unit:
		// read it as a name, as a plain header row.
		isUnits = c0 != nil || w >= 2 || strings.ContainsAny(c1[0], "([") || len(c1[0]) >= 3
	}
	switch {
	case isUnits:
		units = c1[:w]
		p.unitLine = h1.no
		p.d.HeaderLine = h1.no
		if c0 != nil {
			names = c0[:w]
			p.nameLine = lines[j].no
			p.d.HeaderLine = lines[j].no
			p.headerLines = append(p.headerLines, string(lines[j].text))
			p.headerNos = append(p.headerNos, lines[j].no)
			for k := w; k < len(c0) && k < len(c1); k++ {
				if c0[k] != "" && c1[k] != "" {
					p.extras = append(p.extras, kv{c0[k], c1[k], h1.no, 0})
				}
			}
		}
		p.headerLines = append(p.headerLines, string(h1.text))
		p.headerNos = append(p.headerNos, h1.no)
	case !blank && len(c1) == w && !loneKeyValue(c1, h1.text) && !isSettingKey(c1[0]) && !anyNumber(c1, p.d):
		if w == 1 && dataMarkers[normKey(c1[0])] {
			p.notes = append(p.notes, fmt.Sprintf("line %d %q marks the start of the data", h1.no, c1[0]))
			return nil
		}
		names = c1
		p.nameLine = h1.no
		p.d.HeaderLine = h1.no
		p.headerLines = append(p.headerLines, string(h1.text))
		p.headerNos = append(p.headerNos, h1.no)
	default:
		return nil
	}
	p.names = make([]string, w)
	p.units = make([]string, w)
	for k := 0; k < w; k++ {
		if names != nil {
			p.names[k], p.units[k] = SplitHeader(names[k])
		}
		if units != nil && units[k] != "" {
			p.units[k] = units[k]
		}
	}
	if p.keep != nil {
		var n, u []string
		for _, f := range p.keep {
			n, u = append(n, p.names[f]), append(u, p.units[f])
		}
		p.names, p.units = n, u
	}
	switch {
	case p.nameLine > 0 && p.unitLine > 0:
		p.notes = append(p.notes, fmt.Sprintf("line %d gave the names, line %d the units", p.nameLine, p.unitLine))
	case p.unitLine > 0:
		p.notes = append(p.notes, fmt.Sprintf("line %d gave the units", p.unitLine))
	default:
		p.notes = append(p.notes, fmt.Sprintf("line %d gave the names", p.nameLine))
	}
	return nil
}

func anyNumber(c []string, d Dialect) bool {
	for _, x := range c {
		if x != "" && isNum(x, d) {
			return true
		}
	}
	return false
}
