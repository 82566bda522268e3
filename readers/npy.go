package readers

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

// npyMagic opens every .npy file (NumPy's format description, "NEP 1").
var npyMagic = []byte("\x93NUMPY")

// MaxSamples bounds what a header may claim, so a corrupt size cannot make a reader
// allocate without limit: 2^28 values is 2 GiB of float64.
const MaxSamples = 1 << 28

// NPYOptions carries what a .npy array cannot say about itself.
type NPYOptions struct {
	Interval_s float64 // required unless the array has a time column
	TimeColumn string  // "auto", "first" or "none"
	Names      []string
	SizeHint   int64 // the file's size when known; sizes the columns, never trusted beyond the data
}

var (
	reDescr   = regexp.MustCompile(`'descr'\s*:\s*'([^']*)'`)
	reFortran = regexp.MustCompile(`'fortran_order'\s*:\s*(True|False)`)
	reShape   = regexp.MustCompile(`'shape'\s*:\s*\(([^)]*)\)`)
)

// ReadNPY reads a NumPy .npy array (header versions 1, 2 and 3). A 1-D array is one
// channel; a 2-D array has one column per channel, optionally led by a time column.
func ReadNPY(r io.Reader, file string, opt NPYOptions) (*waveform.Record, error) {
	br := bufio.NewReaderSize(r, 1<<16)
	pre := make([]byte, 8)
	if n, err := io.ReadFull(br, pre); err != nil {
		if n == 0 {
			return nil, fileErr(file, ErrEmpty, "")
		}
		return nil, byteErr(file, int64(n), ErrTruncated, "inside the .npy magic")
	}
	if !bytes.Equal(pre[:6], npyMagic) {
		return nil, byteErr(file, 0, ErrHeader, "not a .npy file (magic string missing)")
	}
	major := pre[6]
	var hlen int
	off := int64(8)
	switch major {
	case 1:
		var b [2]byte
		if _, err := io.ReadFull(br, b[:]); err != nil {
			return nil, byteErr(file, off, ErrTruncated, "in the header length")
		}
		hlen = int(binary.LittleEndian.Uint16(b[:]))
		off += 2
	case 2, 3:
		var b [4]byte
		if _, err := io.ReadFull(br, b[:]); err != nil {
			return nil, byteErr(file, off, ErrTruncated, "in the header length")
		}
		hlen = int(binary.LittleEndian.Uint32(b[:]))
		off += 4
	default:
		return nil, byteErr(file, 6, ErrUnsupported, fmt.Sprintf(".npy format version %d", major))
	}
	if hlen > 1<<20 {
		return nil, byteErr(file, off-4, ErrTooLarge, fmt.Sprintf("header of %d bytes", hlen))
	}
	hdr := make([]byte, hlen)
	if n, err := io.ReadFull(br, hdr); err != nil {
		return nil, byteErr(file, off+int64(n), ErrTruncated, "inside the header")
	}
	h := string(hdr)
	m := reDescr.FindStringSubmatch(h)
	if m == nil {
		return nil, byteErr(file, off, ErrHeader, "no 'descr' in the header")
	}
	descr := m[1]
	fortran := false
	if f := reFortran.FindStringSubmatch(h); f != nil {
		fortran = f[1] == "True"
	}
	s := reShape.FindStringSubmatch(h)
	if s == nil {
		return nil, byteErr(file, off, ErrHeader, "no 'shape' in the header")
	}
	var shape []int
	total := 1
	for _, p := range strings.Split(s[1], ",") {
		p = strings.TrimSpace(p)
		if p == "" {
			continue
		}
		v, err := strconv.Atoi(p)
		if err != nil || v < 0 {
			return nil, byteErr(file, off, ErrHeader, fmt.Sprintf("shape entry %q", p))
		}
		if v > 0 && total > MaxSamples/v {
			return nil, byteErr(file, off, ErrTooLarge, fmt.Sprintf("shape %v claims more than %d values", s[1], MaxSamples))
		}
		shape = append(shape, v)
		total *= v
	}
	off += int64(hlen)
	if len(shape) == 0 || len(shape) > 2 {
		return nil, byteErr(file, off, ErrUnsupported, fmt.Sprintf("a %d-dimensional array; hvshot reads 1-D and 2-D", len(shape)))
	}
	st, err := sampleTypeFromDescr(descr)
	if err != nil {
		return nil, byteErr(file, off, ErrUnsupported, err.Error())
	}
	rows, cols := shape[0], 1
	if len(shape) == 2 {
		cols = shape[1]
	}
	if rows*cols == 0 {
		return nil, byteErr(file, off, ErrNoData, "the array is empty")
	}
	colv, err := decodeColumns(br, st, rows, cols, fortran, off, file, opt.SizeHint)
	if err != nil {
		return nil, err
	}
	rec := &waveform.Record{Source: file, Format: "npy", Meta: map[string]string{"npy descr": descr, "npy shape": s[1]}}
	if len(shape) == 2 && rows <= maxChannelsAsRows && cols >= 8*rows && cols >= minRecordSamples {
		// np.save(f, np.vstack([t, u])): a few rows of many samples are channels, not
		// samples; read them as the columns they stand for
		tr := make([][]float64, rows)
		for r := range tr {
			tr[r] = make([]float64, cols)
			for c := range cols {
				tr[r][c] = colv[c][r]
			}
		}
		colv, rows, cols = tr, cols, rows
		rec.Warnings = append(rec.Warnings, fmt.Sprintf("shape (%s) read as %d channels of %d samples, one per row (np.save of the transpose is the usual layout)", s[1], cols, rows))
	}
	first := 0
	hasTime := opt.TimeColumn == "first" || (opt.TimeColumn != "none" && cols >= 2 && looksUniform(colv[0]))
	if hasTime {
		t := colv[0]
		for i := 1; i < rows; i++ {
			if !(t[i] > t[i-1]) {
				return nil, byteErr(file, off+int64(i*cols*st.size), ErrNonMonotonic, fmt.Sprintf("row %d", i))
			}
		}
		interval, jitter, worst := uniformity(t)
		if jitter > 0.01 {
			return nil, byteErr(file, off+int64(worst*cols*st.size), ErrNonUniform, fmt.Sprintf("row %d", worst))
		}
		rec.Start_s, rec.Interval_s = t[0], interval
		if jitter > 1e-4 {
			for c := 1; c < cols; c++ {
				colv[c] = resample(t, colv[c], interval)
			}
			rec.Warnings = append(rec.Warnings, fmt.Sprintf("time column not uniform (steps vary by up to %.2g %%): resampled", 100*jitter))
		}
		first = 1
	} else if opt.Interval_s > 0 {
		rec.Interval_s = opt.Interval_s
	} else {
		return nil, fileErr(file, ErrNoInterval, "the array has no time column; give the sample interval with --interval")
	}
	if cols-first < 1 {
		return nil, fileErr(file, ErrNoData, "a time column and no channel")
	}
	for c := first; c < cols; c++ {
		name := fmt.Sprintf("CH%d", c-first+1)
		if k := c - first; k < len(opt.Names) && opt.Names[k] != "" {
			name = opt.Names[k]
		}
		rec.Channels = append(rec.Channels, waveform.Channel{Name: name, Samples: colv[c]})
	}
	if err := rec.Validate(); err != nil {
		return nil, fileErr(file, ErrNoData, err.Error())
	}
	return rec, nil
}

