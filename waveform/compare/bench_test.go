package compare

import (
	"testing"

	"github.com/hvshot/hvshot/waveform/spectrum"
)

// BenchmarkCompare is one shot set beside a prepared reference: scaling, alignment,
// two differences and the transfer functions (12,000 samples a channel).
func BenchmarkCompare(b *testing.B) {
	dt, u, i0, i1 := ladder(b)
	ref, err := NewReference(Shot{ID: "r", Channels: map[string]Curve{"v": {u, 0, dt}, "i": {i0, 0, dt}}, Level: 1, Input: "v", Output: "i"}, spectrum.DefaultSettings())
	if err != nil {
		b.Fatal(err)
	}
	s := Shot{ID: "t", Channels: map[string]Curve{"v": {u, 0.3 * dt, dt}, "i": {i1, 0.3 * dt, dt}}, Level: 1, Input: "v", Output: "i"}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ref.Compare(s, DefaultSettings()); err != nil {
			b.Fatal(err)
		}
	}
}
