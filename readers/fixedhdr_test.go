package readers

import (
	"bytes"
	"encoding/binary"
	"io"
	"math"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// fixedSpec describes a test file in the fixed header layout; values invented. The
// builder writes with its own literal offsets, not the reader's tables.
type fixedSpec struct {
	cookie    string // two letters, default "HV"
	version   string // "10": 4-byte file size; others: 8-byte
	waves     []fixedWaveSpec
	sizeDelta int64 // added to the file size field
	count     int   // waveform count field, when not len(waves)
	tail      []byte
	cut       int
}

type fixedWaveSpec struct {
	label        string
	waveType     int32 // default 1
	buffers      int32 // default 1
	xinc, x0     float64
	xunit, yunit int32 // defaults 2 and 1
	date, clock  string
	floats       []float32
	ints         []int64
	bpp          int16
	bufType      int16
	segment      uint32
	tag          float64
	hdrSize      int32 // default 140
	wideData     bool  // a 16-byte data header with an 8-byte buffer size
	bufSizeDelta int32
	points       int32 // when not the sample count
}

func buildFixed(s fixedSpec) []byte {
	le := binary.LittleEndian
	if s.cookie == "" {
		s.cookie = "HV"
	}
	var body []byte
	for _, w := range s.waves {
		if w.waveType == 0 {
			w.waveType = 1
		}
		if w.buffers == 0 {
			w.buffers = 1
		}
		if w.xinc == 0 {
			w.xinc = 5e-9
		}
		if w.xunit == 0 {
			w.xunit = 2
		}
		if w.yunit == 0 {
			w.yunit = 1
		}
		if w.hdrSize == 0 {
			w.hdrSize = 140
		}
		if w.date == "" {
			w.date, w.clock = "07 MAR 2024", "13:05:41"
		}
		var data []byte
		n := len(w.floats)
		if w.ints != nil {
			n = len(w.ints)
			if w.bpp == 0 {
				w.bpp = 2
			}
			if w.bufType == 0 {
				w.bufType = 5
			}
			for _, v := range w.ints {
				switch w.bpp {
				case 1:
					data = append(data, byte(v))
				case 2:
					data = le.AppendUint16(data, uint16(v))
				case 4:
					data = le.AppendUint32(data, uint32(v))
				}
			}
		} else {
			w.bpp = 4
			if w.bufType == 0 {
				w.bufType = 1
			}
			for _, v := range w.floats {
				data = le.AppendUint32(data, math.Float32bits(v))
			}
		}
		if w.points == 0 {
			w.points = int32(n)
		}
		h := make([]byte, w.hdrSize)
		le.PutUint32(h[0:], uint32(w.hdrSize))
		le.PutUint32(h[4:], uint32(w.waveType))
		le.PutUint32(h[8:], uint32(w.buffers))
		le.PutUint32(h[12:], uint32(w.points))
		le.PutUint32(h[16:], 1)
		le.PutUint32(h[20:], math.Float32bits(float32(w.xinc*float64(n))))
		le.PutUint64(h[24:], math.Float64bits(w.x0))
		le.PutUint64(h[32:], math.Float64bits(w.xinc))
		le.PutUint64(h[40:], math.Float64bits(w.x0))
		le.PutUint32(h[48:], uint32(w.xunit))
		le.PutUint32(h[52:], uint32(w.yunit))
		copy(h[56:72], w.date)
		copy(h[72:88], w.clock)
		copy(h[88:112], "INVENTED-SCOPE:0001")
		copy(h[112:128], w.label)
		if w.hdrSize >= 140 {
			le.PutUint64(h[128:], math.Float64bits(w.tag))
			le.PutUint32(h[136:], w.segment)
		}
		dh := make([]byte, 12)
		if w.wideData {
			dh = make([]byte, 16)
			le.PutUint64(dh[8:], uint64(int64(len(data))+int64(w.bufSizeDelta)))
		} else {
			le.PutUint32(dh[8:], uint32(int32(len(data))+w.bufSizeDelta))
		}
		le.PutUint32(dh[0:], uint32(len(dh)))
		le.PutUint16(dh[4:], uint16(w.bufType))
		le.PutUint16(dh[6:], uint16(w.bpp))
		body = append(append(append(body, h...), dh...), data...)
	}
	count := s.count
	if count == 0 {
		count = len(s.waves)
	}
	head := []byte(s.cookie + s.version)
	width := 8
	if s.version == "10" {
		width = 4
	}
	total := int64(len(head)+width+4+len(body)) + s.sizeDelta
	if width == 4 {
		head = le.AppendUint32(head, uint32(total))
	} else {
		head = le.AppendUint64(head, uint64(total))
	}
	head = le.AppendUint32(head, uint32(count))
	b := append(append(head, body...), s.tail...)
	return b[:len(b)-s.cut]
}

func TestReadFixedHeader(t *testing.T) {
	codes := inventedCodes(300, 20000)
	u, i := floatsOf(codes, 0.05), floatsOf(codes, -1e-3)
	stamp := time.Date(2024, 3, 7, 13, 5, 41, 0, time.UTC)
	cases := []struct {
		name   string
		spec   fixedSpec
		names  []string
		units  []string
		want   [][]float64
		notes  []string
		xinc   float64
		x0     float64
		segKey string
	}{
		{"two float32 waveforms, 4-byte file size",
			fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "1", floats: u, x0: -3e-7}, {label: "2", yunit: 4, floats: i, x0: -3e-7}}},
			[]string{"CH1", "CH2"}, []string{"V", "A"}, [][]float64{f64s(u), f64s(i)}, []string{"4-byte file size"}, 5e-9, -3e-7, ""},
		{"a later version: 8-byte file size, 16-byte data header",
			fixedSpec{version: "30", waves: []fixedWaveSpec{{label: "Divider", floats: u, xinc: 1e-9, wideData: true}}},
			[]string{"Divider"}, []string{"V"}, [][]float64{f64s(u)}, []string{"8-byte file size"}, 1e-9, 0, ""},
		{"int16 buffer, unknown y unit",
			fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "3", ints: codes, yunit: 3, xinc: 2e-8, x0: 1e-6}}},
			[]string{"CH3"}, []string{""}, [][]float64{i64s(codes)}, []string{"int16"}, 2e-8, 1e-6, ""},
		{"uint8 buffer, shorter waveform header",
			fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "4", ints: inventedCodes(300, 200), bpp: 1, hdrSize: 128}}},
			[]string{"CH4"}, []string{"V"}, [][]float64{i64s(inventedCodes(300, 200))}, []string{"uint8"}, 5e-9, 0, ""},
		{"a version-10 file whose size field is 8 bytes wide",
			fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "1", floats: u}}}, // rewritten below
			[]string{"CH1"}, []string{"V"}, [][]float64{f64s(u)}, []string{"not the 4 expected"}, 5e-9, 0, "wide10"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			b := buildFixed(c.spec)
			if c.segKey == "wide10" {
				// Write the version-"10" file with an 8-byte size: the reader must see
				// that only that width makes sense, and say so.
				s := c.spec
				s.version = "99"
				b = buildFixed(s)
				copy(b[2:4], "10")
			}
			recs, err := ReadFixedHeader(bytes.NewReader(b), "shot.cap")
			require.NoError(t, err)
			require.Len(t, recs, 1)
			rec := recs[0]
			assert.Equal(t, "fixed-header", rec.Format)
			assert.NotEmpty(t, rec.Layout)
			assert.Equal(t, c.xinc, rec.Interval_s)
			assert.InDelta(t, c.x0, rec.Start_s, 1e-18)
			assert.Equal(t, stamp, rec.Trigger)
			require.Len(t, rec.Channels, len(c.names))
			for k, ch := range rec.Channels {
				assert.Equal(t, c.names[k], ch.Name)
				assert.Equal(t, c.units[k], ch.Unit)
				require.Len(t, ch.Samples, len(c.want[k]))
				for j := range ch.Samples {
					require.InDelta(t, c.want[k][j], ch.Samples[j], 1e-12*math.Max(1, math.Abs(c.want[k][j])), "%s sample %d", ch.Name, j)
				}
			}
			for _, n := range c.notes {
				assert.True(t, hasNote(rec.Notes, n), "%q in %v", n, rec.Notes)
			}
		})
	}
}