// An array of at most maxChannelsAsRows rows, each at least 8 times longer and at least
// minRecordSamples long, holds channels in its rows (ours: no scope records 9 channels,
// and no record is that short).
const (
	maxChannelsAsRows = 8
	minRecordSamples  = 64
)

// decodeColumns reads a rows x cols array straight into its columns in one pass over
// the data: C order deals each chunk's rows out to the columns, Fortran order decodes
// each column in place. The columns grow as data arrive (sized from the file's size
// when known), so a header that lies about the shape costs no more memory than the file
// holds; a truncated array, or a NaN or infinity, is an error at its byte.
func decodeColumns(r io.Reader, st sampleType, rows, cols int, fortran bool, off int64, file string, sizeHint int64) ([][]float64, error) {
	est := rows
	if sizeHint > 0 {
		est = min(est, int((sizeHint-off)/int64(cols*st.size))+1)
	} else {
		est = min(est, 1<<20)
	}
	colv := make([][]float64, cols)
	for c := range colv {
		colv[c] = make([]float64, 0, max(est, 0))
	}
	isFloat := st.name == "float32" || st.name == "float64"
	// A chunk of whole rows (C order) or of one type's samples (Fortran order).
	unit := st.size
	if !fortran {
		unit *= cols
	}
	buf := make([]byte, max(1, (1<<16)/unit)*unit)
	var tmp []float64
	total, done := rows*cols, 0
	for done < total {
		want := min(len(buf), (total-done)*st.size)
		if fortran {
			// never across a column's end
			c := done / rows
			want = min(want, (rows-len(colv[c]))*st.size)
		}
		n, err := io.ReadFull(r, buf[:want])
		n -= n % unit
		if fortran {
			c := done / rows
			k := len(colv[c])
			colv[c] = convert(colv[c], buf[:n], st, 1, 0)
			if isFloat {
				if i := firstNotFinite(colv[c][k:]); i >= 0 {
					return nil, byteErr(file, off+int64((done+i)*st.size), ErrNotFinite, fmt.Sprintf("row %d, column %d", k+i, c))
				}
			}
		} else if cols == 1 {
			k := len(colv[0])
			colv[0] = convert(colv[0], buf[:n], st, 1, 0)
			if isFloat {
				if i := firstNotFinite(colv[0][k:]); i >= 0 {
					return nil, byteErr(file, off+int64((done+i)*st.size), ErrNotFinite, fmt.Sprintf("row %d", k+i))
				}
			}
		} else {
			tmp = convert(tmp[:0], buf[:n], st, 1, 0)
			if isFloat {
				if i := firstNotFinite(tmp); i >= 0 {
					return nil, byteErr(file, off+int64((done+i)*st.size), ErrNotFinite, fmt.Sprintf("row %d, column %d", (done+i)/cols, (done+i)%cols))
				}
			}
			for c := range colv {
				dst := colv[c]
				for i := c; i < len(tmp); i += cols {
					dst = append(dst, tmp[i])
				}
				colv[c] = dst
			}
		}
		done += n / st.size
		if err != nil && done < total {
			return nil, byteErr(file, off+int64(done*st.size), ErrTruncated, fmt.Sprintf("%d of %d samples present", done, total))
		}
	}
	return colv, nil
}

