package probe

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/readers"
)

// References from testdata/reference/probe_refs.py: circuits simulated with SciPy's
// solve_ivp (Radau), mutual inductances by SciPy's dblquad (Debian python3-scipy).
type probeRefs struct {
	Coil map[string]struct {
		M, L, Rc, R, C float64
		Peak           float64 `json:"peak_a"`
	} `json:"coil"`
	Antenna map[string]struct {
		Gain float64 `json:"gain"`
		Tau  float64 `json:"tau_s"`
		Peak float64 `json:"peak_v_per_m"`
	} `json:"antenna"`
	Mutual struct {
		Turns float64 `json:"turns"`
		Rect  struct {
			H, R1, R2, M float64
		} `json:"rect"`
		Circ struct {
			A, D, M float64
		} `json:"circular"`
		Small struct {
			S, D, M float64
		} `json:"small_square"`
	} `json:"mutual"`
}

func loadProbeRefs(t testing.TB) probeRefs {
	b, err := os.ReadFile("../../testdata/reference/probe_refs.json")
	require.NoError(t, err)
	var raw map[string]json.RawMessage
	require.NoError(t, json.Unmarshal(b, &raw))
	var r probeRefs
	var coil map[string]map[string]float64
	require.NoError(t, json.Unmarshal(raw["coil"], &coil))
	r.Coil = map[string]struct {
		M, L, Rc, R, C float64
		Peak           float64 `json:"peak_a"`
	}{}
	for k, v := range coil {
		r.Coil[k] = struct {
			M, L, Rc, R, C float64
			Peak           float64 `json:"peak_a"`
		}{v["M_h"], v["L_h"], v["Rc_ohm"], v["R_ohm"], v["C_f"], v["peak_a"]}
	}
	require.NoError(t, json.Unmarshal(raw["antenna"], &r.Antenna))
	var mu map[string]map[string]float64
	var mraw map[string]json.RawMessage
	require.NoError(t, json.Unmarshal(raw["mutual"], &mraw))
	require.NoError(t, json.Unmarshal(mraw["turns"], &r.Mutual.Turns))
	delete(mraw, "turns")
	mu = map[string]map[string]float64{}
	for k, v := range mraw {
		var m map[string]float64
		require.NoError(t, json.Unmarshal(v, &m))
		mu[k] = m
	}
	r.Mutual.Rect.H, r.Mutual.Rect.R1, r.Mutual.Rect.R2, r.Mutual.Rect.M = mu["rect"]["height_m"], mu["rect"]["r1_m"], mu["rect"]["r2_m"], mu["rect"]["m_h"]
	r.Mutual.Circ.A, r.Mutual.Circ.D, r.Mutual.Circ.M = mu["circular"]["radius_m"], mu["circular"]["dist_m"], mu["circular"]["m_h"]
	r.Mutual.Small.S, r.Mutual.Small.D, r.Mutual.Small.M = mu["small_square"]["side_m"], mu["small_square"]["dist_m"], mu["small_square"]["m_h"]
	return r
}

func loadCase(t *testing.T, name string) (t0, dt float64, v, truth []float64) {
	rec, err := readers.ReadFile("../../testdata/reference/"+name+".npy", readers.Options{})
	require.NoError(t, err)
	require.Len(t, rec.Channels, 2)
	return rec.Start_s, rec.Interval_s, rec.Channels[0].Samples, rec.Channels[1].Samples
}

func rmsRel(got, want []float64) float64 {
	var e, s float64
	for i := range want {
		d := got[i] - want[i]
		e += d * d
		s += want[i] * want[i]
	}
	return math.Sqrt(e / s)
}

func TestCoilAgainstSolveIVP(t *testing.T) {
	refs := loadProbeRefs(t)
	require.Len(t, refs.Coil, 4)
	for name, c := range refs.Coil {
		t.Run(name, func(t *testing.T) {
			t0, dt, v, want := loadCase(t, "coil_"+name)
			res, err := Coil{M_h: c.M, L_h: c.L, Rc_ohm: c.Rc, R_ohm: c.R, C_f: c.C}.Current(v, t0, dt)
			require.NoError(t, err)
			// Within 1 % of the known peak and 2 % RMS over the record.
			assert.InEpsilon(t, c.Peak, res.Peak_a, 0.01)
			assert.Less(t, rmsRel(res.Current, want), 0.02)
			// charge and action integrals of the simulated current, trapezoid
			// A damped sine's net charge nearly cancels, so its error is judged as a
			// current offset: at most 0.5 % of the peak over the record. (The simulated
			// sine starts with a jump in dI/dt, which sampling turns into a small offset.)
			var q, a float64
			for i := 1; i < len(want); i++ {
				q += (want[i-1] + want[i]) * dt / 2
				a += (want[i-1]*want[i-1] + want[i]*want[i]) * dt / 2
			}
			assert.InDelta(t, math.Abs(q), res.Charge_c, 0.005*c.Peak*float64(len(want))*dt)
			assert.InEpsilon(t, a, res.Action_a2s, 0.02)
			// peak di/dt against the central differences of the simulated current
			var dmax float64
			for i := 1; i+1 < len(want); i++ {
				dmax = math.Max(dmax, math.Abs(want[i+1]-want[i-1])/(2*dt))
			}
			assert.InEpsilon(t, dmax, res.MaxDidt_a_per_s, 0.03)
			assert.InEpsilon(t, dt*float64(len(want)-1), dt*float64(len(res.Current)-1), 1e-12)
		})
	}
}

