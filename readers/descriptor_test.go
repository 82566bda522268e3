package readers

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// descSpec describes a test file in the descriptor block layout; values invented. The
// builder writes the descriptor with its own literal offsets, not the reader's table.
type descSpec struct {
	little, int8     bool
	prefix           string
	codes            []int64
	segments         int
	trig             [][2]float64 // per segment: trigger time from the first, offset to first sample
	gain, offset     float32
	maxCode, minCode float32
	interval         float32
	horizOffset      float64
	vunit, hunit     string
	source           int16
	label            string
	userText         string
	recordType       int16
	noStamp          bool
	patch            func(d []byte, o binary.ByteOrder) // changes the descriptor before writing
	cut              int
	tail             []byte
}

func (s *descSpec) defaults() {
	if s.gain == 0 {
		s.gain = 3.125e-5
	}
	if s.maxCode == 0 && s.minCode == 0 {
		s.maxCode, s.minCode = 32000, -32000
		if s.int8 {
			s.maxCode, s.minCode = 125, -125
		}
	}
	if s.interval == 0 {
		s.interval = 2e-9
	}
	if s.vunit == "" {
		s.vunit = "V"
	}
	if s.hunit == "" {
		s.hunit = "S"
	}
	if s.segments == 0 {
		s.segments = 1
	}
	if s.recordType == 0 && s.segments > 1 {
		s.recordType = 7
	}
}

func buildDescriptor(s descSpec) []byte {
	s.defaults()
	var o bothOrders = binary.BigEndian
	if s.little {
		o = binary.LittleEndian
	}
	size := 2
	if s.int8 {
		size = 1
	}
	var data []byte
	for _, c := range s.codes {
		if s.int8 {
			data = append(data, byte(c))
		} else {
			data = o.AppendUint16(data, uint16(c))
		}
	}
	var trig []byte
	if s.segments > 1 {
		for k := 0; k < s.segments; k++ {
			var e [2]float64
			if k < len(s.trig) {
				e = s.trig[k]
			}
			trig = o.AppendUint64(trig, math.Float64bits(e[0]))
			trig = o.AppendUint64(trig, math.Float64bits(e[1]))
		}
	}
	d := make([]byte, 346)
	copy(d[0:], "DESCBLOCK")
	copy(d[16:], "TMPL_2_3")
	o.PutUint16(d[32:], uint16(size-1))
	if s.little {
		o.PutUint16(d[34:], 1)
	}
	o.PutUint32(d[36:], 346)
	o.PutUint32(d[40:], uint32(len(s.userText)))
	o.PutUint32(d[48:], uint32(len(trig)))
	o.PutUint32(d[60:], uint32(len(data)))
	copy(d[76:], "INVENTED-SCOPE")
	o.PutUint32(d[92:], 4242)
	copy(d[96:], s.label)
	o.PutUint32(d[116:], uint32(len(s.codes)))
	o.PutUint32(d[124:], 0)
	o.PutUint32(d[128:], uint32(len(s.codes)-1))
	o.PutUint32(d[144:], uint32(s.segments))
	o.PutUint32(d[156:], math.Float32bits(s.gain))
	o.PutUint32(d[160:], math.Float32bits(s.offset))
	o.PutUint32(d[164:], math.Float32bits(s.maxCode))
	o.PutUint32(d[168:], math.Float32bits(s.minCode))
	o.PutUint16(d[172:], 8)
	o.PutUint32(d[176:], math.Float32bits(s.interval))
	o.PutUint64(d[180:], math.Float64bits(s.horizOffset))
	copy(d[196:], s.vunit)
	copy(d[244:], s.hunit)
	if !s.noStamp {
		o.PutUint64(d[296:], math.Float64bits(41.25)) // 2024-03-07 13:05:41.25, invented
		d[304], d[305], d[306], d[307] = 5, 13, 7, 3
		o.PutUint16(d[308:], 2024)
	}
	o.PutUint16(d[316:], uint16(s.recordType))
	o.PutUint16(d[344:], uint16(s.source))
	if s.patch != nil {
		s.patch(d, o)
	}
	body := append(append(append(d, s.userText...), trig...), data...)
	b := []byte(s.prefix + fmt.Sprintf("#9%09d", len(body)))
	b = append(append(b, body...), s.tail...)
	return b[:len(b)-s.cut]
}