func firstNotFinite(x []float64) int {
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return i
		}
	}
	return -1
}

// sampleType is one binary sample encoding.
type sampleType struct {
	name  string // int8, int16, int32, int64, uint8, uint16, uint32, float32, float64
	size  int
	order binary.ByteOrder
}

func sampleTypeFromDescr(d string) (sampleType, error) {
	if len(d) < 3 {
		return sampleType{}, fmt.Errorf("dtype %q", d)
	}
	var order binary.ByteOrder = binary.LittleEndian
	switch d[0] {
	case '<', '|', '=':
	case '>':
		order = binary.BigEndian
	default:
		return sampleType{}, fmt.Errorf("dtype %q", d)
	}
	names := map[string]string{"f8": "float64", "f4": "float32", "i1": "int8", "i2": "int16", "i4": "int32", "i8": "int64", "u1": "uint8", "u2": "uint16", "u4": "uint32"}
	n, ok := names[d[1:]]
	if !ok {
		return sampleType{}, fmt.Errorf("dtype %q (hvshot reads f4, f8, i1, i2, i4, i8, u1, u2, u4)", d)
	}
	return newSampleType(n, order)
}

func newSampleType(name string, order binary.ByteOrder) (sampleType, error) {
	sizes := map[string]int{"int8": 1, "uint8": 1, "int16": 2, "uint16": 2, "int32": 4, "uint32": 4, "int64": 8, "float32": 4, "float64": 8}
	s, ok := sizes[name]
	if !ok {
		return sampleType{}, fmt.Errorf("sample type %q (one of int8, uint8, int16, uint16, int32, uint32, int64, float32, float64)", name)
	}
	return sampleType{name: name, size: s, order: order}, nil
}

// convert appends the samples in b, scaled as v*gain + offset, to out.
func convert(out []float64, b []byte, st sampleType, gain, offset float64) []float64 {
	n := len(b) / st.size
	base := len(out)
	if cap(out)-base < n {
		grown := make([]float64, base, 2*cap(out)+n)
		copy(grown, out)
		out = grown
	}
	out = out[:base+n]
	dst := out[base:]
	le := st.order == binary.LittleEndian
	switch st.name {
	case "int8":
		for i := range dst {
			dst[i] = float64(int8(b[i]))*gain + offset
		}
	case "uint8":
		for i := range dst {
			dst[i] = float64(b[i])*gain + offset
		}
	case "int16":
		b = b[:2*len(dst)]
		if le {
			for i := range dst {
				dst[i] = float64(int16(uint16(b[2*i])|uint16(b[2*i+1])<<8))*gain + offset
			}
		} else {
			for i := range dst {
				dst[i] = float64(int16(uint16(b[2*i+1])|uint16(b[2*i])<<8))*gain + offset
			}
		}
	case "uint16":
		for i := range dst {
			dst[i] = float64(st.order.Uint16(b[2*i:]))*gain + offset
		}
	case "int32":
		for i := range dst {
			dst[i] = float64(int32(st.order.Uint32(b[4*i:])))*gain + offset
		}
	case "uint32":
		for i := range dst {
			dst[i] = float64(st.order.Uint32(b[4*i:]))*gain + offset
		}
	case "int64":
		for i := range dst {
			dst[i] = float64(int64(st.order.Uint64(b[8*i:])))*gain + offset
		}
	case "float32":
		for i := range dst {
			dst[i] = float64(math.Float32frombits(st.order.Uint32(b[4*i:])))*gain + offset
		}
	case "float64":
		for i := range dst {
			dst[i] = math.Float64frombits(st.order.Uint64(b[8*i:]))*gain + offset
		}
	}
	return out
}
