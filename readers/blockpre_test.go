package readers

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// blockSpec describes a test file in the preamble and block layout; values invented.
type blockSpec struct {
	prefix       string // header path before the first key, default ":PRE:"
	short, lower bool   // abbreviated spellings; lower-case keys
	recur        bool   // restate the prefix mid-preamble
	lineBreak    bool   // the curve on a line of its own
	bytes        int
	format       string // RI, RP, FP
	order        string // MSB, LSB
	wfid         string
	xunit, yunit string
	ptfmt        string
	xincr, xzero float64
	ptoff        float64
	ymult, yoff  float64
	yzero        float64
	codes        []int64
	floats       []float64 // FP samples, instead of codes
	omit         []string  // long spellings of keys to leave out
	set          map[string]string
	blockHeader  string // replaces "#<n><len>"
	cut          int    // bytes to drop from the end of the file
}

func (s *blockSpec) defaults() {
	if s.prefix == "" {
		s.prefix = ":PRE:"
	}
	if s.wfid == "" {
		s.wfid = "Ch1, DC coupling, 2.000V/div, 500.0ns/div, 1000 points, Sample mode"
	}
	if s.xunit == "" {
		s.xunit = "s"
	}
	if s.yunit == "" {
		s.yunit = "V"
	}
	if s.ptfmt == "" {
		s.ptfmt = "Y"
	}
	if s.xincr == 0 {
		s.xincr = 4e-9
	}
	if s.ymult == 0 {
		s.ymult = 1.5625e-5
	}
}

func (s blockSpec) points() int {
	if s.floats != nil {
		return len(s.floats)
	}
	return len(s.codes)
}

func (s blockSpec) data() []byte {
	var order bothOrders = binary.BigEndian
	if s.order == "LSB" {
		order = binary.LittleEndian
	}
	var b []byte
	if s.floats != nil {
		for _, v := range s.floats {
			if s.bytes == 8 {
				b = order.AppendUint64(b, math.Float64bits(v))
			} else {
				b = order.AppendUint32(b, math.Float32bits(float32(v)))
			}
		}
		return b
	}
	for _, c := range s.codes {
		switch s.bytes {
		case 1:
			b = append(b, byte(c))
		case 2:
			b = order.AppendUint16(b, uint16(c))
		case 4:
			b = order.AppendUint32(b, uint32(c))
		}
	}
	return b
}

func (s blockSpec) preamble() string {
	s.defaults()
	omitted := map[string]bool{}
	for _, o := range s.omit {
		omitted[o] = true
	}
	var units []string
	add := func(long, short, val string) {
		if omitted[long] {
			return
		}
		if v, ok := s.set[long]; ok {
			val = v
		}
		k := long
		if s.short {
			k = short
		}
		if s.lower {
			k = strings.ToLower(k)
		}
		units = append(units, k+" "+val)
	}
	g := func(v float64) string { return strconv.FormatFloat(v, 'E', 4, 64) }
	add("BYT_NR", "BYT_N", strconv.Itoa(s.bytes))
	add("BIT_NR", "BIT_N", strconv.Itoa(8*s.bytes))
	add("ENCDG", "ENC", "BIN")
	add("BN_FMT", "BN_F", s.format)
	add("BYT_OR", "BYT_O", s.order)
	add("WFID", "WFI", strconv.Quote(s.wfid))
	add("NR_PT", "NR_P", strconv.Itoa(s.points()))
	add("PT_FMT", "PT_F", s.ptfmt)
	add("XUNIT", "XUN", strconv.Quote(s.xunit))
	add("XINCR", "XIN", strconv.FormatFloat(s.xincr, 'g', -1, 64))
	add("XZERO", "XZE", g(s.xzero))
	add("PT_OFF", "PT_O", strconv.FormatFloat(s.ptoff, 'f', -1, 64))
	add("YUNIT", "YUN", strconv.Quote(s.yunit))
	add("YMULT", "YMU", strconv.FormatFloat(s.ymult, 'g', -1, 64))
	add("YOFF", "YOF", g(s.yoff))
	add("YZERO", "YZE", g(s.yzero))
	if s.recur && len(units) > 9 {
		units[9] = s.prefix + units[9]
	}
	return s.prefix + strings.Join(units, ";")
}

func buildBlock(s blockSpec) []byte {
	s.defaults()
	data := s.data()
	hdr := s.blockHeader
	if hdr == "" {
		n := strconv.Itoa(len(data))
		hdr = "#" + strconv.Itoa(len(n)) + n
	}
	curve := ":CURVE "
	if s.short {
		curve = ":CURV "
	}
	sep := ";"
	if s.lineBreak {
		sep = "\n"
	}
	b := []byte(s.preamble() + sep + curve + hdr)
	b = append(append(b, data...), '\n')
	return b[:len(b)-s.cut]
}

