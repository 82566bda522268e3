package readers

import (
	"bytes"
	"encoding/binary"
	"encoding/csv"
	"errors"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// bothOrders puts and appends.
type bothOrders interface {
	binary.ByteOrder
	binary.AppendByteOrder
}

// inventedCodes is an invented impulse in ADC codes: a double exponential rising from
// a pre-trigger baseline of 0, peaking near peak, n samples long.
func inventedCodes(n int, peak float64) []int64 {
	out := make([]int64, n)
	for i := range out {
		t := float64(i - n/8)
		if t > 0 {
			out[i] = int64(math.Round(peak * 1.04 * (math.Exp(-t/(float64(n)/2)) - math.Exp(-t/(float64(n)/60)))))
		}
	}
	return out
}

// requireParseError checks a refusal: the sentinel, a *ParseError naming the file, and
// words of the message (the header field it names).
func requireParseError(t *testing.T, err error, file string, sentinel error, words ...string) *ParseError {
	t.Helper()
	require.Error(t, err)
	assert.ErrorIs(t, err, sentinel)
	var pe *ParseError
	require.True(t, errors.As(err, &pe), "%T: %v", err, err)
	assert.Equal(t, file, pe.File)
	for _, w := range words {
		assert.Contains(t, err.Error(), w)
	}
	return pe
}

// allocatedBytes is what f allocates in all, however briefly.
func allocatedBytes(f func()) uint64 {
	var a, b runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&a)
	f()
	runtime.ReadMemStats(&b)
	return b.TotalAlloc - a.TotalAlloc
}

// hasNote says whether some note contains all the words.
func hasNote(notes []string, words ...string) bool {
	for _, n := range notes {
		all := true
		for _, w := range words {
			all = all && strings.Contains(n, w)
		}
		if all {
			return true
		}
	}
	return false
}

func TestDecimal32(t *testing.T) {
	cases := []struct {
		in      float32
		want    float64
		decimal bool
	}{
		{2e-9, 2e-9, true},
		{1e-10, 1e-10, true},
		{4e-3, 4e-3, true},
		{0.5, 0.5, false}, // exact in binary: the float32 is the decimal
		{float32(1.0 / 3), float64(float32(1.0 / 3)), false},
		{1.2345678e-7, float64(float32(1.2345678e-7)), false}, // eight digits: ambiguous
	}
	for _, c := range cases {
		got, dec := decimal32(c.in)
		assert.Equal(t, math.Float64bits(c.want), math.Float64bits(got), "%g", c.in)
		assert.Equal(t, c.decimal, dec, "%g", c.in)
	}
}

func TestChannelName(t *testing.T) {
	for in, want := range map[string]string{"Ch1": "CH1", "C2": "CH2", "CHANNEL 3": "CH3", "4": "CH4", "Math1": "Math1", "divider": "divider", "": "CH6"} {
		assert.Equal(t, want, channelName(in, 5), in)
	}
}

// The sniffer must tell the three layouts from each other and from the formats it
// knew before, from content alone: the names here carry no hint.
func TestSniffSelfDescribing(t *testing.T) {
	blk := buildBlock(blockSpec{bytes: 2, format: "RI", order: "MSB", codes: inventedCodes(64, 1000)})
	desc := buildDescriptor(descSpec{little: true, codes: inventedCodes(64, 1000)})
	fix := buildFixed(fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "1", floats: []float32{1, 2, 3, 4, 5, 6, 7, 8}}}})
	cases := []struct {
		head []byte
		want Format
	}{
		{blk, FormatPreambleBlock},
		{desc, FormatDescriptor},
		{append([]byte("SHOT7,"), desc...), FormatDescriptor},
		{fix, FormatFixedHeader},
		{[]byte("t,U\n0,1\n"), FormatText},
		{[]byte("\x93NUMPY\x01\x00"), FormatNPY},
		{[]byte{1, 2, 0, 4, 5, 6, 7, 8}, FormatRaw},
		{[]byte("AB10\x00\x00\x00\x00\xff\xff\xff\xff\x00\x00\x00\x00\x00\x00\x00\x00"), FormatRaw}, // a cookie, then nonsense
		{[]byte("XINCR,2e-9\n1\n2\n"), FormatText},
		{[]byte("XINCR 2e-9\n1\n2\n"), FormatText}, // a key, but no unit separator and no block
		{[]byte(":PRE:XINCR 2e-9\nYMULT 1\n:CURV #18\x00\x01\x02\x03\x04\x05\x06\x07"), FormatPreambleBlock},
	}
	for i, c := range cases {
		head := c.head
		if len(head) > 4096 {
			head = head[:4096]
		}
		assert.Equal(t, c.want, SniffFormat(head, "capture"), "case %d", i)
	}
}

