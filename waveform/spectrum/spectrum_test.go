package spectrum

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/readers"
)

// refs is testdata/reference/spectrum_refs.json, written by spectrum_refs.py (numpy.fft,
// scipy.signal.welch, scipy.optimize.brentq).
type refs struct {
	Record struct {
		File          string    `json:"file"`
		Dt            float64   `json:"dt_s"`
		N             int       `json:"n"`
		NFFT          int       `json:"nfft"`
		Df            float64   `json:"df_hz"`
		Pre           int       `json:"pre_trigger"`
		Bins          []int     `json:"bins"`
		Energy        float64   `json:"energy"`
		EnergyTime    float64   `json:"energy_time"`
		HannAbs       []float64 `json:"hann_abs"`
		HannPower     float64   `json:"hann_window_power"`
		WelchSeg      int       `json:"welch_nperseg"`
		WelchDf       float64   `json:"welch_df_hz"`
		WelchBins     []int     `json:"welch_bins"`
		WelchOneSided []float64 `json:"welch_onesided"`
		RawRe         []float64 `json:"re"`
		RawIm         []float64 `json:"im"`
		RawESD        []float64 `json:"esd"`
		Bw90          float64   `json:"bw90_hz"`
		Bw99          float64   `json:"bw99_hz"`
	} `json:"record"`
	Dexp struct {
		A, Energy  float64
		a, b       float64
		Bw90, Bw99 float64
	} `json:"-"`
	DexpRaw map[string]any `json:"dexp"`
}

func loadRefs(t testing.TB) refs {
	b, err := os.ReadFile("../../testdata/reference/spectrum_refs.json")
	require.NoError(t, err)
	var r refs
	require.NoError(t, json.Unmarshal(b, &r))
	d := r.DexpRaw
	r.Dexp.A, r.Dexp.a, r.Dexp.b = d["A"].(float64), d["a"].(float64), d["b"].(float64)
	r.Dexp.Energy, r.Dexp.Bw90, r.Dexp.Bw99 = d["energy"].(float64), d["bw90_hz"].(float64), d["bw99_hz"].(float64)
	return r
}

func loadRecord(t testing.TB, file string) (dt float64, cols [][]float64) {
	rec, err := readers.ReadFile("../../testdata/reference/"+file, readers.Options{})
	require.NoError(t, err)
	for _, c := range rec.Channels {
		cols = append(cols, c.Samples)
	}
	return rec.Interval_s, cols
}

// Against numpy.fft.rfft(x, n) * dt on the committed record (spectrum_refs.py).
func TestTransformAgainstNumpy(t *testing.T) {
	r := loadRefs(t)
	dt, cols := loadRecord(t, r.Record.File)
	x := cols[0]
	require.Len(t, x, r.Record.N)
	require.InEpsilon(t, r.Record.Dt, dt, 1e-9)
	s, err := Transform(x, r.Record.Dt, DefaultSettings())
	require.NoError(t, err)
	require.Equal(t, r.Record.NFFT, s.NFFT, "zero padding to the smallest 5-smooth length >= 2N")
	assert.InEpsilon(t, r.Record.Df, s.Df_hz, 1e-12)
	var peak float64
	for k := range s.X {
		peak = math.Max(peak, s.Amplitude(k))
	}
	for i, k := range r.Record.Bins {
		want := complex(r.Record.RawRe[i], r.Record.RawIm[i])
		assert.InDelta(t, 0, cmplx.Abs(s.X[k]-want)/peak, 1e-12, "bin %d: X", k)
		assert.InDelta(t, r.Record.RawESD[i], s.ESD(k), 1e-10*peak*peak, "bin %d: ESD", k)
	}
	assert.InEpsilon(t, r.Record.Energy, s.Energy(), 1e-12, "energy from the ESD")
	assert.InEpsilon(t, r.Record.EnergyTime, s.Energy(), 1e-12, "Parseval: sum x^2 dt")
	assert.InEpsilon(t, r.Record.Bw90, s.Bandwidth(0.9, nil), 1e-9)
	assert.InEpsilon(t, r.Record.Bw99, s.Bandwidth(0.99, nil), 1e-9)

	h, err := Transform(x, r.Record.Dt, Settings{Window: Hann, Pad: 2})
	require.NoError(t, err)
	assert.InEpsilon(t, r.Record.HannPower, h.WindowPower, 1e-12)
	for i, k := range r.Record.Bins {
		assert.InDelta(t, r.Record.HannAbs[i], h.Amplitude(k), 1e-12*peak, "bin %d: Hann", k)
	}
}

// Against scipy.signal.welch(x[:pre], window="hann", detrend="constant",
// scaling="density"), which is one-sided: twice the two-sided density inside.
func TestWelchAgainstScipy(t *testing.T) {
	r := loadRefs(t)
	_, cols := loadRecord(t, r.Record.File)
	p, err := Welch(cols[0][:r.Record.Pre], r.Record.Dt)
	require.NoError(t, err)
	require.Equal(t, r.Record.WelchSeg, p.Segment)
	assert.InEpsilon(t, r.Record.WelchDf, p.Df_hz, 1e-12)
	last := len(p.S) - 1
	for i, k := range r.Record.WelchBins {
		w := 2.0
		if k == 0 || k == last {
			w = 1
		}
		assert.InEpsilon(t, r.Record.WelchOneSided[i], w*p.S[k], 1e-9, "bin %d", k)
	}
}

