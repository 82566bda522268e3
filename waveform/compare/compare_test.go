package compare

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/spectrum"
)

// ladder is the invented winding of testdata/reference/spectrum_refs.py, simulated by
// scipy.signal.lsim: the applied voltage (peak 1 V) and the shunt current as built and
// with the second node's capacitance 2 % larger.
func ladder(t testing.TB) (dt float64, u, i, iAlt []float64) {
	rec, err := readers.ReadFile("../../testdata/reference/ladder_lsim.npy", readers.Options{})
	require.NoError(t, err)
	require.Len(t, rec.Channels, 3)
	b, err := os.ReadFile("../../testdata/reference/spectrum_refs.json")
	require.NoError(t, err)
	var r struct {
		Ladder struct {
			Dt float64 `json:"dt_s"`
		} `json:"ladder"`
	}
	require.NoError(t, json.Unmarshal(b, &r))
	require.InEpsilon(t, r.Ladder.Dt, rec.Interval_s, 1e-9)
	return rec.Interval_s, rec.Channels[0].Samples, rec.Channels[1].Samples, rec.Channels[2].Samples
}

// A reduced-level shot (60 %) is the reference; full-level shots are compared with it
// after scaling, each record with its own noise (0.2 % of the full-level peak of each
// channel, white) and trigger jitter (up to 3 samples). The winding as built is flagged
// in none of 50 realisations; with one capacitance 2 % off, its transfer function is
// flagged in every one. The simulation is scipy.signal.lsim's (spectrum_refs.py).
func TestWindingChangeFlagged(t *testing.T) {
	dt, u, i0, i1 := ladder(t)
	const U0, noise, runs = 150e3, 0.002, 50
	ipk := Peak(i0) * U0
	rng := rand.New(rand.NewPCG(16, 2))
	shot := func(id string, level float64, i []float64) Shot {
		t0 := -rng.Float64() * 3 * dt
		cu, ci := Curve{make([]float64, len(u)), t0, dt}, Curve{make([]float64, len(u)), t0, dt}
		for k := range u {
			cu.Y[k] = level*U0*u[k] + noise*U0*rng.NormFloat64()
			ci.Y[k] = level*U0*i[k] + noise*ipk*rng.NormFloat64()
		}
		return Shot{ID: id, Channels: map[string]Curve{"voltage": cu, "current": ci}, Level: Peak(cu.Y), Input: "voltage", Output: "current"}
	}
	set := DefaultSettings()
	flagged := map[string]int{}
	var worstSame, leastAltered float64 = 0, math.Inf(1)
	for range runs {
		ref, err := NewReference(shot("reduced", 0.6, i0), spectrum.DefaultSettings())
		require.NoError(t, err)
		for _, c := range []struct {
			name string
			i    []float64
		}{{"as built", i0}, {"altered", i1}} {
			res, err := ref.Compare(shot("full", 1, c.i), set)
			require.NoError(t, err)
			require.NotNil(t, res.Transfer)
			require.Greater(t, res.Transfer.Bins, 20, "bins compared")
			var why []string
			for _, d := range res.Diffs {
				why = append(why, d.Exceeds(set)...)
			}
			why = append(why, res.Transfer.Exceeds(set)...)
			if len(why) > 0 {
				flagged[c.name]++
			}
			if c.name == "as built" {
				worstSame = math.Max(worstSame, res.Transfer.MaxDev_pct)
			} else {
				leastAltered = math.Min(leastAltered, res.Transfer.MaxDev_pct)
				assert.NotEmpty(t, res.Transfer.Exceeds(set), "altered winding: H deviation %.2f %%", res.Transfer.MaxDev_pct)
			}
		}
	}
	t.Logf("|H| deviation: as built at most %.2f %%, altered at least %.2f %% (threshold %.3g %%)", worstSame, leastAltered, set.TransferMax_pct)
	assert.Equal(t, 0, flagged["as built"], "the winding as built is never flagged")
	assert.Equal(t, runs, flagged["altered"], "the altered winding is always flagged")
}