func f64s(x []float32) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = float64(v)
	}
	return out
}

func i64s(x []int64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = float64(v)
	}
	return out
}

// Waveforms with distinct segment indices are the segments of one capture: ReadAll
// gives one record each, with the time tag added to the trigger time; Read refuses.
func TestReadFixedHeaderSegments(t *testing.T) {
	a, b := floatsOf(inventedCodes(100, 1000), 1e-2), floatsOf(inventedCodes(100, 2000), 1e-2)
	spec := fixedSpec{version: "10", waves: []fixedWaveSpec{
		{label: "1", floats: a, segment: 1, x0: -1e-7},
		{label: "2", floats: a, yunit: 4, segment: 1, x0: -1e-7},
		{label: "1", floats: b, segment: 2, tag: 0.0125, x0: -1.1e-7},
		{label: "2", floats: b, yunit: 4, segment: 2, tag: 0.0125, x0: -1.1e-7},
	}}
	file := buildFixed(spec)
	_, err := Read(bytes.NewReader(file), "seg.cap", Options{})
	requireParseError(t, err, "seg.cap", ErrSegmented, "2 segments")

	recs, err := ReadAll(bytes.NewReader(file), "seg.cap", Options{})
	require.NoError(t, err)
	require.Len(t, recs, 2)
	stamp := time.Date(2024, 3, 7, 13, 5, 41, 0, time.UTC)
	for k, rec := range recs {
		assert.Equal(t, k+1, rec.Segment)
		require.Len(t, rec.Channels, 2)
		assert.Equal(t, []string{"CH1", "CH2"}, []string{rec.Channels[0].Name, rec.Channels[1].Name})
		want := a
		if k == 1 {
			want = b
		}
		assert.InDelta(t, float64(want[40]), rec.Channels[1].Samples[40], 1e-12)
	}
	assert.InDelta(t, -1e-7, recs[0].Start_s, 1e-18)
	assert.InDelta(t, -1.1e-7, recs[1].Start_s, 1e-18)
	assert.Equal(t, stamp, recs[0].Trigger)
	assert.Equal(t, stamp.Add(12500*time.Microsecond), recs[1].Trigger)
}