func (s descSpec) want() []float64 {
	s.defaults()
	g, _ := decimal32(s.gain)
	off, _ := decimal32(s.offset)
	out := make([]float64, len(s.codes))
	for i, c := range s.codes {
		out[i] = g*float64(c) - off
	}
	return out
}

func TestReadDescriptor(t *testing.T) {
	codes := inventedCodes(400, 30000)
	clipped := append([]int64{}, codes...)
	for i := 100; i < 106; i++ {
		clipped[i] = 32767 // beyond the stated largest code, 32000
	}
	clipped[300] = -32768
	cases := []struct {
		name  string
		spec  descSpec
		ch    string
		order string
		over  int
	}{
		{"int16 little-endian", descSpec{little: true, codes: codes, horizOffset: -1.5e-7, source: 1}, "CH2", "little-endian", 0},
		{"int16 big-endian", descSpec{codes: codes, horizOffset: -2e-7, offset: 0.125}, "CH1", "big-endian", 0},
		{"int8 big-endian, text before the block", descSpec{int8: true, prefix: "SHOT7,", codes: inventedCodes(300, 120), gain: 0.004, interval: 1e-10}, "CH1", "big-endian", 0},
		{"clipped codes", descSpec{little: true, codes: clipped, gain: 2.5e-3}, "CH1", "little-endian", 7},
		{"user text and a trace label", descSpec{little: true, codes: codes, userText: "divider 1:2000, invented", source: 9, label: "Divider"}, "Divider", "little-endian", 0},
		{"current in amperes", descSpec{codes: codes, vunit: "A", source: 3}, "CH4", "big-endian", 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s := c.spec
			s.defaults()
			recs, err := ReadDescriptor(bytes.NewReader(buildDescriptor(c.spec)), "shot.cap")
			require.NoError(t, err)
			require.Len(t, recs, 1)
			rec := recs[0]
			assert.Equal(t, "descriptor", rec.Format)
			assert.Contains(t, rec.Layout, c.order)
			assert.Equal(t, 0, rec.Segment)
			iv, _ := decimal32(s.interval)
			assert.Equal(t, math.Float64bits(iv), math.Float64bits(rec.Interval_s), "interval %.17g", rec.Interval_s)
			assert.InDelta(t, s.horizOffset, rec.Start_s, 1e-18)
			require.Len(t, rec.Channels, 1)
			ch := rec.Channels[0]
			assert.Equal(t, c.ch, ch.Name)
			assert.Equal(t, s.vunit, ch.Unit)
			want := s.want()
			require.Len(t, ch.Samples, len(want))
			for i := range want {
				require.InDelta(t, want[i], ch.Samples[i], 1e-12, "sample %d", i)
			}
			assert.Equal(t, c.over, ch.OverRange)
			g, _ := decimal32(s.gain)
			assert.True(t, ch.HasRange)
			off, _ := decimal32(s.offset)
			assert.InDelta(t, g*float64(s.maxCode)-off, ch.RangeMax, 1e-9)
			assert.InDelta(t, g*float64(s.minCode)-off, ch.RangeMin, 1e-9)
			assert.Equal(t, c.over > 0, len(rec.Warnings) > 0, rec.Warnings)
			assert.Equal(t, 8, ch.ADCBits)
			assert.Equal(t, time.Date(2024, 3, 7, 13, 5, 41, 250e6, time.UTC), rec.Trigger)
			assert.True(t, hasNote(rec.Notes, "interval from the header's float32"), rec.Notes)
			assert.True(t, hasNote(rec.Notes, "data start at byte"), rec.Notes)
			if s.userText != "" {
				assert.Equal(t, s.userText, rec.Meta["user text"])
			}
		})
	}
}

