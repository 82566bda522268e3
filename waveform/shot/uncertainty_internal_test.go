package shot

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/fit"
	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/impulse"
)

// The Monte Carlo of a full impulse runs on the leading part of the record its
// parameters need: there, every parameter is the whole record's to 1e-9 (invented
// records with 0.2 % noise: 1.2/50 at 2 ns, 250/2500 at 100 ns).
func TestTruncationMeasuresTheSame(t *testing.T) {
	for _, c := range []struct {
		name           string
		front, tail    float64
		switching      bool
		dt, pre, total float64
		most           float64 // the part is at most this fraction of the record
	}{
		{"lightning", 1.2e-6, 50e-6, false, 2e-9, 5e-6, 200e-6, 0.5},
		{"switching", 250e-6, 2500e-6, true, 100e-9, 200e-6, 10e-3, 0.6},
	} {
		t.Run(c.name, func(t *testing.T) {
			var p fit.DoubleExp
			var err error
			if c.switching {
				p, err = fit.ForSwitching(c.front, c.tail)
			} else {
				p, err = fit.ForLightning(c.front, c.tail)
			}
			require.NoError(t, err)
			p.U = 300e3 / p.PeakFactor()
			p.Td_s = c.pre
			rng := rand.New(rand.NewPCG(1, 2))
			x := make([]float64, int(c.total/c.dt))
			p.Eval(0, c.dt, x)
			for i := range x {
				x[i] += 600 * rng.NormFloat64()
			}
			s := impulse.DefaultSettings()
			r, err := impulse.Evaluate(x, 0, c.dt, s)
			require.NoError(t, err)
			n := truncation(r, len(x), s)
			assert.Less(t, float64(n), c.most*float64(len(x)))
			centre := r.Denoised()
			nums := numbers()
			a, b := make([]float64, len(nums)), make([]float64, len(nums))
			q, err := remeasureImpulse(r, impulse.Nominal{}, false, 0, NewConfig())(append([]float64(nil), centre[:n]...))
			require.NoError(t, err)
			w, err := remeasureImpulse(r, impulse.Nominal{}, false, 0, NewConfig())(append([]float64(nil), centre...))
			require.NoError(t, err)
			values(nums, q, a)
			values(nums, w, b)
			for k, col := range nums {
				if math.IsNaN(b[k]) {
					assert.True(t, math.IsNaN(a[k]), col.Key)
					continue
				}
				assert.InDelta(t, b[k], a[k], 1e-9*math.Abs(b[k]), col.Key)
			}
			assert.False(t, math.IsNaN(b[slices.Index(nums, ColTimeToHalf)]))
		})
	}
}

// Every number says how its uncertainty arises (uRules), and its key ends in its unit,
// so that its companion's key does too.
func TestEveryNumberHasItsRule(t *testing.T) {
	for _, c := range Columns {
		if c.Kind != Number || c.Of != nil {
			continue
		}
		_, ok := uRules[c.Key]
		assert.True(t, ok, "%s: add its rule to uRules (uncertainty.go)", c.Key)
		suf, ok := unitSuffix[c.Unit]
		assert.True(t, ok && strings.HasSuffix(c.Key, suf), "%s: a key ending in its unit %q", c.Key, c.Unit)
	}
}

// The quantisation step: a file's bits and range (scaled as the channel is), else the
// least step in the data.
func TestQuantumOf(t *testing.T) {
	ch := &waveform.Channel{HasRange: true, RangeMin: -400e3, RangeMax: 400e3, ADCBits: 8}
	assert.Equal(t, 3125.0, quantumOf(ch, []float64{0, 1, 2}))
	assert.Equal(t, 0.5, quantumOf(&waveform.Channel{}, []float64{0, 0.5, 2, 2}))
}
