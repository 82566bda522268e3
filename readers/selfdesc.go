package readers

// Helpers shared by the readers of self-describing binary captures (blockpre.go,
// descriptor.go, fixedhdr.go): an offset-counting reader whose every read names the
// header field it is for, growth-bounded reads of claimed lengths, and the decimal
// reading of float32 header values.

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform"
)

// offReader counts the bytes consumed so that every message can name a byte offset.
type offReader struct {
	r    io.Reader
	off  int64
	file string
}

func (o *offReader) Read(p []byte) (int, error) {
	n, err := o.r.Read(p)
	o.off += int64(n)
	return n, err
}

// full fills b or fails naming field and the byte where the file stopped.
func (o *offReader) full(b []byte, field string) error {
	start := o.off
	n, err := io.ReadFull(o, b)
	if err != nil {
		return byteErr(o.file, start+int64(n), ErrTruncated, fmt.Sprintf("inside %s (%d of %d bytes present)", field, n, len(b)))
	}
	return nil
}

// claimed reads n bytes a header announced. The buffer grows as bytes arrive, so a
// header that claims more than the file holds costs no more memory than the file.
func (o *offReader) claimed(n int64, field string) ([]byte, error) {
	start := o.off
	var buf bytes.Buffer
	if n < 1<<16 {
		buf.Grow(int(n))
	}
	got, err := io.CopyN(&buf, o, n)
	if err != nil {
		if err == io.EOF {
			return nil, byteErr(o.file, start+got, ErrTruncated, fmt.Sprintf("%s claims %d bytes, the file holds %d", field, n, got))
		}
		return nil, byteErr(o.file, start+got, err, field)
	}
	return buf.Bytes(), nil
}

// skip discards n claimed bytes.
func (o *offReader) skip(n int64, field string) error {
	start := o.off
	got, err := io.CopyN(io.Discard, o, n)
	if err != nil {
		if err == io.EOF {
			return byteErr(o.file, start+got, ErrTruncated, fmt.Sprintf("%s claims %d bytes, the file holds %d", field, n, got))
		}
		return byteErr(o.file, start+got, err, field)
	}
	return nil
}

// samples decodes count samples of st, growing the slice with the data that arrive.
func (o *offReader) samples(st sampleType, count int, field string) ([]float64, error) {
	start := o.off
	out := make([]float64, 0, min(count, 1<<14))
	buf := make([]byte, 1<<16-(1<<16)%st.size)
	for len(out) < count {
		want := min((count-len(out))*st.size, len(buf))
		n, err := io.ReadFull(o, buf[:want])
		out = convert(out, buf[:n-n%st.size], st, 1, 0)
		if err != nil {
			return nil, byteErr(o.file, start+int64(len(out)*st.size)+int64(n%st.size), ErrTruncated,
				fmt.Sprintf("%s: %d of %d samples present", field, len(out), count))
		}
	}
	return out, nil
}

// trailer reads what follows the last block: a line end is allowed (instruments end
// a response with one); anything else means the lengths did not add up.
func (o *offReader) trailer(what string) error {
	start := o.off
	b, err := io.ReadAll(io.LimitReader(o, 3))
	if err != nil {
		return byteErr(o.file, o.off, err, "")
	}
	if s := string(b); s == "" || s == "\n" || s == "\r\n" {
		return nil
	}
	return byteErr(o.file, start, ErrHeader, fmt.Sprintf("bytes after %s: the header's lengths do not account for the whole file", what))
}

// decimal32 is the value a float32 header field stands for: the shortest decimal that
// rounds to it, when that has at most six significant digits (a float32 holds any
// six-digit decimal exactly enough to give it back, so the reading is unambiguous).
// Otherwise the float32's own value. The second result says which.
func decimal32(f float32) (float64, bool) {
	if math.IsNaN(float64(f)) || math.IsInf(float64(f), 0) {
		return float64(f), false
	}
	s := strconv.FormatFloat(float64(f), 'e', -1, 32)
	mant := s[:strings.IndexByte(s, 'e')]
	digits := strings.TrimLeft(strings.NewReplacer(".", "", "-", "").Replace(mant), "0")
	if len(digits) > 6 {
		return float64(f), false
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return float64(f), false
	}
	return v, v != float64(f)
}

// note32 says which reading of a float32 field was used, for Record.Notes.
func note32(what string, f float32) (float64, string) {
	v, dec := decimal32(f)
	if dec {
		return v, fmt.Sprintf("%s from the header's float32 %s, read as the decimal it stands for (the float32 itself is %.9g)", what, strconv.FormatFloat(v, 'g', -1, 64), float64(f))
	}
	return v, fmt.Sprintf("%s from the header's float32 %s", what, strconv.FormatFloat(v, 'g', -1, 64))
}

// instrumentUnit maps a unit string from a header to the SI symbol and factor.
func instrumentUnit(u string) (string, float64, bool) {
	u = strings.TrimSpace(strings.Trim(strings.TrimSpace(u), `"'`))
	// the header rules of the text reader: symbols, words ("Volt"), one-reading cases
	if si, f, ok := headerUnit(u); ok && si != unitIndex {
		return si, f, true
	}
	return "", 0, false
}

// cString is a NUL- or blank-padded text field of a binary header.
func cString(b []byte) string {
	if i := bytes.IndexByte(b, 0); i >= 0 {
		b = b[:i]
	}
	return strings.TrimSpace(strings.ToValidUTF8(string(b), "?"))
}

// printable says whether a padded header text field holds only printable ASCII before
// its padding, which is how a sniffer tells such a field from sample bytes.
func printable(b []byte, minLen int) bool {
	n := 0
	for i, c := range b {
		if c == 0 {
			for _, z := range b[i:] {
				if z != 0 && z != ' ' {
					return false
				}
			}
			break
		}
		if c < 0x20 || c > 0x7e {
			return false
		}
		n++
	}
	return n >= minLen
}

// channelName turns an instrument's source label into hvshot's "CH1" form when it
// names an input channel, and keeps any other label as it is.
func channelName(label string, k int) string {
	l := strings.TrimSpace(label)
	u := strings.ToUpper(l)
	for _, p := range []string{"CHANNEL", "CHAN", "CH", "C"} {
		if rest, ok := strings.CutPrefix(u, p); ok && rest != "" {
			rest = strings.TrimSpace(rest)
			if _, err := strconv.Atoi(rest); err == nil {
				return "CH" + rest
			}
		}
	}
	if _, err := strconv.Atoi(l); err == nil && l != "" {
		return "CH" + l
	}
	if l == "" {
		return fmt.Sprintf("CH%d", k+1)
	}
	return l
}

// finite checks a header number, naming the field when it is NaN or infinite.
func finite(file string, off int64, field string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return byteErr(file, off, ErrHeader, fmt.Sprintf("%s is %g", field, v))
	}
	return nil
}

// finish validates a record built by a self-describing reader.
func finish(rec *waveform.Record, file string) (*waveform.Record, error) {
	for _, c := range rec.Channels {
		for i, v := range c.Samples {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fileErr(file, ErrNotFinite, fmt.Sprintf("channel %s sample %d is %g", c.Name, i, v))
			}
		}
	}
	if err := rec.Validate(); err != nil {
		return nil, fileErr(file, ErrNoData, err.Error())
	}
	return rec, nil
}

// sizeOf finds a reader's length when it knows it, 0 otherwise.
func sizeOf(r io.Reader) int64 {
	if l, ok := r.(interface{ Len() int }); ok {
		return int64(l.Len())
	}
	return 0
}