// The noise floor of white noise is dt sigma sqrt(N) (the DFT of N independent
// samples has E|X_k|^2 = N sigma^2; common practice), and the bins of a pure noise
// record scatter about it with their mean square equal to it.
func TestNoiseFloorWhite(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	const n, dt, sigma = 40000, 5e-9, 0.7
	x := make([]float64, n)
	for i := range x {
		x[i] = sigma * rng.NormFloat64()
	}
	s, err := Transform(x, dt, DefaultSettings())
	require.NoError(t, err)
	p, err := Welch(x[:4000], dt)
	require.NoError(t, err)
	floor := NoiseFloor(s, p)
	want := dt * sigma * math.Sqrt(n)
	var ms, fl float64
	for k := 1; k < len(floor)-1; k++ {
		ms += s.Amplitude(k) * s.Amplitude(k)
		fl += floor[k]
	}
	m := float64(len(floor) - 2)
	assert.InEpsilon(t, want, math.Sqrt(ms/m), 0.02, "the bins' RMS")
	assert.InEpsilon(t, want, fl/m, 0.05, "the floor estimated from a tenth of the record")
	assert.InEpsilon(t, n*sigma*sigma*dt, s.NoiseEnergy(floor), 0.1, "the noise's energy N sigma^2 dt")
}

// The double exponential A (exp(-a t) - exp(-b t)): its energy in closed form
// A^2 (1/(2a) + 1/(2b) - 2/(a+b)) (Parseval: the time integral of x^2), and the
// frequencies holding 90 % and 99 % of it from the closed-form cumulative ESD solved by
// scipy.optimize.brentq (spectrum_refs.py).
func TestDoubleExponentialParseval(t *testing.T) {
	r := loadRefs(t)
	d := r.Dexp
	closed := d.A * d.A * (1/(2*d.a) + 1/(2*d.b) - 2/(d.a+d.b))
	require.InEpsilon(t, d.Energy, closed, 1e-12, "the script's closed form")
	for _, c := range []struct {
		name string
		dt   float64
		n    int
		tol  float64
	}{
		{"10 ns, 20 tau1", 10e-9, 136400, 1e-4},
		{"20 ns, 15 tau1, a length with a large factor", 20e-9, 51151, 2e-4},
	} {
		t.Run(c.name, func(t *testing.T) {
			x := make([]float64, c.n)
			for i := range x {
				tt := float64(i) * c.dt
				x[i] = d.A * (math.Exp(-d.a*tt) - math.Exp(-d.b*tt))
			}
			s, err := Transform(x, c.dt, DefaultSettings())
			require.NoError(t, err)
			assert.InEpsilon(t, closed, s.Energy(), c.tol, "energy")
			assert.InEpsilon(t, d.Bw90, s.Bandwidth(0.9, nil), 0.005, "90 %% bandwidth")
			assert.InEpsilon(t, d.Bw99, s.Bandwidth(0.99, nil), 0.005, "99 %% bandwidth")
		})
	}
}

// H of a series R-L-C network, current over voltage, recovered from scipy.signal.lsim's
// simulation against the analytic H(s) = s C/(L C s^2 + R C s + 1), within 1 % in band.
func TestTransferAgainstLsim(t *testing.T) {
	b, err := os.ReadFile("../../testdata/reference/spectrum_refs.json")
	require.NoError(t, err)
	var r struct {
		RLC struct {
			File string     `json:"file"`
			Band [2]float64 `json:"band_hz"`
		} `json:"rlc"`
	}
	require.NoError(t, json.Unmarshal(b, &r))
	var raw map[string]json.RawMessage
	require.NoError(t, json.Unmarshal(b, &raw))
	var v map[string]any
	require.NoError(t, json.Unmarshal(raw["rlc"], &v))
	R, L, C := v["R_ohm"].(float64), v["L_h"].(float64), v["C_f"].(float64)
	dt, cols := loadRecord(t, r.RLC.File)
	xs, err := Transform(cols[0], dt, DefaultSettings())
	require.NoError(t, err)
	ys, err := Transform(cols[1], dt, DefaultSettings())
	require.NoError(t, err)
	h, err := Transfer(xs, ys)
	require.NoError(t, err)
	band := Band(xs, nil, 0, r.RLC.Band[0], r.RLC.Band[1])
	worst, at, n := 0.0, 0.0, 0
	for k, in := range band {
		if !in {
			continue
		}
		s := complex(0, 2*math.Pi*xs.Freq(k))
		want := s * complex(C, 0) / (complex(L*C, 0)*s*s + complex(R*C, 0)*s + 1)
		if e := cmplx.Abs(h[k]-want) / cmplx.Abs(want); e > worst {
			worst, at = e, xs.Freq(k)
		}
		n++
	}
	require.Greater(t, n, 100)
	t.Logf("largest complex error %.3g %% at %.0f Hz over %d bins", 100*worst, at, n)
	assert.Less(t, worst, 0.01, "largest complex error %.3g %% at %.0f Hz", 100*worst, at)
}

func TestBandwidthEdges(t *testing.T) {
	s := &Spectrum{NFFT: 8, Df_hz: 10, X: []complex128{0, 0, 0, 0, 0}}
	assert.True(t, math.IsNaN(s.Bandwidth(0.9, nil)), "no energy: no bandwidth")
	s.X = []complex128{1, 0, 0, 0, 0}
	assert.InDelta(t, 4.5, s.Bandwidth(0.9, nil), 1e-12, "all energy at 0 Hz, spread over its half band")
	s.X = []complex128{0, 0, 1, 0, 0}
	assert.InDelta(t, 24, s.Bandwidth(0.9, nil), 1e-12, "one bin: linear across its band")
	_, err := Transform([]float64{1}, 1, DefaultSettings())
	assert.Error(t, err)
	_, err = Transform([]float64{1, 2, 3}, 0, DefaultSettings())
	assert.Error(t, err)
	_, err = Transform([]float64{1, 2, 3}, 1, Settings{Window: "kaiser"})
	assert.Error(t, err)
	_, err = Welch(make([]float64, 10), 1)
	assert.Error(t, err)
}