// want is what the layout's formula gives for the spec's samples.
func (s blockSpec) want() []float64 {
	s.defaults()
	if s.floats != nil {
		out := make([]float64, len(s.floats))
		for i, v := range s.floats {
			if s.bytes == 4 {
				v = float64(float32(v))
			}
			out[i] = (v-s.yoff)*s.ymult + s.yzero
		}
		return out
	}
	out := make([]float64, len(s.codes))
	for i, c := range s.codes {
		out[i] = (float64(c)-s.yoff)*s.ymult + s.yzero
	}
	return out
}

func TestReadBlock(t *testing.T) {
	codes16 := inventedCodes(500, 25000)
	codes8 := inventedCodes(300, 120)
	codesU := make([]int64, len(codes16))
	for i, c := range codes16 {
		codesU[i] = c + 32768
	}
	floats := make([]float64, 200)
	for i := range floats {
		floats[i] = 0.25 * float64(codes16[i*2]) / 25000
	}
	cases := []struct {
		name  string
		spec  blockSpec
		ch    string
		unit  string
		order string
	}{
		{"long keys, int16 big-endian", blockSpec{bytes: 2, format: "RI", order: "MSB", xzero: -2e-7, ptoff: 0, ymult: 1.6e-3, yoff: 12, yzero: 0.5, codes: codes16}, "CH1", "V", "big-endian"},
		{"abbreviated lower-case keys, int8, prefix restated", blockSpec{short: true, lower: true, recur: true, bytes: 1, format: "RI", order: "MSB", wfid: "Ch3, AC coupling; 50mV/div", xincr: 1e-9, xzero: 1e-7, ptoff: 30, ymult: 2e-3, yoff: -3, codes: codes8, yunit: "A"}, "CH3", "A", "big-endian"},
		{"uint16 little-endian, curve on its own line", blockSpec{lineBreak: true, bytes: 2, format: "RP", order: "LSB", xincr: 2e-8, ymult: 1e-2, yoff: 32768, codes: codesU}, "CH1", "V", "little-endian"},
		{"float32 little-endian", blockSpec{bytes: 4, format: "FP", order: "LSB", ymult: 1, wfid: "Math1, derived", floats: floats}, "Math1", "V", "little-endian"},
		{"float64 big-endian, no waveform id", blockSpec{bytes: 8, format: "FP", order: "MSB", ymult: 1, floats: floats, omit: []string{"WFID"}, prefix: ":PREAMBLE:CH2:"}, "CH2", "V", "big-endian"},
		{"unit in kilovolts", blockSpec{bytes: 2, format: "RI", order: "LSB", yunit: "kV", ymult: 1e-3, codes: codes16}, "CH1", "V", "little-endian"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			b := buildBlock(c.spec)
			rec, err := ReadBlock(bytes.NewReader(b), "shot.cap")
			require.NoError(t, err)
			s := c.spec
			s.defaults()
			assert.Equal(t, "preamble-block", rec.Format)
			assert.Contains(t, rec.Layout, c.order)
			assert.InEpsilon(t, s.xincr, rec.Interval_s, 1e-12)
			assert.InDelta(t, s.xzero-s.xincr*s.ptoff, rec.Start_s, 1e-18)
			require.Len(t, rec.Channels, 1)
			ch := rec.Channels[0]
			assert.Equal(t, c.ch, ch.Name)
			assert.Equal(t, c.unit, ch.Unit)
			want := s.want()
			factor := 1.0
			if s.yunit == "kV" {
				factor = 1e3
			}
			require.Len(t, ch.Samples, len(want))
			for i := range want {
				require.InDelta(t, want[i]*factor, ch.Samples[i], 1e-12*math.Max(1, math.Abs(want[i]*factor)), "sample %d", i)
			}
			assert.True(t, hasNote(rec.Notes, "value = (code"), rec.Notes)
			assert.True(t, hasNote(rec.Notes, "time: t ="), rec.Notes)
			assert.Equal(t, s.floats == nil, ch.HasRange)
		})
	}
}

