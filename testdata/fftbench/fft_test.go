// Benchmark of gonum dsp/fourier against go-dsp, the measurement behind
// hvshot's choice of FFT (docs/performance.md). A module of its own, so that go-dsp
// never enters hvshot's go.mod. Run: cd testdata/fftbench && go test -bench . -benchtime 2x

package fftbench

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	dsp "github.com/mjibson/go-dsp/fft"
	"gonum.org/v1/gonum/dsp/fourier"
)

var sizes = []int{10000, 10007, 16384, 100000, 100003, 131072, 200000, 1000000, 1000003, 1048576}

func record(n int) []float64 {
	r := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, n)
	for i := range x {
		t := float64(i) * 1e-8
		x[i] = math.Exp(-t/68e-6) - math.Exp(-t/0.4e-6) + 1e-3*r.NormFloat64()
	}
	return x
}

func BenchmarkGonum(b *testing.B) {
	for _, n := range sizes {
		if n == 1000003 {
			continue // O(n^2) in gonum: see TestAgree
		}
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			x := record(n)
			f := fourier.NewFFT(n)
			dst := make([]complex128, n/2+1)
			b.ReportAllocs()
			b.ResetTimer()
			for range b.N {
				f.Coefficients(dst, x)
			}
		})
	}
}

func BenchmarkGonumNewPlan(b *testing.B) {
	for _, n := range sizes {
		if n == 1000003 {
			continue
		}
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			x := record(n)
			b.ReportAllocs()
			for range b.N {
				fourier.NewFFT(n).Coefficients(nil, x)
			}
		})
	}
}

func benchDSP(b *testing.B, workers int) {
	dsp.SetWorkerPoolSize(workers)
	for _, n := range sizes {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			x := record(n)
			dsp.FFTReal(x) // its factor tables are cached per length: not counted
			b.ReportAllocs()
			b.ResetTimer()
			for range b.N {
				dsp.FFTReal(x)
			}
		})
	}
}

func BenchmarkGoDSP1(b *testing.B)       { benchDSP(b, 1) }
func BenchmarkGoDSPDefault(b *testing.B) { benchDSP(b, 0) }

// TestAgree: both against each other and a direct DFT at a few bins.
func TestAgree(t *testing.T) {
	for _, n := range sizes {
		if n == 1000003 {
			fmt.Printf("n %8d: gonum skipped (a prime length: its generic radix takes O(n^2), over 10 minutes)\n", n)
			continue
		}
		x := record(n)
		g := fourier.NewFFT(n).Coefficients(nil, x)
		d := dsp.FFTReal(x)
		var peak, worstG, worstD float64
		for k := range g {
			peak = math.Max(peak, cmplx.Abs(g[k]))
		}
		for _, k := range []int{0, 1, 7, n / 10, n / 3, n / 2} {
			var s complex128
			for i, v := range x {
				s += complex(v, 0) * cmplx.Rect(1, -2*math.Pi*float64((k*i)%n)/float64(n))
			}
			worstG = math.Max(worstG, cmplx.Abs(g[k]-s)/peak)
			worstD = math.Max(worstD, cmplx.Abs(d[k]-s)/peak)
		}
		fmt.Printf("n %8d: gonum err %.1e, go-dsp err %.1e (relative to the largest bin)\n", n, worstG, worstD)
	}
}
