package readers

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
)

// Sentinel causes of the layouts this file and layouts.go read.
var (
	ErrEmptyCell = errors.New("row without values")
	ErrTimeBase  = errors.New("time base contradicts the file")
)

// headReader reads the head of a text file into owned lines for the sniffing phase.
type headReader struct {
	br       *bufio.Reader
	file     string
	no       int   // lines read
	off      int64 // bytes read
	complete bool
	unended  int // the last line when it has no line end, 0 otherwise
	cutRow   int // that line, when it is left out as a row cut in half
	arena    []byte
	kept     int    // lines of the first chunk, kept when a long head is trimmed
	dropped  [2]int // first and last line dropped from the middle of a long head
}

// read appends lines of at least limit bytes (or to the end of the file) to lines.
func (h *headReader) read(lines []sniffLine, limit int) ([]sniffLine, error) {
	got := 0
	for got < limit {
		line, err := h.br.ReadSlice('\n')
		if err == bufio.ErrBufferFull {
			return nil, lineErr(h.file, h.no+1, 0, ErrLineTooLong, fmt.Sprintf("more than %d bytes", MaxLineBytes))
		}
		if len(line) == 0 && err != nil {
			if err == io.EOF {
				h.complete = true
				return lines, nil
			}
			return nil, fileErr(h.file, err, "")
		}
		h.no++
		if err == io.EOF && line[len(line)-1] != '\n' {
			h.unended = h.no
		}
		if i := binaryByte(line); i >= 0 {
			return nil, byteErr(h.file, h.off+int64(i), ErrBinary, "give the raw description (a .hvraw sidecar or --raw flags) if this is a binary capture")
		}
		h.off += int64(len(line))
		got += len(line)
		line = trimEOL(line)
		if len(line) > MaxLineBytes {
			return nil, lineErr(h.file, h.no, 0, ErrLineTooLong, fmt.Sprintf("more than %d bytes", MaxLineBytes))
		}
		s := len(h.arena)
		h.arena = append(h.arena, line...)
		lines = append(lines, sniffLine{h.arena[s:len(h.arena):len(h.arena)], h.no})
		if err == io.EOF {
			h.complete = true
			break
		}
	}
	return lines, nil
}

// cut reports whether a row that failed to read is the file's last line cut in half (no
// line end, and a row that does not scan): a file cut short while it was written keeps
// its whole rows, and the cut one is left out with a warning.
func (h *headReader) cut(no int, err error) bool {
	if no != h.unended || (!errors.Is(err, ErrRagged) && !errors.Is(err, ErrSyntax) && !errors.Is(err, ErrEmptyCell)) {
		return false
	}
	h.cutRow = no
	return true
}

// leaveOut reports whether line no is a data row without a line end after whole rows: it
// is left out even when it scans, since "123456" cut to "12" is still a number.
func (h *headReader) leaveOut(no int, line []byte, rr *rowReader) bool {
	if no != h.unended || rr.nfull == 0 {
		return false
	}
	t := bytes.TrimLeft(line, " \t")
	if len(t) == 0 || !startsNumber(t[0]) {
		return false // a footer or a blank end: read as any other line
	}
	h.cutRow = no
	return true
}

// more reads the next chunk of a head that holds no data yet. Of a long head it keeps
// the first chunk (where settings usually are) and the last (where the header rows
// above the data are), so memory stays bounded wherever the data start.
func (h *headReader) more(lines []sniffLine) ([]sniffLine, error) {
	if h.kept == 0 {
		h.kept = len(lines)
	}
	h.arena = make([]byte, 0, sniffBytes+MaxLineBytes)
	lines, err := h.read(lines, sniffBytes)
	if err != nil {
		return nil, err
	}
	tail, k := 0, len(lines)
	for k > h.kept && tail < sniffBytes {
		k--
		tail += len(lines[k].text) + 1
	}
	if k > h.kept {
		if h.dropped[0] == 0 {
			h.dropped[0] = lines[h.kept].no
		}
		h.dropped[1] = lines[k-1].no
		lines = append(lines[:h.kept], lines[k:]...)
	}
	return lines, nil
}