func TestReadBlockTwoWaveforms(t *testing.T) {
	a := blockSpec{bytes: 2, format: "RI", order: "MSB", ymult: 1e-3, codes: inventedCodes(100, 30000)}
	b := blockSpec{bytes: 2, format: "RI", order: "MSB", ymult: 5e-4, wfid: "Ch2, DC coupling", yunit: "A", codes: inventedCodes(100, -20000)}
	file := append(buildBlock(a), buildBlock(b)...)
	rec, err := Read(bytes.NewReader(file), "pair.cap", Options{})
	require.NoError(t, err)
	require.Len(t, rec.Channels, 2)
	assert.Equal(t, []string{"CH1", "CH2"}, []string{rec.Channels[0].Name, rec.Channels[1].Name})
	assert.Equal(t, "A", rec.Channels[1].Unit)
	assert.InDelta(t, b.want()[50], rec.Channels[1].Samples[50], 1e-12)

	// Different time bases cannot share a record.
	c := b
	c.xincr = 8e-9
	_, err = Read(bytes.NewReader(append(buildBlock(a), buildBlock(c)...)), "pair.cap", Options{})
	requireParseError(t, err, "pair.cap", ErrUnsupported, "waveform 2", "time base")
}

// A code at the limit of its type is at the end of the range the file can express: the
// channel's range ends there, so the analysis can see the sample as clipped.
func TestReadBlockCodeLimitIsRangeEnd(t *testing.T) {
	for _, c := range []struct {
		bytes  int
		format string
		limit  int64
	}{{1, "RI", 127}, {2, "RI", 32767}, {2, "RP", 65535}} {
		codes := inventedCodes(200, float64(c.limit)/2)
		if c.format == "RP" {
			for i := range codes {
				codes[i] += 1000
			}
		}
		codes[60], codes[61] = c.limit, c.limit
		s := blockSpec{bytes: c.bytes, format: c.format, order: "LSB", ymult: 0.01, yoff: 3, yzero: 1, codes: codes}
		rec, err := ReadBlock(bytes.NewReader(buildBlock(s)), "clip.cap")
		require.NoError(t, err)
		ch := rec.Channels[0]
		require.True(t, ch.HasRange)
		want := (float64(c.limit)-3)*0.01 + 1
		assert.InDelta(t, want, ch.RangeMax, 1e-12, "%d-byte %s", c.bytes, c.format)
		assert.InDelta(t, ch.RangeMax, ch.Samples[60], 1e-12)
		assert.Less(t, ch.Samples[59], ch.RangeMax)
	}
}

func TestReadBlockBad(t *testing.T) {
	ok := blockSpec{bytes: 2, format: "RI", order: "MSB", codes: inventedCodes(100, 1000)}
	with := func(f func(*blockSpec)) []byte {
		s := ok
		f(&s)
		return buildBlock(s)
	}
	cases := []struct {
		name  string
		in    []byte
		err   error
		words []string
	}{
		{"envelope", with(func(s *blockSpec) { s.ptfmt = "ENV" }), ErrUnsupported, []string{"PT_FMT", "envelope"}},
		{"point count disagrees", with(func(s *blockSpec) { s.set = map[string]string{"NR_PT": "120"} }), ErrHeader, []string{"NR_PT", "120", "100 samples"}},
		{"odd block length", with(func(s *blockSpec) { s.blockHeader = "#3199" }), ErrHeader, []string{"block length 199"}},
		{"no multiplier", with(func(s *blockSpec) { s.omit = []string{"YMULT"} }), ErrHeader, []string{"YMULT"}},
		{"no byte order", with(func(s *blockSpec) { s.omit = []string{"BYT_OR"} }), ErrHeader, []string{"BYT_OR"}},
		{"bad byte order", with(func(s *blockSpec) { s.order = "MIDDLE" }), ErrHeader, []string{"BYT_OR", "MIDDLE"}},
		{"truncated data", with(func(s *blockSpec) { s.cut = 51 }), ErrTruncated, []string{"block length 200", "ends 150 bytes after"}},
		{"block claims 100 MB", with(func(s *blockSpec) { s.blockHeader = "#9100000000" }), ErrTruncated, []string{"block length 100000000"}},
		{"block claims more than MaxSamples", with(func(s *blockSpec) { s.blockHeader = "#9999999998" }), ErrTooLarge, []string{"block length"}},
		{"indefinite block", with(func(s *blockSpec) { s.blockHeader = "#0" }), ErrUnsupported, []string{"#0"}},
		{"frequency axis", with(func(s *blockSpec) { s.xunit = "Hz" }), ErrUnsupported, []string{"XUNIT", "not a time record"}},
		{"ASCII curve", with(func(s *blockSpec) { s.set = map[string]string{"ENCDG": "ASCII"} }), ErrUnsupported, []string{"ENCDG"}},
		{"bits beyond bytes", with(func(s *blockSpec) { s.set = map[string]string{"BIT_NR": "24"} }), ErrHeader, []string{"BIT_NR"}},
		{"three-byte samples", with(func(s *blockSpec) { s.set = map[string]string{"BYT_NR": "3"} }), ErrUnsupported, []string{"BYT_NR"}},
		{"interval not a number", with(func(s *blockSpec) { s.set = map[string]string{"XINCR": "fast"} }), ErrHeader, []string{"XINCR", "fast"}},
		{"zero interval", with(func(s *blockSpec) { s.set = map[string]string{"XINCR": "0"} }), ErrHeader, []string{"XINCR"}},
		{"unclosed quote", []byte(`:PRE:BYT_NR 2;WFID "Ch1, open`), ErrTruncated, []string{"quoted"}},
		{"no curve", []byte(":PRE:BYT_NR 2;BYT_OR MSB;XINCR 1e-9\n"), ErrHeader, []string{"without a curve block"}},
		{"garbage after the block", append(with(func(*blockSpec) {}), 0xff, 0xfe), ErrHeader, []string{"expected a preamble key"}},
		{"too few samples", with(func(s *blockSpec) { s.codes = s.codes[:5] }), ErrNoData, []string{"5 samples"}},
		{"endless preamble", []byte(":PRE:BYT_NR 2;" + strings.Repeat("XZERO 0;", 10000)), ErrTooLarge, []string{"preamble longer"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec, err := Read(bytes.NewReader(c.in), "bad.cap", Options{})
			assert.Nil(t, rec)
			requireParseError(t, err, "bad.cap", c.err, c.words...)
		})
	}
}

