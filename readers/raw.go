package readers

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// SidecarSuffix names the raw description beside a binary capture: shot7.bin is
// described by shot7.bin.hvraw (or shot7.hvraw).
const SidecarSuffix = ".hvraw"

// RawSpec describes a headerless binary capture. Each channel's values in SI are
// raw*Gain + Offset.
type RawSpec struct {
	Sample      string // int8, uint8, int16, uint16, int32, uint32, int64, float32, float64
	BigEndian   bool
	Channels    int // interleaved channels, 1 or more
	Names       []string
	Units       []string
	Gain        []float64 // one per channel, or one for all; default 1
	Offset      []float64 // likewise; default 0
	Interval_s  float64
	Start_s     float64
	HeaderBytes int64   // bytes to skip before the first sample
	Range_v     float64 // full-scale magnitude in SI after scaling, 0 when unknown
	ADCBits     int
	Note        string // free text kept as the record's "note" (synth marks its captures here)
}

// ParseSidecar reads a raw description: "key = value" lines, '#' comments, keys as in
// docs/raw-sidecar.md. Unknown keys are an error naming the line.
func ParseSidecar(r io.Reader, file string) (RawSpec, error) {
	spec := RawSpec{Channels: 1, Sample: "int16"}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 4096), 64<<10)
	no := 0
	for sc.Scan() {
		no++
		l := strings.TrimSpace(sc.Text())
		if i := strings.IndexByte(l, '#'); i >= 0 {
			l = strings.TrimSpace(l[:i])
		}
		if l == "" {
			continue
		}
		eq := strings.IndexByte(l, '=')
		if eq < 0 {
			return spec, lineErr(file, no, 1, ErrSidecar, "expected key = value")
		}
		key := strings.TrimSpace(l[:eq])
		val := strings.Trim(strings.TrimSpace(l[eq+1:]), `"`)
		bad := func(format string, a ...any) error {
			return lineErr(file, no, eq+2, ErrSidecar, key+": "+fmt.Sprintf(format, a...))
		}
		list := func() []string {
			var out []string
			for _, p := range strings.Split(val, ",") {
				out = append(out, strings.Trim(strings.TrimSpace(p), `"`))
			}
			return out
		}
		nums := func() ([]float64, error) {
			var out []float64
			for _, p := range list() {
				v, _, err := ParseQuantity(p)
				if err != nil {
					return nil, err
				}
				out = append(out, v)
			}
			return out, nil
		}
		switch key {
		case "format":
			if val != "hvraw 1" {
				return spec, bad("expected \"hvraw 1\", got %q", val)
			}
		case "sample":
			if _, err := newSampleType(val, binary.LittleEndian); err != nil {
				return spec, bad("%v", err)
			}
			spec.Sample = val
		case "endian":
			switch val {
			case "little":
				spec.BigEndian = false
			case "big":
				spec.BigEndian = true
			default:
				return spec, bad("little or big, not %q", val)
			}
		case "channels":
			n, err := strconv.Atoi(val)
			if err != nil || n < 1 || n > 64 {
				return spec, bad("a count from 1 to 64, not %q", val)
			}
			spec.Channels = n
		case "names":
			spec.Names = list()
		case "units":
			spec.Units = list()
		case "gain", "offset":
			v, err := nums()
			if err != nil {
				return spec, bad("%v", err)
			}
			for _, x := range v {
				// a volt per code to a gigavolt per code spans every scope and divider
				if !(math.Abs(x) <= maxGain) || (key == "gain" && x == 0) {
					return spec, bad("%g is not a plausible %s (|%s| up to %g, gain not 0)", x, key, key, maxGain)
				}
			}
			if key == "gain" {
				spec.Gain = v
			} else {
				spec.Offset = v
			}
		case "interval", "start", "range":
			v, _, err := ParseQuantity(val)
			if err != nil {
				return spec, bad("%v", err)
			}
			switch key {
			case "interval":
				if !(v >= waveform.MinInterval_s && v <= waveform.MaxInterval_s) {
					return spec, bad("%g s is outside %g to %g s", v, waveform.MinInterval_s, waveform.MaxInterval_s)
				}
				spec.Interval_s = v
			case "start":
				if !(math.Abs(v) <= waveform.MaxSpan_s) {
					return spec, bad("%g s is more than an hour from the trigger", v)
				}
				spec.Start_s = v
			case "range":
				spec.Range_v = v
			}
		case "note":
			spec.Note = val
		case "header_bytes", "adc_bits":
			n, err := strconv.ParseInt(val, 10, 64)
			if err != nil || n < 0 {
				return spec, bad("a non-negative whole number, not %q", val)
			}
			if key == "header_bytes" {
				spec.HeaderBytes = n
			} else {
				spec.ADCBits = int(n)
			}
		default:
			return spec, lineErr(file, no, 1, ErrSidecar, fmt.Sprintf("unknown key %q", key))
		}
	}
	if err := sc.Err(); err != nil {
		return spec, lineErr(file, no+1, 0, ErrSidecar, err.Error())
	}
	if spec.Interval_s <= 0 {
		return spec, fileErr(file, ErrSidecar, "no interval given")
	}
	return spec, nil
}

func perChannel(v []float64, c int, def float64) float64 {
	switch {
	case len(v) == 0:
		return def
	case len(v) == 1:
		return v[0]
	case c < len(v):
		return v[c]
	}
	return def
}

