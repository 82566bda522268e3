package uncert_test

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/uncert"
)

// refs are testdata/reference/uncert_refs.json, written by uncert_refs.py (SciPy,
// statsmodels, NumPy).
type refs struct {
	Coverage struct {
		P  float64   `json:"p"`
		Nu []float64 `json:"nu"`
		K  []float64 `json:"k"`
	} `json:"coverage"`
	AR1 struct {
		X   []float64 `json:"x"`
		Phi float64   `json:"phi"`
		RMS float64   `json:"rms"`
	} `json:"ar1"`
	MeanSD []struct {
		Phi, Sigma, SD float64
		N              int
	} `json:"mean_sd"`
}

func loadRefs(t testing.TB) refs {
	b, err := os.ReadFile("../../testdata/reference/uncert_refs.json")
	require.NoError(t, err)
	var r refs
	require.NoError(t, json.Unmarshal(b, &r))
	return r
}

// The coverage factor k = t_p(nu), p = 95.45 %: against scipy.stats.t.ppf, and against
// GUM Table G.2's column for 95.45 % (from memory: 13.97, 4.53, 2.28, 2.13, 2.09, 2.05,
// 2.03 for 1, 2, 10, 20, 30, 50, 100 degrees of freedom, 2.00 for infinitely many).
func TestCoverageFactor(t *testing.T) {
	r := loadRefs(t)
	assert.InDelta(t, r.Coverage.P, uncert.Coverage, 1e-12, "2 Phi(2) - 1 (scipy.stats.norm)")
	for i, nu := range r.Coverage.Nu {
		assert.InDelta(t, r.Coverage.K[i], uncert.CoverageFactor(nu), 1e-7*r.Coverage.K[i], "nu %g (scipy.stats.t.ppf)", nu)
	}
	for _, c := range []struct{ nu, k float64 }{{1, 13.97}, {2, 4.53}, {10, 2.28}, {20, 2.13}, {30, 2.09}, {50, 2.05}, {100, 2.03}} {
		assert.InDelta(t, c.k, uncert.CoverageFactor(c.nu), 0.005, "GUM Table G.2, nu %g (from memory)", c.nu)
	}
	assert.Equal(t, 2.0, uncert.CoverageFactor(math.Inf(1)))
	for _, nu := range []float64{1e6, 1e7, 1e9, 1e20} {
		assert.InDelta(t, 2.0, uncert.CoverageFactor(nu), 1e-5, "nu %g: the normal limit", nu)
	}
	assert.Equal(t, 2.0, uncert.CoverageFactor(0), "no degrees of freedom stated: the type B convention")
}

// The noise model of an invented AR(1) record with a level and a trend: phi by
// statsmodels' yule_walker on the detrended samples, the RMS by NumPy
// (uncert_refs.py), the innovations resampled from the pre-trigger.
func TestNoiseOfAgainstStatsmodels(t *testing.T) {
	r := loadRefs(t)
	nz := uncert.NoiseOf(r.AR1.X, 0)
	assert.InDelta(t, r.AR1.Phi, nz.Phi, 1e-9, "statsmodels yule_walker")
	assert.InDelta(t, r.AR1.RMS, nz.RMS, 1e-9*r.AR1.RMS, "NumPy")
	assert.Equal(t, "pre-trigger", nz.Law)
	assert.Equal(t, len(r.AR1.X), nz.Samples)
	// the low-frequency level's degrees of freedom: n/(1 + 2 (1 + phi)/(1 - phi))
	assert.InDelta(t, 2000/(1+2*(1+r.AR1.Phi)/(1-r.AR1.Phi)), nz.DOF(), 1e-9)
}

