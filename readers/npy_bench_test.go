package readers

import (
	"bytes"
	"math"
	"testing"

	"github.com/hvshot/hvshot/waveform"
)

// BenchmarkReadNPY reads 1,000,000 rows of (time, 2 channels) little-endian float64,
// the form WriteNPY and numpy.save write (24 MB).
func BenchmarkReadNPY(b *testing.B) {
	n := 1000000
	rec := &waveform.Record{Interval_s: 1e-9, Channels: []waveform.Channel{{Name: "a", Samples: make([]float64, n)}, {Name: "b", Samples: make([]float64, n)}}}
	for i := 0; i < n; i++ {
		rec.Channels[0].Samples[i] = math.Sin(float64(i) / 1000)
		rec.Channels[1].Samples[i] = math.Cos(float64(i) / 1000)
	}
	var buf bytes.Buffer
	if err := WriteNPY(&buf, rec); err != nil {
		b.Fatal(err)
	}
	data := buf.Bytes()
	b.SetBytes(int64(len(data)))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		r, err := Read(bytes.NewReader(data), "bench.npy", Options{})
		if err != nil {
			b.Fatal(err)
		}
		if r.Len() != n {
			b.Fatal(r.Len())
		}
	}
}