func TestAntennaAgainstSolveIVP(t *testing.T) {
	refs := loadProbeRefs(t)
	for name, a := range refs.Antenna {
		t.Run(name, func(t *testing.T) {
			t0, dt, v, want := loadCase(t, "antenna_"+name)
			res, err := Antenna{Calibration: 1 / a.Gain, Tau_s: a.Tau}.Field(v, t0, dt)
			require.NoError(t, err)
			assert.InEpsilon(t, a.Peak, res.Peak_v_per_m, 0.01)
			assert.Less(t, rmsRel(res.Field, want), 0.02)
			assert.InEpsilon(t, a.Peak, res.EndChange_v_per_m, 0.01, "a step's field stays")
			assert.Greater(t, res.Sensitivity_pct, 1.0)
		})
	}
}

func TestEstimateDroopFromTail(t *testing.T) {
	// On the step record the tail after the step is a pure exponential with tau 26 us.
	t0, dt, v, _ := loadCase(t, "antenna_step")
	tau, rms, err := EstimateDroop(v, dt, 0, 1e-3)
	require.NoError(t, err)
	assert.InEpsilon(t, 26e-6, tau, 0.01)
	assert.Less(t, rms, 0.5)
	res, err := Antenna{Calibration: 1 / 0.06, EstimateTau: true}.Field(v, t0, dt)
	require.NoError(t, err)
	assert.True(t, res.TauEstimated)
	assert.InEpsilon(t, 15e3, res.Peak_v_per_m, 0.02)
	// buried in noise: refuse
	_, _, err = EstimateDroop(v, dt, 0, 100)
	assert.ErrorContains(t, err, "buried in noise")
}

func TestMutualInductance(t *testing.T) {
	m := loadProbeRefs(t).Mutual
	// Numerical flux integrals of mu0 I / (2 pi r) over the coil (SciPy dblquad).
	assert.InEpsilon(t, m.Rect.M, MutualRectangular(m.Turns, m.Rect.H, m.Rect.R1, m.Rect.R2), 1e-9)
	assert.InEpsilon(t, m.Circ.M, MutualCircular(m.Turns, m.Circ.A, m.Circ.D), 1e-6)
	// The small-coil form reads low by about a^2/(4 d^2) for a coil of half-size a.
	small := MutualSmallCoil(m.Turns, m.Small.S*m.Small.S, m.Small.D)
	a := m.Small.S / 2
	assert.InEpsilon(t, m.Small.M, small, 2*a*a/(4*m.Small.D*m.Small.D))
	assert.Less(t, small, m.Small.M)
	// Handbook form for a rectangle coplanar with a long wire, mu0 N h ln(r2/r1)/(2 pi)
	// (the standard textbook example, e.g. Halliday, Resnick and Walker; from memory):
	// 1 turn, 1 m by r2/r1 = e gives mu0/(2 pi) = 2e-7 H.
	assert.InEpsilon(t, 2e-7, MutualRectangular(1, 1, 1, math.E), 1e-9)
}

func TestWhipDroopSanity(t *testing.T) {
	// Common practice, no source: a 1 Mohm scope input with tens of pF and a short
	// whip droops within hundreds of microseconds.
	_, ca := Whip(0.5, 0.002)
	tau := 1e6 * (ca + 30e-12)
	assert.Greater(t, tau, 10e-6)
	assert.Less(t, tau, 1e-3)
}