func TestNoiseOfLaws(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	white := make([]float64, 5000)
	for i := range white {
		white[i] = 0.7 * rng.NormFloat64()
	}
	nz := uncert.NoiseOf(white, 0)
	assert.Equal(t, 0.0, nz.Phi, "a lag-1 autocorrelation within 2/sqrt(n) of 0 is white noise")
	assert.InEpsilon(t, 0.7, nz.RMS, 0.03)
	assert.InDelta(t, 4998.0, nz.DOF(), 1e-9, "white: n - 2")

	// A pre-trigger quieter than its quantisation: uniform noise of one step, q/sqrt 12
	// (GUM F.2.2.1), with infinitely many degrees of freedom.
	flat := make([]float64, 200)
	nz = uncert.NoiseOf(flat, 0.5)
	assert.Equal(t, "quantisation", nz.Law)
	assert.InDelta(t, 0.5/math.Sqrt(12), nz.RMS, 1e-15)
	assert.True(t, math.IsInf(nz.DOF(), 1))

	// too few pre-trigger samples to resample: Gaussian
	nz = uncert.NoiseOf(white[:40], 0)
	assert.Equal(t, "gaussian", nz.Law)
	assert.InEpsilon(t, 0.7, nz.RMS, 0.3)

	assert.Equal(t, 0.25, uncert.LeastStep([]float64{1, 1, 1.5, 1.25, 1.25, 2}))
	assert.Equal(t, 0.0, uncert.LeastStep([]float64{3, 3, 3}))
}

// Draws reproduce the model: the variance, the lag-1 autocorrelation and the variance
// of a block mean of a stationary AR(1) (the last: NumPy's sum in uncert_refs.py).
func TestDrawsFollowTheModel(t *testing.T) {
	r := loadRefs(t)
	for _, c := range r.MeanSD {
		// a pre-trigger made with the wanted phi, long enough that the model is close
		rng := rand.New(rand.NewPCG(11, uint64(c.Phi*10)))
		pre := make([]float64, 200000)
		e := c.Sigma * rng.NormFloat64()
		for i := range pre {
			pre[i] = e
			e = c.Phi*e + c.Sigma*math.Sqrt(1-c.Phi*c.Phi)*rng.NormFloat64()
		}
		nz := uncert.NoiseOf(pre, 0)
		x := make([]float64, c.N)
		var v, r1, m2 float64
		const draws = 4000
		for d := 0; d < draws; d++ {
			nz.Draw(rng, x)
			var m float64
			for i, s := range x {
				v += s * s
				if i > 0 {
					r1 += s * x[i-1]
				}
				m += s
			}
			m /= float64(c.N)
			m2 += m * m
		}
		v /= draws * float64(c.N)
		r1 /= draws * float64(c.N-1)
		assert.InEpsilon(t, c.Sigma*c.Sigma, v, 0.02, "variance, phi %g", c.Phi)
		assert.InDelta(t, c.Phi, r1/v, 0.02, "lag-1 autocorrelation, phi %g", c.Phi)
		assert.InEpsilon(t, c.SD, math.Sqrt(m2/draws), 0.03, "sd of the mean of %d samples, phi %g (NumPy)", c.N, c.Phi)
	}
}

// The Monte Carlo of a linear measurement (the mean of the record) gives its known
// standard deviation (uncert_refs.py), the same for the same seed, and counts failures.
func TestMonteCarlo(t *testing.T) {
	r := loadRefs(t)
	c := r.MeanSD[1] // phi 0.5
	rng := rand.New(rand.NewPCG(5, 6))
	pre := make([]float64, 100000)
	e := 0.0
	for i := range pre {
		pre[i] = e
		e = c.Phi*e + math.Sqrt(1-c.Phi*c.Phi)*rng.NormFloat64()
	}
	nz := uncert.NoiseOf(pre, 0)
	x := make([]float64, c.N)
	for i := range x {
		x[i] = math.Sin(float64(i) / 50) // the signal does not matter to a linear measurement's spread
	}
	mean := func(x, out []float64) error {
		var s float64
		for _, v := range x {
			s += v
		}
		out[0], out[1] = s/float64(len(x)), math.NaN()
		return nil
	}
	sp := uncert.MonteCarlo(x, nz, 3000, 42, 2, mean)
	assert.InEpsilon(t, c.SD, sp.SD[0], 0.05, "the mean's sd (NumPy), 3000 draws")
	assert.True(t, math.IsNaN(sp.SD[1]), "a parameter never measured has no spread")
	assert.Equal(t, 3000, sp.N[0])
	again := uncert.MonteCarlo(x, nz, 3000, 42, 2, mean)
	assert.Equal(t, sp.SD[0], again.SD[0], "reproducible for a seed")
	other := uncert.MonteCarlo(x, nz, 3000, 43, 2, mean)
	assert.NotEqual(t, sp.SD[0], other.SD[0])

	k := 0
	flaky := func(x, out []float64) error {
		k++
		if k%4 == 0 {
			return errors.New("no impulse")
		}
		return mean(x, out)
	}
	sp = uncert.MonteCarlo(x, nz, 40, 1, 2, flaky)
	assert.Equal(t, 10, sp.Failed)
	assert.Equal(t, 30, sp.N[0])
}