// The float32 interval 2e-9 is 1.99999994e-9 in binary; the record says 2e-9 and the
// note says both.
func TestReadDescriptorDecimalInterval(t *testing.T) {
	recs, err := ReadDescriptor(bytes.NewReader(buildDescriptor(descSpec{little: true, codes: inventedCodes(64, 1000)})), "shot.cap")
	require.NoError(t, err)
	assert.Equal(t, 2e-9, recs[0].Interval_s)
	assert.NotEqual(t, float64(float32(2e-9)), recs[0].Interval_s)
	assert.True(t, hasNote(recs[0].Notes, "interval", "2e-09", "decimal", "1.99999994e-09"), recs[0].Notes)
}

func TestReadDescriptorSequence(t *testing.T) {
	const segs, per = 3, 120
	var codes []int64
	for k := 0; k < segs; k++ {
		codes = append(codes, inventedCodes(per, float64(10000*(k+1)))...)
	}
	codes[per+10] = 32700 // one clipped code, in segment 2
	trig := [][2]float64{{0, -1e-7}, {1.5e-3, -1.02e-7}, {3.25, -0.98e-7}}
	for _, little := range []bool{false, true} {
		spec := descSpec{little: little, codes: codes, segments: segs, trig: trig, horizOffset: -1e-7}
		b := buildDescriptor(spec)

		_, err := Read(bytes.NewReader(b), "seq.cap", Options{})
		requireParseError(t, err, "seq.cap", ErrSegmented, "3 segments", "ReadAll")

		recs, err := ReadAll(bytes.NewReader(b), "seq.cap", Options{})
		require.NoError(t, err)
		require.Len(t, recs, segs)
		want := spec.want()
		base := time.Date(2024, 3, 7, 13, 5, 41, 250e6, time.UTC)
		for k, rec := range recs {
			assert.Equal(t, k+1, rec.Segment)
			assert.Equal(t, "seq.cap", rec.Source)
			assert.InDelta(t, trig[k][1], rec.Start_s, 1e-18)
			assert.Equal(t, base.Add(time.Duration(math.Round(trig[k][0]*1e9))), rec.Trigger)
			require.Equal(t, per, rec.Len())
			for i, v := range rec.Channels[0].Samples {
				require.InDelta(t, want[k*per+i], v, 1e-12, "segment %d sample %d", k+1, i)
			}
			assert.Equal(t, map[bool]int{true: 1, false: 0}[k == 1], rec.Channels[0].OverRange, "segment %d", k+1)
			assert.True(t, hasNote(rec.Notes, fmt.Sprintf("segment %d of 3", k+1)), rec.Notes)
		}
		// The segments do not share storage.
		recs[0].Channels[0].Samples = append(recs[0].Channels[0].Samples, 99)
		assert.InDelta(t, want[per], recs[1].Channels[0].Samples[0], 1e-12)
	}
}