// Without noise, a record that is the reference times 2.5, moved by a fraction of a
// sample, comes back onto the reference: the difference is the linear interpolation's
// error only, and H of the altered winding differs from the reference's by what the
// simulation alone shows.
func TestScaleAndAlign(t *testing.T) {
	dt, u, i0, _ := ladder(t)
	for _, frac := range []float64{0, 0.25, 0.5, 0.9, 2.3} {
		ref := Shot{ID: "r", Channels: map[string]Curve{"v": {u, 0, dt}, "i": {i0, 0, dt}}, Level: Peak(u), Input: "v", Output: "i"}
		scaled := func(y []float64) []float64 {
			out := make([]float64, len(y))
			for k, v := range y {
				out[k] = -2.5 * v
			}
			return out
		}
		test := Shot{ID: "t", Channels: map[string]Curve{"v": {scaled(u), frac * dt, dt}, "i": {scaled(i0), frac * dt, dt}}, Level: -2.5 * Peak(u), Input: "v", Output: "i"}
		r, err := NewReference(ref, spectrum.DefaultSettings())
		require.NoError(t, err)
		res, err := r.Compare(test, DefaultSettings())
		require.NoError(t, err)
		assert.InDelta(t, -0.4, res.Scale, 1e-12, "scale, polarity included")
		assert.InDelta(t, frac*dt, res.Shift_s, 1e-6*dt, "shift")
		for name, d := range res.Diffs {
			assert.Less(t, d.Peak_pct, 0.05, "%s moved by %.2f samples: peak difference", name, frac)
			assert.Less(t, d.RMS_pct, 0.01, "%s: RMS difference", name)
		}
	}
}

func TestDiffFigures(t *testing.T) {
	ref := Curve{Y: []float64{0, 0, 1, 2, 4, 2, 1, 0, 0, 0}, Interval_s: 1e-6, Start_s: -2e-6}
	test := []float64{0, 0, 1, 2, 3, 2, 1, 0, 0.1, math.NaN()}
	d := Diff(ref, test)
	assert.InDelta(t, 25, d.Peak_pct, 1e-12, "1 of a peak of 4")
	assert.InDelta(t, 2e-6, d.PeakTime_s, 1e-15, "at sample 4")
	assert.Equal(t, 2, d.From)
	assert.Equal(t, 7, d.To, "the event: where |ref| reaches 5 %% of its peak")
	assert.InDelta(t, 100*math.Sqrt(1.0/5)/4, d.RMS_pct, 1e-12, "over the event only")
	assert.True(t, math.IsNaN(d.D[9]))
	assert.Equal(t, []float64{1, 1, 1, 2, 3, 3}, Filled([]float64{math.NaN(), math.NaN(), 1, 2, 3, math.NaN()}))
	assert.True(t, math.IsNaN(Curve{Y: []float64{1, 2}, Interval_s: 1}.At(1.5)))
	assert.InDelta(t, 1.25, Curve{Y: []float64{1, 2}, Interval_s: 1}.At(0.25), 1e-15)
	assert.InDelta(t, 2.5, HalfCrossing(Curve{Y: []float64{0, 0, 1, 3, 4, 2}, Interval_s: 1}), 1e-15, "half of 4 between samples 2 and 3")
	assert.InDelta(t, 2.5, HalfCrossing(Curve{Y: []float64{0, 0, -1, -3, -4, -2}, Interval_s: 1}), 1e-15, "negative")
	assert.True(t, math.IsNaN(HalfCrossing(Curve{Y: []float64{0, 0}, Interval_s: 1})))
}

func TestCompareErrors(t *testing.T) {
	c := Curve{Y: []float64{0, 1, 0}, Interval_s: 1}
	_, err := NewReference(Shot{ID: "r", Channels: map[string]Curve{"v": c}, Level: 1, Input: "u"}, spectrum.DefaultSettings())
	assert.ErrorContains(t, err, `no channel "u"`)
	_, err = NewReference(Shot{ID: "r", Channels: map[string]Curve{"v": c}, Input: "v"}, spectrum.DefaultSettings())
	assert.ErrorContains(t, err, "no test voltage")
	_, err = NewReference(Shot{ID: "r", Channels: map[string]Curve{"v": c}, Level: 1, Input: "v", Output: "i"}, spectrum.DefaultSettings())
	assert.ErrorContains(t, err, `no channel "i"`)
	r, err := NewReference(Shot{ID: "r", Channels: map[string]Curve{"v": c}, Level: 1, Input: "v"}, spectrum.DefaultSettings())
	require.NoError(t, err)
	_, err = r.Compare(Shot{Channels: map[string]Curve{"w": c}, Level: 1}, DefaultSettings())
	assert.ErrorContains(t, err, `no channel "v"`)
	res, err := r.Compare(Shot{Channels: map[string]Curve{"v": c}, Level: 2}, DefaultSettings())
	require.NoError(t, err)
	assert.Nil(t, res.Transfer)
	assert.InDelta(t, 50, res.Diffs["v"].Peak_pct, 1e-12, "scaled by a half: half the peak off")
}