// The GUM's arithmetic: rectangular a/sqrt 3 (4.3.7), a certificate's U/k (4.3.3),
// the root sum of squares (5.1.2), Welch-Satterthwaite (G.4.1) and the mean of n
// repeated values (4.2.3).
func TestBudget(t *testing.T) {
	assert.InDelta(t, 1/math.Sqrt(3), uncert.Rect(1), 1e-15)
	assert.Equal(t, 0.75, uncert.FromExpanded(1.5, 2))
	assert.InDelta(t, 5.0, uncert.Combine(3, 4, math.NaN()), 1e-15)
	assert.True(t, math.IsNaN(uncert.Combine(math.NaN())))

	b := uncert.Budget{Record: math.NaN(), Scale: 3, Timebase: 4, Reading: math.NaN()}
	assert.InDelta(t, 5.0, b.Standard(), 1e-15)
	assert.Equal(t, 10.0, b.Expanded(), "type B alone: k = 2")

	// record 3 with 9 degrees of freedom, scale 4 exact: nu_eff = 5^4/(3^4/9) = 69.4
	b = uncert.Budget{Record: 3, RecordDOF: 9, Scale: 4, Timebase: math.NaN(), Reading: math.NaN()}
	assert.InDelta(t, 625.0/9, b.DOF(), 1e-12)
	assert.InDelta(t, 5*uncert.CoverageFactor(625.0/9), b.Expanded(), 1e-12)
	assert.Greater(t, b.Expanded(), 10.0)

	assert.InDelta(t, 1/(1.0/31+1.0/84), uncert.SpreadDOF(31, 84, math.Inf(1)), 1e-12)
	m, one := uncert.Repeat(2, 16)
	assert.Equal(t, 0.5, m)
	assert.Equal(t, 2.0, one)
	m, _ = uncert.Repeat(2, 1)
	assert.True(t, math.IsNaN(m))
}

// The uncertainty of a record's peak from its own noise: a Monte Carlo over the noise
// the pre-trigger shows (the record is invented).
func ExampleMonteCarlo() {
	rng := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, 2000)
	for i := range x {
		x[i] = 0.01 * rng.NormFloat64()
		if i >= 1000 {
			x[i] += math.Exp(-float64(i-1000)/400) - math.Exp(-float64(i-1000)/20)
		}
	}
	nz := uncert.NoiseOf(x[:900], 0)
	peak := func(x, out []float64) error {
		out[0] = x[0]
		for _, v := range x {
			out[0] = max(out[0], v)
		}
		return nil
	}
	sp := uncert.MonteCarlo(x, nz, 200, 7, 1, peak)
	b := uncert.Budget{Record: sp.SD[0], RecordDOF: float64(sp.N[0] - 1), Scale: math.NaN(), Timebase: math.NaN(), Reading: math.NaN()}
	fmt.Printf("noise %.3f (%s), peak's u %.3f, U %.3f\n", nz.RMS, nz.Law, b.Standard(), b.Expanded())
	// Output:
	// noise 0.010 (pre-trigger), peak's u 0.005, U 0.010
}