func trimEOL(line []byte) []byte {
	if n := len(line); n > 0 && line[n-1] == '\n' {
		line = line[:n-1]
	}
	if n := len(line); n > 0 && line[n-1] == '\r' {
		line = line[:n-1]
	}
	return line
}

// rowReader collects the data rows. Rows with an empty value cell are edge samples
// outside the acquisition when they come before the first or after the last full
// row; between full rows they are an error.
type rowReader struct {
	p     *plan
	delim byte // the dialect's, kept here for the per-row scan
	dec   byte
	width int
	file  string
	cols  [][]float64
	row   []float64
	skips skipped // lines skipped or dropped, by the row they came before

	nfull              int
	lead, leadFrom     int
	leadTo             int
	pend, pendLine     int
	pendCol, pendTo    int
	lastLine, lastFull int
}

func newRowReader(p *plan, file string, sizeHint int64, head []sniffLine) *rowReader {
	n := p.d.Fields
	if p.keep != nil {
		n = len(p.keep)
	}
	rr := &rowReader{p: p, file: file, cols: make([][]float64, n), row: make([]float64, max(n, p.d.Fields)+1),
		delim: p.d.Delim, dec: p.d.DecimalSep, width: p.d.Fields}
	if sizeHint > 0 {
		// Size the columns from the file size and the head's bytes per line, so a
		// large file is not copied over and over as the columns grow.
		var sum, k int
		for _, l := range head {
			if l.no >= p.d.DataLine {
				sum += len(l.text) + 1
				k++
			}
		}
		if k > 0 {
			per := float64(sum) / float64(k)
			est := int(float64(sizeHint)/per*1.02) + 16
			est = min(est, MaxSamples/n)
			for c := range rr.cols {
				rr.cols[c] = make([]float64, 0, est)
			}
		}
	}
	return rr
}

// add takes one line (end of line removed) at 1-based line number no.
func (rr *rowReader) add(line []byte, no int) error {
	if len(line) == 0 || !startsNumber(line[0]) {
		if isBlank(line) || isComment(line) {
			rr.skips.add(len(rr.cols[0]))
			return nil
		}
	}
	rr.lastLine = no
	if rr.p.keep == nil {
		k, col, cause := scanRow(line, rr.delim, rr.dec, rr.row)
		if cause == nil && k == rr.width {
			return rr.full(no)
		}
		// A row the fast scan refused may have empty value cells.
		d := rr.p.d
		if empty, _, err := scanKeep(line, d, rr.p.all, false, rr.row); err == nil && empty >= 0 {
			return rr.edge(no, empty)
		}
		if cause != nil {
			detail := quote(fieldAt(line, col, d.Delim))
			if cause == ErrSyntax {
				detail += " where a number should be: mend or remove the row (hvshot does not guess a value)"
			}
			return lineErr(rr.file, no, col+1, cause, detail)
		}
		return lineErr(rr.file, no, 0, ErrRagged, fmt.Sprintf("%d fields, the data start at line %d with %d", k, d.DataLine, d.Fields))
	}
	d := rr.p.d
	empty, col, err := scanKeep(line, d, rr.p.keep, rr.p.strict, rr.row)
	switch {
	case err == ErrRagged:
		return lineErr(rr.file, no, col+1, err, fmt.Sprintf("a value where the data start at line %d have an empty column, or more fields than its %d", d.DataLine, d.Fields))
	case err != nil:
		return lineErr(rr.file, no, col+1, err, quote(fieldAt(line, col, d.Delim)))
	case empty >= 0:
		return rr.edge(no, empty)
	}
	return rr.full(no)
}

