package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Handbook lightning coefficients tau1 = 68.2 us, tau2 = 0.405 us give a 1.2/50 shape
// with a peak factor of about 0.964 (high-voltage engineering textbooks).
var handbook = DoubleExp{U: 1, Td_s: 0, Tau1_s: 68.2e-6, Tau2_s: 0.405e-6}

func TestPeakClosedForm(t *testing.T) {
	// Peak factor about 0.964 for the handbook pair (high-voltage engineering textbooks).
	assert.InDelta(t, 0.964, handbook.PeakFactor(), 0.002)
	// Peak delay: derivative of the closed form is zero there (closed form of the model).
	tp := handbook.PeakDelay_s()
	h := 1e-12
	d := (handbook.At(tp+h) - handbook.At(tp-h)) / (2 * h)
	assert.InDelta(t, 0, d, 1e-3)
}

func synth(p DoubleExp, t0, dt float64, n int, noise float64, seed uint64) []float64 {
	y := make([]float64, n)
	p.Eval(t0, dt, y)
	if noise > 0 {
		r := rand.New(rand.NewPCG(seed, 1))
		for i := range y {
			y[i] += noise * r.NormFloat64()
		}
	}
	return y
}

func TestFitRecoversParameters(t *testing.T) {
	cases := []struct {
		name  string
		p     DoubleExp
		dt    float64
		n     int
		noise float64
		tol   float64
	}{
		{"handbook 1.2/50 clean", DoubleExp{U: 300e3, Td_s: 2e-6, Tau1_s: 68.2e-6, Tau2_s: 0.405e-6}, 10e-9, 12000, 0, 1e-6},
		{"handbook 1.2/50 noisy", DoubleExp{U: 300e3, Td_s: 2e-6, Tau1_s: 68.2e-6, Tau2_s: 0.405e-6}, 10e-9, 12000, 1500, 0.01},
		{"handbook 1.2/50 long window, block means", DoubleExp{U: 300e3, Td_s: 2e-6, Tau1_s: 68.2e-6, Tau2_s: 0.405e-6}, 1e-9, 100000, 0, 2e-6},
		{"handbook 1.2/50 long window, noisy", DoubleExp{U: 300e3, Td_s: 2e-6, Tau1_s: 68.2e-6, Tau2_s: 0.405e-6}, 1e-9, 100000, 1500, 0.005},
		{"handbook 250/2500", DoubleExp{U: 1e6, Td_s: 50e-6, Tau1_s: 3155e-6, Tau2_s: 62.5e-6}, 1e-6, 8000, 0, 1e-6},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			y := synth(c.p, 0, c.dt, c.n, c.noise, 7)
			// start from rough crossings: deliberately 10 % off
			pk := c.p.Peak()
			t30 := c.p.Td_s + 1.1*c.p.LevelDelay_s(0.3, true)
			t90 := c.p.Td_s + 0.95*c.p.LevelDelay_s(0.9, true)
			t50 := c.p.Td_s + 1.1*c.p.LevelDelay_s(0.5, false)
			start := StartValues(t30, t90, t50, 0.97*pk)
			from := int((c.p.Td_s + c.p.LevelDelay_s(0.2, true)) / c.dt)
			to := int((c.p.Td_s + c.p.LevelDelay_s(0.4, false)) / c.dt)
			if to > c.n {
				to = c.n
			}
			res, err := Fit(y, 0, c.dt, from, to, start, nil)
			require.NoError(t, err)
			require.Equal(t, Converged, res.Status)
			assert.InEpsilon(t, c.p.U, res.Params.U, c.tol*5+1e-9)
			assert.InEpsilon(t, c.p.Tau1_s, res.Params.Tau1_s, c.tol*5+1e-9)
			assert.InEpsilon(t, c.p.Tau2_s, res.Params.Tau2_s, c.tol*5+1e-9)
			assert.InDelta(t, c.p.Td_s, res.Params.Td_s, c.p.Tau2_s*c.tol*5+1e-15)
			if c.noise > 0 {
				assert.InEpsilon(t, c.noise, res.ResidualRMS, 0.1)
				assert.Greater(t, res.StdErr.Tau2_s, 0.0)
			}
		})
	}
}

func TestFitRejectsDegenerate(t *testing.T) {
	// A flat line cannot be a double exponential: it must be an error, not a number.
	y := make([]float64, 1000)
	for i := range y {
		y[i] = 1
	}
	start := DoubleExp{U: 2, Td_s: 0, Tau1_s: 1e-5, Tau2_s: 1e-7}
	_, err := Fit(y, 0, 1e-8, 0, 1000, start, &Settings{MaxIterations: 50})
	require.Error(t, err)
	_, err = Fit(y, 0, 1e-8, 0, 4, start, nil)
	require.ErrorIs(t, err, ErrTooFewSamples)
	_, err = Fit(y, 0, 1e-8, 0, 1000, DoubleExp{U: -1, Tau1_s: 1e-5, Tau2_s: 1e-7}, nil)
	require.ErrorIs(t, err, ErrDegenerate)
}

func BenchmarkFit100k(b *testing.B) {
	p := DoubleExp{U: 300e3, Td_s: 2e-6, Tau1_s: 68.2e-6, Tau2_s: 0.405e-6}
	dt := 1e-9
	y := synth(p, 0, dt, 100000, 1000, 3)
	from := int((p.Td_s + p.LevelDelay_s(0.2, true)) / dt)
	to := int((p.Td_s + p.LevelDelay_s(0.4, false)) / dt)
	start := StartValues(p.Td_s+1.1*p.LevelDelay_s(0.3, true), p.Td_s+0.95*p.LevelDelay_s(0.9, true), p.Td_s+1.1*p.LevelDelay_s(0.5, false), p.Peak())
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Fit(y, 0, dt, from, to, start, nil); err != nil {
			b.Fatal(err)
		}
	}
	_ = math.Pi
}

func TestForTimes(t *testing.T) {
	// 1.2/50 solved for gives back the handbook pair within the rounding of the
	// handbook's own values (68.2 us, 0.405 us; high-voltage engineering textbooks).
	p, err := ForLightning(1.2e-6, 50e-6)
	require.NoError(t, err)
	assert.InEpsilon(t, 68.2e-6, p.Tau1_s, 0.005)
	assert.InEpsilon(t, 0.405e-6, p.Tau2_s, 0.01)
	s, err := ForSwitching(250e-6, 2500e-6)
	require.NoError(t, err)
	assert.InEpsilon(t, 250e-6, s.PeakDelay_s(), 1e-9)
	assert.InEpsilon(t, 2500e-6, s.LevelDelay_s(0.5, false), 1e-9)
	_, err = ForLightning(1e-6, 1.5e-6)
	assert.Error(t, err)
}