// ReadRaw reads a headerless binary capture described by spec, streaming in one pass.
func ReadRaw(r io.Reader, file string, spec RawSpec) (*waveform.Record, error) {
	var hint int64
	if l, ok := r.(interface{ Len() int }); ok {
		hint = int64(l.Len())
	}
	return readRaw(r, file, spec, hint)
}

func readRaw(r io.Reader, file string, spec RawSpec, sizeHint int64) (*waveform.Record, error) {
	var order binary.ByteOrder = binary.LittleEndian
	if spec.BigEndian {
		order = binary.BigEndian
	}
	st, err := newSampleType(spec.Sample, order)
	if err != nil {
		return nil, fileErr(file, ErrSidecar, err.Error())
	}
	if spec.Channels < 1 {
		spec.Channels = 1
	}
	if !(spec.Interval_s > 0) {
		return nil, fileErr(file, ErrNoInterval, "the raw description gives no interval")
	}
	if spec.HeaderBytes > 0 {
		n, err := io.CopyN(io.Discard, r, spec.HeaderBytes)
		if err != nil {
			return nil, byteErr(file, n, ErrTruncated, "inside the header bytes")
		}
	}
	nc := spec.Channels
	frame := st.size * nc
	est := 1 << 16
	if sizeHint > 0 {
		est = int(sizeHint/int64(frame)) + 1
	}
	if est > MaxSamples/nc {
		est = MaxSamples / nc
	}
	chans := make([][]float64, nc)
	gains, offs := make([]float64, nc), make([]float64, nc)
	for c := range chans {
		chans[c] = make([]float64, 0, est)
		gains[c], offs[c] = perChannel(spec.Gain, c, 1), perChannel(spec.Offset, c, 0)
	}
	bufLen := (1 << 18) / frame * frame
	if sizeHint > 0 && sizeHint < int64(bufLen) {
		bufLen = int(sizeHint/int64(frame)+1) * frame // a small file needs no 256 KiB
	}
	buf := make([]byte, bufLen)
	var tmp []float64
	var total int64
	for {
		n, err := io.ReadFull(r, buf)
		whole := n - n%frame
		total += int64(n)
		if nc == 1 {
			chans[0] = convert(chans[0], buf[:whole], st, gains[0], offs[0])
		} else if whole > 0 {
			// Decode the chunk once, then deal its frames out to the channels.
			tmp = convert(tmp[:0], buf[:whole], st, 1, 0)
			rows := whole / frame
			for c := 0; c < nc; c++ {
				dst := chans[c]
				g, o := gains[c], offs[c]
				for i := 0; i < rows; i++ {
					dst = append(dst, tmp[i*nc+c]*g+o)
				}
				chans[c] = dst
			}
		}
		if err == io.EOF || err == io.ErrUnexpectedEOF {
			if n%frame != 0 {
				return nil, byteErr(file, spec.HeaderBytes+total-int64(n%frame), ErrTruncated, fmt.Sprintf("the last %d bytes are not a whole frame of %d channels x %d bytes", n%frame, nc, st.size))
			}
			break
		}
		if err != nil {
			return nil, byteErr(file, spec.HeaderBytes+total, err, "")
		}
		if len(chans[0])*nc > MaxSamples {
			return nil, byteErr(file, spec.HeaderBytes+total, ErrTooLarge, fmt.Sprintf("more than %d samples", MaxSamples))
		}
	}
	if len(chans[0]) == 0 {
		return nil, fileErr(file, ErrEmpty, "no samples")
	}
	isFloat := st.name == "float32" || st.name == "float64"
	rec := &waveform.Record{Source: file, Format: "raw " + spec.Sample, Start_s: spec.Start_s, Interval_s: spec.Interval_s, Meta: map[string]string{}}
	if spec.Note != "" {
		rec.Meta["note"] = spec.Note
	}
	for c := 0; c < nc; c++ {
		s := chans[c]
		ch := waveform.Channel{Name: fmt.Sprintf("CH%d", c+1), Samples: s, ADCBits: spec.ADCBits}
		if c < len(spec.Names) && spec.Names[c] != "" {
			ch.Name = spec.Names[c]
		}
		if c < len(spec.Units) {
			si, f, ok := ParseUnit(spec.Units[c])
			if !ok {
				return nil, fileErr(file, ErrSidecar, fmt.Sprintf("unit %q", spec.Units[c]))
			}
			ch.Unit = si
			if f != 1 {
				for i := range s {
					s[i] *= f
				}
			}
		}
		if spec.Range_v > 0 {
			ch.HasRange, ch.RangeMin, ch.RangeMax = true, -spec.Range_v, spec.Range_v
		}
		// Integer codes times a gain stay finite unless the largest code overflows; only
		// floats and such gains need a look.
		if isFloat || math.IsInf(math.Exp2(float64(8*st.size))*math.Abs(gains[c])+math.Abs(offs[c]), 0) {
			for i, v := range s {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return nil, byteErr(file, spec.HeaderBytes+int64((i*nc+c)*st.size), ErrNotFinite, "")
				}
			}
		}
		rec.Channels = append(rec.Channels, ch)
	}
	if rec.Len() < waveform.MinSamples {
		return nil, fileErr(file, ErrNoData, fmt.Sprintf("%d samples, need at least %d", rec.Len(), waveform.MinSamples))
	}
	if err := rec.ValidateTime(); err != nil {
		return nil, fileErr(file, ErrSidecar, err.Error())
	}
	return rec, nil
}

// maxGain bounds a raw description's gain and offset (ours).
const maxGain = 1e9