func (rr *rowReader) full(no int) error {
	if rr.pend > 0 {
		return lineErr(rr.file, rr.pendLine, rr.pendCol, ErrEmptyCell, fmt.Sprintf("lines %d-%d have empty value cells between rows of values (line %d, line %d); only the first and last rows of a record may lack values", rr.pendLine, rr.pendTo, rr.lastFull, no))
	}
	for c := range rr.cols {
		rr.cols[c] = append(rr.cols[c], rr.row[c])
	}
	rr.nfull++
	rr.lastFull = no
	if rr.nfull*len(rr.cols) > MaxSamples {
		return lineErr(rr.file, no, 0, ErrTooLarge, fmt.Sprintf("more than %d values", MaxSamples))
	}
	return nil
}

func (rr *rowReader) edge(no, col int) error {
	if rr.nfull == 0 {
		if rr.lead == 0 {
			rr.leadFrom = no
		}
		rr.lead++
		rr.leadTo = no
	} else {
		if rr.pend == 0 {
			rr.pendLine, rr.pendCol = no, col+1
		}
		rr.pend++
		rr.pendTo = no
	}
	rr.skips.add(len(rr.cols[0]))
	return nil
}

// skipped counts the lines skipped before each row, in runs: a million blank lines in a
// row cost one entry, not a million (memory bounded by the data, not the blank lines).
type skipped []struct{ row, total int } // total: lines skipped up to and with this run

func (s *skipped) add(row int) {
	if n := len(*s); n > 0 && (*s)[n-1].row == row {
		(*s)[n-1].total++
		return
	}
	t := 1
	if n := len(*s); n > 0 {
		t = (*s)[n-1].total + 1
	}
	*s = append(*s, struct{ row, total int }{row, t})
}

// before is the number of lines skipped before row (0-based) was read.
func (s skipped) before(row int) int {
	i := sort.Search(len(s), func(i int) bool { return s[i].row > row })
	if i == 0 {
		return 0
	}
	return s[i-1].total
}

// scanKeep reads the fields listed in keep (ascending) of one row into dst, in the
// order of keep; an empty kept cell reads as 0 and its byte column is returned as
// empty (-1 when every kept cell has a value). Kept cells missing from a row that ends
// with the delimiter are empty too. With strict, a value in a field not kept is an
// error (ErrRagged), as is any field past the row width.
func scanKeep(line []byte, d Dialect, keep []int, strict bool, dst []float64) (empty, col int, err error) {
	empty = -1
	n := len(line)
	i, idx, ki := 0, 0, 0
	ends := false
	for {
		var f []byte
		var c, next int
		last := false
		if d.Delim == ' ' {
			for i < n && isBlankByte(line[i]) {
				i++
			}
			if i == n {
				break
			}
			j := i
			for j < n && !isBlankByte(line[j]) {
				j++
			}
			f, c, next = line[i:j], i, j
		} else {
			j := bytes.IndexByte(line[i:], d.Delim)
			end := n
			if j >= 0 {
				end = i + j
			} else {
				last = true
			}
			c = i
			for c < end && isBlankByte(line[c]) {
				c++
			}
			e := end
			for e > c && isBlankByte(line[e-1]) {
				e--
			}
			f, next = line[c:e], end+1
			if last && len(f) == 0 && i > 0 {
				ends = true // a trailing delimiter: no field follows it
				break
			}
		}
		if idx >= d.Fields {
			return -1, c, ErrRagged
		}
		if ki < len(keep) && idx == keep[ki] {
			if len(f) == 0 {
				if empty < 0 {
					empty = c
				}
				dst[ki] = 0
			} else {
				v, ok := parseFloat(f, d.DecimalSep)
				if !ok {
					if binaryByte(f) >= 0 {
						return -1, c, ErrBinary
					}
					return -1, c, ErrSyntax
				}
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return -1, c, ErrNotFinite
				}
				dst[ki] = v
			}
			ki++
		} else if strict && len(f) > 0 {
			return -1, c, ErrRagged
		}
		idx++
		if last || next > n {
			break
		}
		i = next
	}
	if ki < len(keep) {
		if !ends {
			return -1, 0, ErrRagged
		}
		if empty < 0 {
			empty = n
		}
		for ; ki < len(keep); ki++ {
			dst[ki] = 0
		}
	}
	return empty, 0, nil
}