func BenchmarkReconstruct1M(b *testing.B) {
	n := 1_000_000
	v := make([]float64, n)
	for i := range v {
		if i > 1000 {
			x := float64(i-1000) * 1e-9
			v[i] = math.Exp(-x/5e-6) * math.Sin(2*math.Pi*3e5*x)
		}
	}
	b.Run("coil", func(b *testing.B) {
		c := Coil{M_h: 1e-9, L_h: 50e-9, R_ohm: 50}
		for i := 0; i < b.N; i++ {
			if _, err := c.Current(v, 0, 1e-9); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("antenna", func(b *testing.B) {
		a := Antenna{Calibration: 10, Tau_s: 26e-6}
		for i := 0; i < b.N; i++ {
			if _, err := a.Field(v, 0, 1e-9); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// A channel that records a double-exponential current itself gives back its closed-form
// peak (U times the peak factor at ln(tau1/tau2) tau1 tau2/(tau1 - tau2)) and charge
// U (tau1 - tau2), with no reconstruction in between.
func TestMeasuredCurrentClosedForm(t *testing.T) {
	tau1, tau2, u := 20e-6, 1e-6, 3e3
	dt := 5e-9
	i := make([]float64, 80000)
	for k := range i {
		if x := float64(k)*dt - 5e-6; x > 0 {
			i[k] = u * (math.Exp(-x/tau1) - math.Exp(-x/tau2))
		}
	}
	tp := math.Log(tau1/tau2) * tau1 * tau2 / (tau1 - tau2)
	peak := u * (math.Exp(-tp/tau1) - math.Exp(-tp/tau2))
	r, err := MeasuredCurrent(i, -5e-6, dt)
	require.NoError(t, err)
	assert.InEpsilon(t, peak, r.Peak_a, 1e-6)
	assert.InDelta(t, tp, r.PeakTime_s, dt)
	// the record ends at 395 us: the tail's charge beyond it is u tau1 exp(-395/20), 3e-9 of the whole
	assert.InEpsilon(t, u*(tau1-tau2), r.Charge_c, 1e-4)
	f, err := MeasuredField(i, -5e-6, dt)
	require.NoError(t, err)
	assert.InEpsilon(t, peak, f.Peak_v_per_m, 1e-6)
}

// The droop estimate starts its tail from the impulse, not from t = 0: the SciPy
// simulation of an antenna under a field rising over 2 us (testdata/reference/
// droop_refs.py, tau 26 us) gives the same estimate whether its record starts at 0 or
// 11 us before zero (so that t = 0 falls in the rise), within 2 % of the simulated tau.
func TestEstimateDroopRecordStartingBeforeZero(t *testing.T) {
	_, dt, v, _ := loadCase(t, "antenna_slow_ramp")
	for _, t0 := range []float64{0, -11e-6} {
		a := Antenna{Calibration: 1 / 0.06, EstimateTau: true}
		r, err := a.Field(v, t0, dt)
		require.NoError(t, err, "start %g", t0)
		assert.InEpsilon(t, 26e-6, r.Tau_s, 0.02, "record starting at %g s", t0)
		assert.InEpsilon(t, 15e3, r.Peak_v_per_m, 0.02, "record starting at %g s", t0)
	}
}

// A current recorded directly under noise keeps its IEC 62475 parameters: the drives of
// the self-check's channel cases (testdata/reference/impulse_refs.json, parameters by
// brentq on the closed form: a 10/350 and a 1.7/10.6 double exponential) with Gaussian
// noise of 0.01 % to 1 % of the peak, four noise samples each. Limits: near-clean, hvshot's
// clean claim (peak 0.1 %, times 0.5 %); at 0.5 %, IEC 61083-1's reference-recorder
// limits (from memory: peak 0.7 %, T1 2 %, T2 1.5 %); at 1 %, ours (1 %, 3 %, 2 %).
// Read off the raw samples, the 10/350 at 0.5 % gave +1.2 % in the peak and -4.6 % in T2.
func TestMeasuredCurrentUnderNoise(t *testing.T) {
	b, err := os.ReadFile("../../testdata/reference/impulse_refs.json")
	require.NoError(t, err)
	var raw struct {
		Channels []map[string]any `json:"channels"`
	}
	require.NoError(t, json.Unmarshal(b, &raw))
	limits := []struct{ noise, peak, t1, t2 float64 }{
		{1e-4, 0.1, 0.5, 0.5}, {5e-3, 0.7, 2, 1.5}, {1e-2, 1, 3, 2},
	}
	cases := 0
	for _, c := range raw.Channels {
		if c["kind"] == "antenna" {
			continue // a field drive, not a current
		}
		num := func(k string) float64 { return c[k].(float64) }
		k, tau1, tau2, tOn, dt, n := num("k"), num("tau1_s"), num("tau2_s"), num("t_on_s"), num("dt_s"), int(num("n"))
		ref := c["reference"].(map[string]any)
		peak, t1, t2 := ref["peak"].(float64), ref["front_time_s"].(float64), ref["time_to_half_s"].(float64)
		for _, l := range limits {
			for seed := int64(1); seed <= 4; seed++ {
				g := rand.New(rand.NewSource(seed))
				x := make([]float64, n)
				for i := range x {
					if u := float64(i)*dt - tOn; u > 0 {
						x[i] = k * (math.Exp(-u/tau1) - math.Exp(-u/tau2))
					}
					x[i] += l.noise * peak * g.NormFloat64()
				}
				r, err := MeasuredCurrent(x, 0, dt)
				require.NoError(t, err)
				what := fmt.Sprintf("%s %s, noise %.2g, seed %d", c["kind"], c["label"], l.noise, seed)
				assert.InEpsilon(t, peak, r.Peak_a, l.peak/100, what)
				assert.InEpsilon(t, t1, r.Front_s, l.t1/100, what)
				assert.InEpsilon(t, t2, r.TimeToHalf_s, l.t2/100, what)
				cases++
			}
		}
	}
	assert.GreaterOrEqual(t, cases, 12*4, "the channel cases were found")
}
