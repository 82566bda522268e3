package uncert

import (
	"math"
	"math/rand/v2"
)

// Eval measures a record's parameters into out (one value a parameter, NaN for one it
// could not measure), or fails as a whole. It may change x, a copy made for it.
type Eval func(x []float64, out []float64) error

// Spread is a Monte Carlo's outcome.
type Spread struct {
	SD     []float64 // standard deviation of each parameter over the draws; NaN with fewer than two values
	N      []int     // how many draws gave each parameter a value
	Draws  int
	Failed int // draws whose evaluation failed as a whole
}

// MonteCarlo evaluates draws copies of x, each with a fresh draw of noise added, and
// returns the spread of each of the nOut parameters. The spread of a parameter over
// records that differ only by noise is its standard uncertainty from that noise (GUM
// Supplement 1, JCGM 101:2008, propagation of distributions): x already carries one
// realisation, and a measurement near-linear in small noise moves by the same law
// whichever realisation it starts from. seed makes the draws reproducible.
func MonteCarlo(x []float64, nz Noise, draws int, seed uint64, nOut int, eval Eval) Spread {
	sp := Spread{SD: make([]float64, nOut), N: make([]int, nOut), Draws: draws}
	mean := make([]float64, nOut)
	m2 := make([]float64, nOut)
	out := make([]float64, nOut)
	xp := make([]float64, len(x))
	rng := rand.New(rand.NewPCG(seed, 0x75_6e_63_65_72_74))
	for d := 0; d < draws; d++ {
		nz.addTo(rng, x, xp)
		for i := range out {
			out[i] = math.NaN()
		}
		if err := eval(xp, out); err != nil {
			sp.Failed++
			continue
		}
		for k, v := range out {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			sp.N[k]++ // Welford's running mean and sum of squares (Knuth, TAOCP vol. 2, 4.2.2)
			dv := v - mean[k]
			mean[k] += dv / float64(sp.N[k])
			m2[k] += dv * (v - mean[k])
		}
	}
	for k := range sp.SD {
		sp.SD[k] = math.NaN()
		if sp.N[k] > 1 {
			sp.SD[k] = math.Sqrt(m2[k] / float64(sp.N[k]-1))
		}
	}
	return sp
}

// Draw fills e with one realisation of the noise. The process starts in its stationary
// state, so the record's first samples are as noisy as its last.
func (nz Noise) Draw(rng *rand.Rand, e []float64) {
	clear(e)
	nz.addTo(rng, e, e)
}

// addTo writes x plus one realisation of the noise into out (x and out may be the
// same), in one pass.
func (nz Noise) addTo(rng *rand.Rand, x, out []float64) {
	pool := nz.pool
	n := min(len(x), len(out))
	if len(pool) == 0 {
		copy(out, x[:n])
		return
	}
	m := uint64(len(pool))
	// two indices from each 64 random bits (Lemire's multiply-shift reduction)
	if nz.Phi == 0 {
		i := 0
		for ; i+1 < n; i += 2 {
			u := rng.Uint64()
			out[i] = x[i] + pool[((u&0xffffffff)*m)>>32]
			out[i+1] = x[i+1] + pool[((u>>32)*m)>>32]
		}
		if i < n {
			out[i] = x[i] + pool[((rng.Uint64()>>32)*m)>>32]
		}
		return
	}
	// the first sample from the stationary law: an innovation over sqrt(1 - Phi^2)
	prev := pool[((rng.Uint64()>>32)*m)>>32] / math.Sqrt(1-nz.Phi*nz.Phi)
	out[0] = x[0] + prev
	i := 1
	for ; i+1 < n; i += 2 {
		u := rng.Uint64()
		prev = nz.Phi*prev + pool[((u&0xffffffff)*m)>>32]
		out[i] = x[i] + prev
		prev = nz.Phi*prev + pool[((u>>32)*m)>>32]
		out[i+1] = x[i+1] + prev
	}
	if i < n {
		prev = nz.Phi*prev + pool[((rng.Uint64()>>32)*m)>>32]
		out[i] = x[i] + prev
	}
}