func TestReadFixedHeaderBad(t *testing.T) {
	u := floatsOf(inventedCodes(100, 1000), 1e-2)
	one := func(w fixedWaveSpec) fixedSpec {
		if w.floats == nil && w.ints == nil {
			w.floats = u
		}
		return fixedSpec{version: "10", waves: []fixedWaveSpec{w}}
	}
	cases := []struct {
		name  string
		spec  fixedSpec
		err   error
		words []string
	}{
		{"file size field too large", fixedSpec{version: "10", sizeDelta: 10, waves: one(fixedWaveSpec{label: "1"}).waves}, ErrHeader, []string{"file size field 574", "holds 564 bytes"}},
		{"bytes after the last waveform", fixedSpec{version: "10", tail: []byte{1, 2, 3}, waves: one(fixedWaveSpec{label: "1"}).waves}, ErrHeader, []string{"bytes after the last of 1 waveforms"}},
		{"buffer size not points x bytes", one(fixedWaveSpec{bufSizeDelta: -4}), ErrHeader, []string{"buffer size field 396", "point count 100"}},
		{"count beyond the data", fixedSpec{version: "10", count: 3, waves: one(fixedWaveSpec{}).waves}, ErrTruncated, []string{"waveform count field 3", "after 1 waveforms"}},
		{"count far beyond the file", fixedSpec{version: "10", count: 900, waves: one(fixedWaveSpec{}).waves}, ErrHeader, []string{"waveform count 900"}},
		{"peak detect", one(fixedWaveSpec{waveType: 2}), ErrUnsupported, []string{"waveform type 2", "min/max"}},
		{"two buffers", one(fixedWaveSpec{buffers: 2}), ErrUnsupported, []string{"buffer count 2"}},
		{"histogram", one(fixedWaveSpec{waveType: 5}), ErrUnsupported, []string{"histogram"}},
		{"minimum buffer", one(fixedWaveSpec{bufType: 3}), ErrUnsupported, []string{"buffer type 3", "minimum"}},
		{"frequency axis", one(fixedWaveSpec{xunit: 6}), ErrUnsupported, []string{"x unit 6", "not a time record"}},
		{"unknown y unit", one(fixedWaveSpec{yunit: 42}), ErrHeader, []string{"y unit 42"}},
		{"zero interval", one(fixedWaveSpec{xinc: -1}), ErrHeader, []string{"x increment -1"}},
		{"three bytes per point", one(fixedWaveSpec{ints: []int64{1, 2, 3}, bpp: 3}), ErrUnsupported, []string{"3 bytes per point"}},
		{"time bases differ", fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "1", floats: u}, {label: "2", floats: u, xinc: 1e-9}}}, ErrUnsupported, []string{"time base"}},
		{"truncated buffer", fixedSpec{version: "10", cut: 40, waves: one(fixedWaveSpec{}).waves}, ErrTruncated, []string{"waveform 1's buffer", "90 of 100"}},
		{"too few points", one(fixedWaveSpec{floats: u[:3]}), ErrNoData, []string{"3 samples"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			recs, err := ReadFixedHeader(bytes.NewReader(buildFixed(c.spec)), "bad.cap")
			assert.Nil(t, recs)
			requireParseError(t, err, "bad.cap", c.err, c.words...)
		})
	}
	// A waveform header size field below the header's fixed fields.
	b := buildFixed(one(fixedWaveSpec{}))
	binary.LittleEndian.PutUint32(b[12:], 100)
	_, err := ReadFixedHeader(bytes.NewReader(b), "bad.cap")
	pe := requireParseError(t, err, "bad.cap", ErrHeader, "header size field 100")
	assert.Equal(t, int64(12), pe.Offset)
}