// A header claiming a huge block on a stream of unknown size must not allocate for
// the claim: the samples grow with the data that arrive.
func TestReadBlockHugeClaimOnStream(t *testing.T) {
	b := buildBlock(blockSpec{bytes: 2, format: "RI", order: "MSB", codes: inventedCodes(100, 1000), blockHeader: "#9500000000", omit: []string{"NR_PT"}})
	stream := func() io.Reader { return io.MultiReader(bytes.NewReader(b)) } // no Len: size unknown
	_, err := ReadBlock(stream(), "stream")
	requireParseError(t, err, "stream", ErrTruncated, "100 of 250000000")
	assert.Less(t, allocatedBytes(func() { _, _ = ReadBlock(stream(), "stream") }), uint64(4<<20))
}

func FuzzReadBlock(f *testing.F) {
	seedSelfDescribing(f, "py_preamble*.cap",
		buildBlock(blockSpec{bytes: 2, format: "RI", order: "MSB", codes: inventedCodes(16, 1000)}),
		buildBlock(blockSpec{short: true, recur: true, lineBreak: true, bytes: 1, format: "RP", order: "LSB", codes: inventedCodes(16, 100)}),
		buildBlock(blockSpec{bytes: 4, format: "FP", order: "LSB", ymult: 1, floats: []float64{1, 2, 3, 4, 5, 6, 7, 8, 9}}),
		append(buildBlock(blockSpec{bytes: 2, format: "RI", order: "MSB", codes: inventedCodes(16, 1000)}), buildBlock(blockSpec{bytes: 2, format: "RI", order: "MSB", wfid: "Ch2", codes: inventedCodes(16, 1000)})...),
	)
	f.Fuzz(func(t *testing.T, data []byte) {
		fuzzReader(t, data, func(b []byte) (any, error) {
			rec, err := ReadBlock(bytes.NewReader(b), "fuzz.cap")
			if err == nil {
				if verr := rec.Validate(); verr != nil {
					t.Fatalf("invalid record returned: %v", verr)
				}
			}
			return rec, err
		})
	})
}

func ExampleReadBlock() {
	// An invented capture: eight int16 codes, big-endian, behind a short preamble.
	b := []byte(":PRE:BYT_NR 2;BN_FMT RI;BYT_OR MSB;WFID \"Ch2, DC coupling\";XINCR 1E-9;XZERO 0;YMULT 0.5;YOFF 0;YZERO 0;YUNIT \"V\";:CURVE #216")
	b = append(b, 0, 0, 0, 2, 0, 4, 0, 8, 0, 8, 0, 4, 0, 2, 0, 0)
	rec, err := ReadBlock(bytes.NewReader(b), "example")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(rec.Channels[0].Name, rec.Channels[0].Unit, rec.Interval_s, rec.Channels[0].Samples)
	// Output: CH2 V 1e-09 [0 1 2 4 4 2 1 0]
}