func TestReadDescriptorBad(t *testing.T) {
	codes := inventedCodes(100, 1000)
	with := func(f func(*descSpec)) []byte {
		s := descSpec{little: true, codes: codes}
		f(&s)
		return buildDescriptor(s)
	}
	patch := func(p func(d []byte, o binary.ByteOrder)) []byte {
		return with(func(s *descSpec) { s.patch = p })
	}
	cases := []struct {
		name  string
		in    []byte
		err   error
		words []string
	}{
		{"lengths do not add up", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[60:], 150) }), ErrHeader, []string{"add up to 496", "block header says 546"}},
		{"data length not the point count", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[116:], 90) }), ErrHeader, []string{"data array length 200", "point count 90"}},
		{"negative length", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[64:], 0xffffffff) }), ErrHeader, []string{"second data array length is -1"}},
		{"array past the end", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[60:], 1<<30) }), ErrTruncated, []string{"data array length 1073741824", "past the end"}},
		{"segments without their trigger times", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[144:], 4) }), ErrHeader, []string{"trigger-time array length 0", "4 segments"}},
		{"segments that do not divide", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[144:], 3) }), ErrHeader, []string{"100 points", "3 segments"}},
		{"no segments", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[144:], 0) }), ErrHeader, []string{"segment count 0"}},
		{"sample size 2", patch(func(d []byte, o binary.ByteOrder) { o.PutUint16(d[32:], 2) }), ErrHeader, []string{"sample-size field is 2"}},
		{"descriptor length too small", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[36:], 100) }), ErrHeader, []string{"descriptor length 100"}},
		{"extrema record", with(func(s *descSpec) { s.recordType = 6 }), ErrUnsupported, []string{"record type 6", "min/max"}},
		{"unknown record type", with(func(s *descSpec) { s.recordType = 40 }), ErrUnsupported, []string{"record type 40"}},
		{"not a time record", with(func(s *descSpec) { s.hunit = "Hz" }), ErrUnsupported, []string{"horizontal unit \"Hz\""}},
		{"zero interval", patch(func(d []byte, o binary.ByteOrder) { o.PutUint32(d[176:], 0) }), ErrHeader, []string{"interval is 0"}},
		{"NaN gain", with(func(s *descSpec) { s.gain = float32(math.NaN()) }), ErrHeader, []string{"vertical gain"}},
		{"infinite first-sample offset", with(func(s *descSpec) { s.horizOffset = math.Inf(1) }), ErrHeader, []string{"first-sample offset"}},
		{"truncated data", with(func(s *descSpec) { s.cut = 30 }), ErrTruncated, []string{"block length"}},
		{"bytes after the block", with(func(s *descSpec) { s.tail = []byte("extra") }), ErrHeader, []string{"bytes after the block"}},
		{"bad byte-order field", patch(func(d []byte, o binary.ByteOrder) { d[34], d[35] = 7, 7 }), ErrHeader, []string{"byte-order field"}},
		{"too few samples", with(func(s *descSpec) { s.codes = codes[:4] }), ErrNoData, []string{"4 samples"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			recs, err := ReadDescriptor(bytes.NewReader(c.in), "bad.cap")
			assert.Nil(t, recs)
			requireParseError(t, err, "bad.cap", c.err, c.words...)
		})
	}
	// Through Read, a block whose header the sniffer cannot take is still refused
	// with a ParseError, never read as something else.
	_, err := Read(bytes.NewReader(patch(func(d []byte, o binary.ByteOrder) { d[34], d[35] = 7, 7 })), "bad.cap", Options{})
	requireParseError(t, err, "bad.cap", ErrBinary)
}

// On a stream of unknown size, lengths claimed far beyond the data cost no memory
// beyond what arrives.
func TestReadDescriptorHugeClaimOnStream(t *testing.T) {
	b := buildDescriptor(descSpec{little: true, codes: inventedCodes(100, 1000), patch: func(d []byte, o binary.ByteOrder) {
		o.PutUint32(d[116:], 200_000_000)
		o.PutUint32(d[60:], 400_000_000)
	}})
	// Make the block header agree with the lengths, so the reader gets to the data.
	copy(b[2:11], fmt.Sprintf("%09d", 346+400_000_000))
	stream := func() io.Reader { return io.MultiReader(bytes.NewReader(b)) }
	_, err := ReadDescriptor(stream(), "stream")
	requireParseError(t, err, "stream", ErrTruncated, "100 of 200000000")
	assert.Less(t, allocatedBytes(func() { _, _ = ReadDescriptor(stream(), "stream") }), uint64(4<<20))
}

func FuzzReadDescriptor(f *testing.F) {
	seedSelfDescribing(f, "py_descriptor*.cap",
		buildDescriptor(descSpec{little: true, codes: inventedCodes(16, 1000)}),
		buildDescriptor(descSpec{int8: true, prefix: "SHOT,", codes: inventedCodes(16, 100), userText: "note"}),
		buildDescriptor(descSpec{codes: inventedCodes(32, 1000), segments: 2, trig: [][2]float64{{0, -1e-8}, {1e-3, -1.1e-8}}}),
	)
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzReader(t, data, func(b []byte) (any, error) {
			recs, err := ReadDescriptor(bytes.NewReader(b), "fuzz.cap")
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