// Before these readers, every one of these files was refused as binary without a
// description; now Read takes each without one, and without a sidecar.
func TestReadSelfDescribingWithoutSidecar(t *testing.T) {
	codes := inventedCodes(200, 20000)
	peak := 0.0
	for _, c := range codes {
		peak = math.Max(peak, math.Abs(float64(c)))
	}
	files := map[string]struct {
		b     []byte
		scale float64
	}{
		"a": {buildBlock(blockSpec{bytes: 2, format: "RI", order: "LSB", xincr: 1e-8, ymult: 1e-3, codes: codes}), 1e-3},
		"b": {buildDescriptor(descSpec{little: false, codes: codes, gain: 2e-3}), 2e-3},
		"c": {buildFixed(fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "1", floats: floatsOf(codes, 1e-3)}}}), 1e-3},
	}
	for name, f := range files {
		b := f.b
		rec, err := Read(bytes.NewReader(b), name, Options{})
		require.NoError(t, err, name)
		require.Len(t, rec.Channels, 1)
		assert.NotEmpty(t, rec.Layout)
		assert.NotEmpty(t, rec.Notes)
		assert.InEpsilon(t, peak*f.scale, peakAbs(rec.Channels[0].Samples), 1e-6, name)

		// A raw description given as well is set aside, with a note.
		spec := RawSpec{Sample: "int16", Interval_s: 1}
		rec2, err := Read(bytes.NewReader(b), name, Options{Raw: &spec})
		require.NoError(t, err, name)
		assert.Equal(t, rec.Interval_s, rec2.Interval_s)
		assert.True(t, hasNote(rec2.Notes, "raw description", "not used"), name)

		all, err := ReadAll(bytes.NewReader(b), name, Options{})
		require.NoError(t, err)
		require.Len(t, all, 1)
		assert.Equal(t, 0, all[0].Segment)
	}
}

func floatsOf(codes []int64, k float64) []float32 {
	out := make([]float32, len(codes))
	for i, c := range codes {
		out[i] = float32(float64(c) * k)
	}
	return out
}

func peakAbs(x []float64) float64 {
	m := 0.0
	for _, v := range x {
		m = math.Max(m, math.Abs(v))
	}
	return m
}

// Files written by NumPy and struct (testdata/readers/make_selfdesc.py), an independent
// second writer of the three layouts, read back and compared with the values NumPy
// computed from the codes it wrote.
func TestReadSelfDescribingPythonFixtures(t *testing.T) {
	cases := []struct {
		file     string
		segments int
		names    []string
		units    []string
		interval float64
		over     []int // per record, the first channel's over-range count
	}{
		{"py_preamble_block.cap", 0, []string{"CH1", "CH2"}, []string{"V", "A"}, 4e-9, []int{0}},
		{"py_descriptor_sequence.cap", 4, []string{"CH2"}, []string{"V"}, 2e-9, []int{0, 0, 1, 0}},
		{"py_fixed_header.cap", 0, []string{"CH1", "CH3"}, []string{"V", "A"}, 5e-9, []int{0}},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			path := filepath.Join("../testdata/readers", c.file)
			want := readExpected(t, strings.TrimSuffix(path, ".cap")+".expected.csv")
			recs, err := ReadFileAll(path, Options{})
			require.NoError(t, err)
			if c.segments == 0 {
				require.Len(t, recs, 1)
				assert.Equal(t, 0, recs[0].Segment)
			} else {
				require.Len(t, recs, c.segments)
				_, err := ReadFile(path, Options{})
				requireParseError(t, err, path, ErrSegmented, strconv.Itoa(c.segments)+" segments")
			}
			for k, rec := range recs {
				if c.segments > 0 {
					assert.Equal(t, k+1, rec.Segment)
				}
				assert.Equal(t, path, rec.Source)
				assert.Equal(t, math.Float64bits(c.interval), math.Float64bits(rec.Interval_s), "%.17g", rec.Interval_s)
				require.Len(t, rec.Channels, len(c.names))
				assert.Equal(t, c.over[k], rec.Channels[0].OverRange, "record %d", k+1)
				rows := want[k]
				require.Len(t, rows, rec.Len())
				assert.InDelta(t, rows[0][0], rec.Start_s, 1e-15)
				assert.InDelta(t, rows[len(rows)-1][0], rec.Time_s(rec.Len()-1), 1e-12)
				for j, ch := range rec.Channels {
					assert.Equal(t, c.names[j], ch.Name)
					assert.Equal(t, c.units[j], ch.Unit)
					for i, v := range ch.Samples {
						require.InDelta(t, rows[i][j+1], v, 1e-9*math.Max(1, math.Abs(v)), "segment %d channel %s sample %d", k+1, ch.Name, i)
					}
				}
			}
		})
	}
}

// readExpected reads "segment,t,ch..." rows into [segment][row][t, ch...]; segment 0
// is a file of one record.
func readExpected(t *testing.T, path string) [][][]float64 {
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	require.NoError(t, err)
	var out [][][]float64
	for _, r := range rows[1:] {
		seg, err := strconv.Atoi(r[0])
		require.NoError(t, err)
		k := max(seg-1, 0)
		for len(out) <= k {
			out = append(out, nil)
		}
		var vals []float64
		for _, c := range r[1:] {
			v, err := strconv.ParseFloat(c, 64)
			require.NoError(t, err)
			vals = append(vals, v)
		}
		out[k] = append(out[k], vals)
	}
	return out
}

// The fuzz targets start from files of each layout written by the tests and by the
// Python script, whole (they are small), so that plain go test runs those seeds.
func seedSelfDescribing(f *testing.F, glob string, built ...[]byte) {
	for _, b := range built {
		f.Add(b)
	}
	files, _ := filepath.Glob(filepath.Join("../testdata/readers", glob))
	for _, p := range files {
		if b, err := os.ReadFile(p); err == nil && len(b) <= 64<<10 {
			f.Add(b)
		}
	}
}
