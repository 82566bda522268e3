package spectrum

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// BenchmarkChannel is one channel's frequency domain as a shot's evaluation does it:
// the transform (zero-padded to twice the length), the noise floor from a 5 % pre-trigger
// and both bandwidths.
func BenchmarkChannel(b *testing.B) {
	for _, n := range []int{15000, 100000, 1000000} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(1, 1))
			x := make([]float64, n)
			dt := 150e-6 / float64(n)
			for i := range x {
				t := float64(i-n/20) * dt
				if t > 0 {
					x[i] = math.Exp(-t/68.2e-6) - math.Exp(-t/0.405e-6)
				}
				x[i] += 1e-3 * rng.NormFloat64()
			}
			b.ReportAllocs()
			for b.Loop() {
				s, _ := Transform(x, dt, DefaultSettings())
				p, _ := Welch(x[:n/20], dt)
				f := NoiseFloor(s, p)
				s.Bandwidth(0.9, f)
				s.Bandwidth(0.99, f)
			}
		})
	}
}