// A header claiming many points on a stream of unknown size: memory follows the data.
func TestReadFixedHeaderHugeClaimOnStream(t *testing.T) {
	b := buildFixed(fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "1", floats: floatsOf(inventedCodes(100, 1000), 1), points: 250_000_000, bufSizeDelta: 1_000_000_000 - 400}}})
	stream := func() io.Reader { return io.MultiReader(bytes.NewReader(b)) }
	_, err := ReadFixedHeader(stream(), "stream")
	requireParseError(t, err, "stream", ErrTruncated, "100 of 250000000")
	assert.Less(t, allocatedBytes(func() { _, _ = ReadFixedHeader(stream(), "stream") }), uint64(4<<20))
}

func FuzzReadFixedHeader(f *testing.F) {
	seedSelfDescribing(f, "py_fixed*.cap",
		buildFixed(fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "1", floats: []float32{1, 2, 3, 4, 5, 6, 7, 8}}, {label: "2", floats: []float32{8, 7, 6, 5, 4, 3, 2, 1}}}}),
		buildFixed(fixedSpec{version: "30", waves: []fixedWaveSpec{{label: "1", ints: []int64{1, 2, 3, 4, 5, 6, 7, 8}, wideData: true}}}),
		buildFixed(fixedSpec{version: "10", waves: []fixedWaveSpec{{label: "1", floats: []float32{1, 2, 3, 4, 5, 6, 7, 8}, segment: 1}, {label: "1", floats: []float32{1, 2, 3, 4, 5, 6, 7, 8}, segment: 2, tag: 1}}}),
	)
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzReader(t, data, func(b []byte) (any, error) {
			recs, err := ReadFixedHeader(bytes.NewReader(b), "fuzz.cap")
			if err == nil {
				if len(recs) == 0 {
					t.Fatal("no records and no error")
				}
				for _, r := range recs {
					if verr := r.Validate(); verr != nil {
						t.Fatalf("invalid record returned: %v", verr)
					}
				}
			}
			return recs, err
		})
	})
}
