package readers

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// WriteText writes rec as comma-separated text that ReadText reads back exactly: a
// preamble of '#' key: value lines (the record's metadata), a header with units, and a
// time column. Values use the shortest representation that round-trips.
func WriteText(w io.Writer, rec *waveform.Record) error { return WriteTextDigits(w, rec, -1) }

// WriteTextDigits is WriteText with values rounded to the given significant digits
// (-1: exact). Nine digits are more than any scope's ADC resolves and read faster.
func WriteTextDigits(w io.Writer, rec *waveform.Record, digits int) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	keys := make([]string, 0, len(rec.Meta))
	for k := range rec.Meta {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		fmt.Fprintf(bw, "# %s: %s\n", k, strings.ReplaceAll(rec.Meta[k], "\n", " "))
	}
	fmt.Fprintf(bw, "# sample interval: %s s\n", strconv.FormatFloat(rec.Interval_s, 'g', -1, 64))
	bw.WriteString("t [s]")
	for _, c := range rec.Channels {
		bw.WriteByte(',')
		bw.WriteString(c.Name)
		if c.Unit != "" {
			bw.WriteString(" [" + c.Unit + "]")
		}
	}
	bw.WriteByte('\n')
	var buf []byte
	for i := 0; i < rec.Len(); i++ {
		tdig := digits
		if tdig > 0 {
			tdig += 3 // times need the extra digits to stay uniform over long records
		}
		buf = strconv.AppendFloat(buf[:0], rec.Time_s(i), 'g', tdig, 64)
		for _, c := range rec.Channels {
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, c.Samples[i], 'g', digits, 64)
		}
		buf = append(buf, '\n')
		bw.Write(buf)
	}
	return bw.Flush()
}

// WriteNPY writes rec as a version 1.0 .npy array of little-endian float64 with a
// leading time column, shape (samples, 1 + channels).
func WriteNPY(w io.Writer, rec *waveform.Record) error {
	n, c := rec.Len(), len(rec.Channels)+1
	h := fmt.Sprintf("{'descr': '<f8', 'fortran_order': False, 'shape': (%d, %d), }", n, c)
	pad := 64 - (10+len(h)+1)%64
	h += strings.Repeat(" ", pad%64) + "\n"
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.Write(npyMagic)
	bw.Write([]byte{1, 0})
	binary.Write(bw, binary.LittleEndian, uint16(len(h)))
	bw.WriteString(h)
	var b [8]byte
	for i := 0; i < n; i++ {
		binary.LittleEndian.PutUint64(b[:], math.Float64bits(rec.Time_s(i)))
		bw.Write(b[:])
		for _, ch := range rec.Channels {
			binary.LittleEndian.PutUint64(b[:], math.Float64bits(ch.Samples[i]))
			bw.Write(b[:])
		}
	}
	return bw.Flush()
}

// WriteRaw writes rec as interleaved little-endian int16 codes, each channel scaled to
// use the code range (or its stated vertical range), and returns the RawSpec that reads
// it back; write that with WriteSidecar.
func WriteRaw(w io.Writer, rec *waveform.Record) (RawSpec, error) {
	spec := RawSpec{Sample: "int16", Channels: len(rec.Channels), Interval_s: rec.Interval_s, Start_s: rec.Start_s}
	// a synthetic record stays marked as one: raw binary has no other place for it
	if v, ok := rec.Meta["synthetic"]; ok {
		spec.Note = "synthetic: " + v
	}
	for _, c := range rec.Channels {
		full := 0.0
		if c.HasRange {
			full = math.Max(math.Abs(c.RangeMin), math.Abs(c.RangeMax))
		} else {
			for _, v := range c.Samples {
				full = math.Max(full, math.Abs(v))
			}
		}
		if full == 0 {
			full = 1
		}
		spec.Gain = append(spec.Gain, full/32767)
		spec.Offset = append(spec.Offset, 0)
		spec.Names = append(spec.Names, c.Name)
		spec.Units = append(spec.Units, c.Unit)
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	var b [2]byte
	for i := 0; i < rec.Len(); i++ {
		for k, c := range rec.Channels {
			q := math.Round(c.Samples[i] / spec.Gain[k])
			q = math.Max(-32768, math.Min(32767, q))
			binary.LittleEndian.PutUint16(b[:], uint16(int16(q)))
			bw.Write(b[:])
		}
	}
	return spec, bw.Flush()
}

// WriteSidecar writes the raw description that ParseSidecar reads.
func WriteSidecar(w io.Writer, s RawSpec) error {
	join := func(v []float64) string {
		p := make([]string, len(v))
		for i, x := range v {
			p[i] = strconv.FormatFloat(x, 'g', -1, 64)
		}
		return strings.Join(p, ", ")
	}
	endian := "little"
	if s.BigEndian {
		endian = "big"
	}
	_, err := fmt.Fprintf(w, "# raw capture description for hvshot (docs/raw-sidecar.md)\nformat = hvraw 1\nsample = %s\nendian = %s\nchannels = %d\nnames = %s\nunits = %s\ngain = %s\noffset = %s\ninterval = %s\nstart = %s\n",
		s.Sample, endian, s.Channels, strings.Join(s.Names, ", "), strings.Join(s.Units, ", "), join(s.Gain), join(s.Offset),
		strconv.FormatFloat(s.Interval_s, 'g', -1, 64), strconv.FormatFloat(s.Start_s, 'g', -1, 64))
	if err == nil && s.HeaderBytes > 0 {
		_, err = fmt.Fprintf(w, "header_bytes = %d\n", s.HeaderBytes)
	}
	if err == nil && s.Note != "" {
		_, err = fmt.Fprintf(w, "note = %s\n", strings.ReplaceAll(s.Note, "\n", " "))
	}
	return err
}
