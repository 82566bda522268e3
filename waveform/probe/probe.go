package probe

import (
	"errors"
	"fmt"
	"math"

	"github.com/hvshot/hvshot/waveform"
	"gonum.org/v1/gonum/mat"
)

// Constants: CODATA 2018 values of the magnetic and electric constants.
const (
	Mu0  = 1.25663706212e-6 // H/m
	Eps0 = 8.8541878128e-12 // F/m
)

// Warning is a remark on the reconstruction, with a stable short code.
type Warning struct {
	Code string `json:"code"`
	Text string `json:"text"`
}

// ErrNoSignal is returned when a sensor channel carries nothing above its noise.
var ErrNoSignal = errors.New("no signal above the noise")

// MutualSmallCoil is the coupling of a straight current to a coil small against its
// distance: mu0 N A / (2 pi r). It reads low by about a^2/(4 r^2) for a coil of radius a.
func MutualSmallCoil(turns, area_m2, dist_m float64) float64 {
	return Mu0 * turns * area_m2 / (2 * math.Pi * dist_m)
}

// MutualRectangular is the coupling of a straight current to a coplanar rectangular
// coil of height h (parallel to the current) from r1 to r2: mu0 N h ln(r2/r1) / (2 pi).
func MutualRectangular(turns, height_m, r1_m, r2_m float64) float64 {
	return Mu0 * turns * height_m * math.Log(r2_m/r1_m) / (2 * math.Pi)
}

// MutualCircular is the coupling of a straight current to a coplanar circular loop of
// radius a whose centre is d from the current (d > a): mu0 N (d - sqrt(d^2 - a^2)).
func MutualCircular(turns, radius_m, dist_m float64) float64 {
	return Mu0 * turns * (dist_m - math.Sqrt(dist_m*dist_m-radius_m*radius_m))
}

// Coil is a pickup coil's circuit: mutual inductance M to the discharge path, its own
// inductance L and resistance Rc, loaded by R in parallel with C.
type Coil struct {
	M_h    float64
	L_h    float64
	Rc_ohm float64
	R_ohm  float64 // the scope input: 50 ohm or 1 Mohm
	C_f    float64 // load capacitance, 0 when negligible
	// Bandwidth_hz, when set, low-passes the V and dV/dt terms (zero phase) so they do
	// not lift the noise; the result says so.
	Bandwidth_hz float64
}

// CurrentResult is a reconstructed discharge current and its parameters; magnitudes
// are positive and Polarity gives the sign; NaN marks a value that was not found.
type CurrentResult struct {
	Current         []float64 // amperes, on the record's time base, signed
	Polarity        int
	Peak_a          float64
	PeakTime_s      float64
	MaxDidt_a_per_s float64
	Rise_s          float64 // 10-90 %
	Front_s         float64 // T1 = 1.25 (t90 - t10)
	Origin_s        float64 // O1 = t10 - 0.1 T1
	TimeToHalf_s    float64 // T2 from O1
	Charge_c        float64
	Action_a2s      float64
	End_pct         float64 // current at the record's end, percent of the peak
	Warnings        []Warning

	sums *sums // filled by a fused pass, else computed by currentParams
}

// sums gathers, sample by sample, what the current parameters need besides crossings.
type sums struct {
	hi, lo     float64
	ih, il     int
	q, a, dmax float64
	prev       float64
}

func (s *sums) add(i int, c float64, cur []float64) {
	if c > s.hi {
		s.hi, s.ih = c, i
	} else if c < s.lo {
		s.lo, s.il = c, i
	}
	if i > 0 {
		s.q += s.prev + c
		s.a += s.prev*s.prev + c*c
	}
	if i > 1 {
		d := c - cur[i-2]
		if d < 0 {
			d = -d
		}
		if d > s.dmax {
			s.dmax = d
		}
	}
	s.prev = c
}

func warn(ws *[]Warning, code, format string, a ...any) {
	*ws = append(*ws, Warning{Code: code, Text: fmt.Sprintf(format, a...)})
}

// preTrigger returns the pre-trigger mean and noise of v.
func preTrigger(v []float64) waveform.Baseline {
	pre := waveform.PreTriggerLen(v)
	if pre < 4 {
		return waveform.Baseline{}
	}
	return waveform.EstimateBaseline(v, pre)
}

// Current reconstructs the discharge current from the coil voltage v (volts at the
// scope) with the exact inversion of the lumped circuit:
// M I = L C dV/dt + (L/R + Rc C) V + (1 + Rc/R) integral V dt.
func (c Coil) Current(v []float64, t0, dt float64) (*CurrentResult, error) {
	if !(c.M_h > 0) || !(c.R_ohm > 0) || c.L_h < 0 || c.Rc_ohm < 0 || c.C_f < 0 {
		return nil, fmt.Errorf("coil model needs M > 0 and R > 0 (got M %g H, R %g ohm)", c.M_h, c.R_ohm)
	}
	n := len(v)
	res := &CurrentResult{}
	bl := preTrigger(v)
	kInt := 1 + c.Rc_ohm/c.R_ohm
	kV := c.L_h/c.R_ohm + c.Rc_ohm*c.C_f
	kD := c.L_h * c.C_f
	cur := make([]float64, n)
	// The V and dV/dt terms read from vt: the signal itself, or a low-passed copy.
	var vt []float64
	if c.Bandwidth_hz > 0 && (kV > 0 || kD > 0) {
		vt = make([]float64, n)
		for i, s := range v {
			vt[i] = s - bl.Level
		}
		waveform.ZeroPhaseLowPass(vt, dt, 1/(2*math.Pi*c.Bandwidth_hz))
		warn(&res.Warnings, "v-terms-lowpassed", "the V and dV/dt terms were low-passed to %.3g MHz to keep noise down", c.Bandwidth_hz/1e6)
	}
	// One pass: running trapezoid of V, plus the V and dV/dt terms.
	invM, h, acc := 1/c.M_h, dt/2, 0.0
	prev := v[0] - bl.Level
	if vt == nil && kD == 0 {
		// The common coil: fuse the reconstruction with the sums and extremes the
		// parameters need, so a long record is read once.
		// Locals, not the struct, so the loop keeps them in registers. The first two
		// samples start the sums; from the third on, the loop adds the trapezoid pair
		// (i-1, i) and the central difference cur[i] - cur[i-2].
		base, k, kI := bl.Level, kV*invM, kInt*invM
		var hi, lo, q, a, dmax, dhi, dlo float64
		var ih, il int
		for i := 0; i < n && i < 2; i++ {
			x := v[i] - base
			if i > 0 {
				acc += (prev + x) * h
			}
			prev = x
			cur[i] = kI*acc + k*x
		}
		for i := 0; i < n && i < 2; i++ {
			if c := cur[i]; c > hi {
				hi, ih = c, i
			} else if c < lo {
				lo, il = c, i
			}
		}
		// Trapezoid sums from plain sums: sum over pairs (c[i-1] + c[i]) is 2 sum c less
		// the two ends, and the same for c^2, so the loop adds each sample once.
		var s1, s2 float64
		for i := 0; i < n && i < 2; i++ {
			s1 += cur[i]
			s2 += cur[i] * cur[i]
		}
		// Two loops with few live values each, so nothing spills to the stack (a spilled
		// running sum puts a store and a load into its dependency chain); the previous
		// samples are read back from v and cur instead of carried in variables.
		h2 := 2 * base
		for i := 2; i < n; i++ {
			acc += (v[i-1] + v[i] - h2) * h
			c := kI*acc + k*(v[i]-base)
			cur[i] = c
			if c > hi {
				hi, ih = c, i
			} else if c < lo {
				lo, il = c, i
			}
		}
		for i := 2; i < n; i++ {
			c := cur[i]
			s1 += c
			s2 += c * c
			// largest rise and fall kept apart: rarely-taken branches, where an
			// absolute value per sample would cost a round trip through the integer unit
			if d := c - cur[i-2]; d > dhi {
				dhi = d
			} else if d < dlo {
				dlo = d
			}
		}
		dmax = math.Max(dhi, -dlo)
		if n > 1 {
			first, last := cur[0], cur[n-1]
			q = 2*s1 - first - last
			a = 2*s2 - first*first - last*last
		}
		res.Current = cur
		res.sums = &sums{hi: hi, lo: lo, ih: ih, il: il, q: q, a: a, dmax: dmax}
	} else {
		src := vt
		if src == nil {
			src = make([]float64, n)
			for i, s := range v {
				src[i] = s - bl.Level
			}
		}
		var dv []float64
		if kD > 0 {
			dv = waveform.Derivative(src, dt, nil)
		}
		for i, s := range v {
			x := s - bl.Level
			if i > 0 {
				acc += (prev + x) * h
			}
			prev = x
			m := kInt*acc + kV*src[i]
			if dv != nil {
				m += kD * dv[i]
			}
			cur[i] = m * invM
		}
	}
	if res.Current == nil {
		res.Current = cur
	}
	// noise lift by the V term against the integral's own
	if bl.NoiseRMS > 0 && kV > 0 {
		vNoise := kV * bl.NoiseRMS / c.M_h
		_, pk := waveform.Extreme(cur)
		if math.Abs(pk) > 0 && vNoise > 0.01*math.Abs(pk) && c.Bandwidth_hz == 0 {
			warn(&res.Warnings, "noise-amplified", "the L/R term carries %.2g %% of the peak current as noise; set a bandwidth to low-pass it", 100*vNoise/math.Abs(pk))
		}
	}
	if err := currentParams(res, t0, dt, bl.NoiseRMS*float64(n)*dt*kInt/c.M_h); err != nil {
		return nil, err
	}
	if kD > 0 && !math.IsNaN(res.Rise_s) && res.Rise_s > 0 {
		fres := 1 / (2 * math.Pi * math.Sqrt(c.L_h*c.C_f))
		if band := 0.35 / res.Rise_s; fres < 10*band {
			warn(&res.Warnings, "resonance-in-band", "the coil's L and C resonate at %.3g MHz, within ten times the signal band (%.3g MHz)", fres/1e6, band/1e6)
		}
	}
	return res, nil
}

// CalibratedCoil reconstructs the current from a calibration factor in A per V*s:
// I = k (integral V dt + tauLR V), tauLR being the coil's L/R (0 for a coil used
// purely in its derivative regime).
func CalibratedCoil(v []float64, t0, dt, k_a_per_vs, tauLR_s float64) (*CurrentResult, error) {
	if !(k_a_per_vs != 0) {
		return nil, fmt.Errorf("calibration factor must be non-zero")
	}
	// The same circuit with M = 1/k, R = 1 and L = tau.
	return Coil{M_h: 1 / k_a_per_vs, L_h: tauLR_s, R_ohm: 1}.Current(v, t0, dt)
}

func currentParams(r *CurrentResult, t0, dt, driftScale float64) error {
	cur := r.Current
	n := len(cur)
	st := r.sums
	if st == nil {
		st = &sums{}
		for i, c := range cur {
			st.add(i, c, cur)
		}
	}
	ip, pk := st.ih, st.hi
	if -st.lo > st.hi {
		ip, pk = st.il, st.lo
	}
	r.Polarity = 1
	if pk < 0 {
		r.Polarity = -1
	}
	r.Peak_a = math.Abs(pk)
	if r.Peak_a == 0 {
		return fmt.Errorf("%w: the current is zero throughout", ErrNoSignal)
	}
	r.PeakTime_s = t0 + float64(ip)*dt
	// Crossings on the magnitude: flip a negative current in place and back after.
	if r.Polarity < 0 {
		negate(cur)
	}
	r.setTimes(cur, cur, r.Peak_a, ip, t0, dt)
	if r.Polarity < 0 {
		negate(cur)
	}
	r.MaxDidt_a_per_s = st.dmax / (2 * dt)
	r.Charge_c = math.Abs(st.q * dt / 2)
	r.Action_a2s = st.a * dt / 2
	r.End_pct = 100 * math.Abs(cur[n-1]) / r.Peak_a
	if r.End_pct > 5 {
		warn(&r.Warnings, "integration-drift", "the current at the record's end is %.2g %% of the peak: integration drift, or the record ends before the current does (pre-trigger noise alone would give %.2g %%)", r.End_pct, 100*driftScale/r.Peak_a)
	}
	return nil
}

func negate(x []float64) {
	for i := range x {
		x[i] = -x[i]
	}
}

// Antenna is a short E-field antenna: effective height h_eff and capacitance C_a,
// loaded by R in parallel with C_L. Calibration, when non-zero, replaces the geometry:
// E = Calibration (V + (1/tau) integral V dt).
type Antenna struct {
	Heff_m      float64
	Ca_f        float64
	HeffCa_fm   float64 // h_eff x C_a directly (a plate: eps0 A); used when Heff_m is 0
	R_ohm       float64
	CL_f        float64
	Calibration float64 // (V/m) per V at the scope, high-frequency gain inverse
	Tau_s       float64 // droop time constant; 0 means R (C_a + C_L)
	EstimateTau bool    // estimate tau from the record's tail
	TailStart_s float64 // where the tail for the estimate starts; 0 = automatic
}

// Whip returns the effective height and capacitance of a thin vertical whip of height
// h and radius a over ground: h_eff = h/2 (0.45-0.5 h is usual) and
// C_a = 2 pi eps0 h / (ln(h/a) - 1), a lower bound some percent below the true value.
func Whip(height_m, radius_m float64) (heff_m, ca_f float64) {
	return height_m / 2, 2 * math.Pi * Eps0 * height_m / (math.Log(height_m/radius_m) - 1)
}

// PlateHeffCa is h_eff C_a of a flat plate flush with ground: eps0 A.
func PlateHeffCa(area_m2 float64) float64 { return Eps0 * area_m2 }

// FieldResult is a reconstructed field and its parameters.
type FieldResult struct {
	Field             []float64 // V/m, signed
	Polarity          int
	Peak_v_per_m      float64
	PeakTime_s        float64
	EndChange_v_per_m float64 // field at the end of the record against before the event
	Tau_s             float64
	TauEstimated      bool
	TauFitRMS_pct     float64 // residual RMS of the tail fit, percent of the tail amplitude
	Sensitivity_pct   float64 // change of the late field for a 10 % error in tau
	Warnings          []Warning
}

// Gain returns the antenna's high-frequency gain G (V at the scope per V/m).
func (a Antenna) Gain() (float64, error) {
	if a.Calibration != 0 {
		return 1 / a.Calibration, nil
	}
	hc := a.HeffCa_fm
	if a.Heff_m > 0 {
		hc = a.Heff_m * a.Ca_f
	}
	if !(hc > 0) || !(a.Ca_f+a.CL_f > 0) {
		return 0, fmt.Errorf("antenna model needs h_eff and C_a (or a calibration factor)")
	}
	return hc / (a.Ca_f + a.CL_f), nil
}

// Field reconstructs the field from the antenna voltage v:
// E = (1/G) (V + (1/tau) integral V dt).
func (a Antenna) Field(v []float64, t0, dt float64) (*FieldResult, error) {
	g, err := a.Gain()
	if err != nil {
		return nil, err
	}
	res := &FieldResult{}
	bl := preTrigger(v)
	tau := a.Tau_s
	switch {
	case a.EstimateTau:
		x := make([]float64, len(v))
		for i, s := range v {
			x[i] = s - bl.Level
		}
		// 0: automatic, from the impulse itself; not t = 0, which on a record that
		// starts before zero lies inside the rise
		start := 0.0
		if a.TailStart_s != 0 {
			start = a.TailStart_s - t0
		}
		t, rms, err := EstimateDroop(x, dt, start, bl.NoiseRMS)
		if err != nil {
			return nil, err
		}
		tau, res.TauEstimated, res.TauFitRMS_pct = t, true, rms
	case tau == 0 && a.R_ohm > 0:
		tau = a.R_ohm * (a.Ca_f + a.CL_f)
	}
	if !(tau > 0) {
		return nil, fmt.Errorf("no droop time constant: give tau, R and the capacitances, or ask for an estimate")
	}
	res.Tau_s = tau
	// One pass: E = (V + running integral of V / tau) / G.
	e := make([]float64, len(v))
	ig, k, acc := 1/g, dt/(2*tau), 0.0
	prev := v[0] - bl.Level
	hi, lo, ih, il := 0.0, 0.0, 0, 0
	for i, s := range v {
		x := s - bl.Level
		acc += (prev + x) * k
		prev = x
		f := (x + acc) * ig
		e[i] = f
		if f > hi {
			hi, ih = f, i
		} else if f < lo {
			lo, il = f, i
		}
	}
	res.Field = e
	integEnd := acc * tau
	ip, pk := ih, hi
	if -lo > hi {
		ip, pk = il, lo
	}
	if pk == 0 {
		return nil, fmt.Errorf("%w: the field is zero throughout", ErrNoSignal)
	}
	res.Polarity = 1
	if pk < 0 {
		res.Polarity = -1
	}
	res.Peak_v_per_m, res.PeakTime_s = math.Abs(pk), t0+float64(ip)*dt
	end := e[len(e)-1]
	res.EndChange_v_per_m = end
	// 10 % error in tau: the late field moves by integral/(G tau) x (1/1.1 - 1).
	if end != 0 {
		d := integEnd / (g * tau) * (1/1.1 - 1)
		res.Sensitivity_pct = 100 * math.Abs(d/end)
		warn(&res.Warnings, "tau-sensitivity", "a 10 %% error in the droop time constant changes the field at the record's end by %.2g %%", res.Sensitivity_pct)
	}
	return res, nil
}

// EstimateDroop fits A exp(-t/tau) + c to the tail of x (from tailStart_s after the
// record's start, or automatically five rise times after the extreme) and returns tau
// and the fit's residual RMS in percent of A. It refuses a tail within 10 noise RMS.
func EstimateDroop(x []float64, dt, tailStart_s, noise float64) (tau_s, rmsPct float64, err error) {
	n := len(x)
	ip, pk := waveform.Extreme(x)
	if pk == 0 {
		return 0, 0, fmt.Errorf("%w: cannot estimate the droop", ErrNoSignal)
	}
	s := 1.0
	if pk < 0 {
		s = -1
	}
	i0 := 0
	if tailStart_s > 0 {
		i0 = int(tailStart_s / dt)
	} else {
		mag := make([]float64, ip+1)
		for i := range mag {
			mag[i] = s * x[i]
		}
		t10 := waveform.LastCrossUp(mag, 0.1*math.Abs(pk), 0, ip+1)
		rise := float64(ip) - t10
		if t10 < 0 {
			rise = 1
		}
		i0 = ip + int(5*rise) + 1
	}
	if i0 < 0 || n-i0 < 32 {
		return 0, 0, fmt.Errorf("the tail after sample %d is too short to estimate the droop time constant", i0)
	}
	y := x[i0:]
	m := len(y)
	// For fixed tau, A and c are linear: solve the 2x2 normal equations; search ln tau.
	cost := func(tau float64) (float64, float64, float64) {
		r := math.Exp(-dt / tau)
		var se, see, sy, sey float64
		e := 1.0
		for _, v := range y {
			se += e
			see += e * e
			sy += v
			sey += e * v
			e *= r
		}
		fm := float64(m)
		det := see*fm - se*se
		if det == 0 {
			return math.Inf(1), 0, 0
		}
		A := (sey*fm - se*sy) / det
		c := (see*sy - se*sey) / det
		var ss float64
		e = 1
		for _, v := range y {
			d := v - A*e - c
			ss += d * d
			e *= r
		}
		return ss, A, c
	}
	lo, hi := math.Log(2*dt), math.Log(100*float64(m)*dt)
	g := (math.Sqrt(5) - 1) / 2
	a, b := hi-g*(hi-lo), lo+g*(hi-lo)
	fa, _, _ := cost(math.Exp(a))
	fb, _, _ := cost(math.Exp(b))
	for i := 0; i < 100 && hi-lo > 1e-7; i++ {
		if fa < fb {
			hi, b, fb = b, a, fa
			a = hi - g*(hi-lo)
			fa, _, _ = cost(math.Exp(a))
		} else {
			lo, a, fa = a, b, fb
			b = lo + g*(hi-lo)
			fb, _, _ = cost(math.Exp(b))
		}
	}
	tau_s = math.Exp((lo + hi) / 2)
	ss, A, _ := cost(tau_s)
	if math.Abs(A) < 10*noise || A == 0 {
		return 0, 0, fmt.Errorf("the tail (amplitude %.3g V) is buried in noise (%.3g V RMS): give the droop time constant instead of estimating it", math.Abs(A), noise)
	}
	if tau_s > 50*float64(m)*dt {
		return 0, 0, fmt.Errorf("the tail barely decays within the record (tau estimate %.3g s): give the droop time constant instead", tau_s)
	}
	return tau_s, 100 * math.Sqrt(ss/float64(m)) / math.Abs(A), nil
}

// MeasuredCurrent gives a channel that records the current itself, in amperes (a shunt,
// a current transformer, a Rogowski coil with its integrator), the parameters of a
// reconstructed one: the pre-trigger level is removed, nothing integrated.
func MeasuredCurrent(i []float64, t0, dt float64) (*CurrentResult, error) {
	bl := preTrigger(i)
	cur := make([]float64, len(i))
	for k, v := range i {
		cur[k] = v - bl.Level
	}
	res := &CurrentResult{Current: cur}
	if err := currentParams(res, t0, dt, bl.NoiseRMS); err != nil {
		return nil, err
	}
	if bl.NoiseRMS > 0 {
		settleNoisy(res, t0, dt, bl.NoiseRMS)
	}
	for k, w := range res.Warnings {
		if w.Code == "integration-drift" { // nothing was integrated: say what it can be
			res.Warnings[k] = Warning{Code: "current-at-end", Text: fmt.Sprintf("the current at the record's end is %.2g %% of the peak: the record ends before the current does, or the channel's zero moved", res.End_pct)}
		}
	}
	return res, nil
}

// settleNoisy measures the peak and the crossings of a noisy measured current again,
// from a smoothed copy: read off the raw samples, the peak is the largest noise spike
// on a broad crest and the first 50 % crossing comes early on a slow tail (a 10/350
// current under 0.5 % noise: +1.2 % in the peak, -4.6 % in T2). Each smoothing window
// is a small part of the time it serves (an eighth of the rise for the front, a
// fortieth of T2 for the tail), so a clean current keeps its figures; the peak is the
// vertex of a parabola fitted to the raw samples of the crest, above 97 % of it.
func settleNoisy(r *CurrentResult, t0, dt, noise float64) {
	rel := noise / r.Peak_a
	rise := int(r.Rise_s / dt * math.Min(1.0/8, math.Max(1.0/20, 16*rel)))
	band := math.Min(0.03, math.Max(0.005, 4*rel))
	if rise < 2 || math.IsNaN(r.Rise_s) {
		return // a front of a few samples: nothing to smooth without bending it
	}
	cur := r.Current
	mag := func(x []float64) []float64 {
		if r.Polarity < 0 {
			negate(x)
		}
		return x
	}
	s := mag(waveform.MovingMean(cur, rise))
	ip := 0
	for i, v := range s {
		if v > s[ip] {
			ip = i
		}
	}
	lo, hi := ip, ip
	for lo > 0 && s[lo-1] >= (1-band)*s[ip] {
		lo--
	}
	for hi < len(s)-1 && s[hi+1] >= (1-band)*s[ip] {
		hi++
	}
	peak, at := s[ip], float64(ip)
	if p, x, ok := crest(cur, lo, hi, float64(r.Polarity)); ok && x >= float64(lo) && x <= float64(hi) {
		peak, at = p, x
	}
	tail := s
	if w := int(r.TimeToHalf_s / dt / 40); w > rise && !math.IsNaN(r.TimeToHalf_s) {
		tail = mag(waveform.MovingMean(cur, w))
	}
	var settled CurrentResult
	if settled.setTimes(s, tail, peak, ip, t0, dt) {
		r.Peak_a, r.PeakTime_s = peak, t0+at*dt
		r.Rise_s, r.Front_s, r.Origin_s, r.TimeToHalf_s = settled.Rise_s, settled.Front_s, settled.Origin_s, settled.TimeToHalf_s
	}
}

// setTimes sets the IEC 62475 times of a current of magnitude peak at sample ip (from
// memory: T1 = 1.25 (t90 - t10), O1 = t10 - 0.1 T1, T2 = t50 - O1), the front's crossings
// read on front and the tail's on tail (both made positive); it reports whether the
// front's were found. What is not found is NaN.
func (r *CurrentResult) setTimes(front, tail []float64, peak float64, ip int, t0, dt float64) bool {
	r.Rise_s, r.Front_s, r.Origin_s, r.TimeToHalf_s = math.NaN(), math.NaN(), math.NaN(), math.NaN()
	t10 := waveform.LastCrossUp(front, 0.1*peak, 0, ip+1)
	t90 := waveform.CrossUp(front, 0.9*peak, int(math.Max(0, t10)), ip+1)
	if t10 < 0 || t90 < 0 {
		return false
	}
	r.Rise_s = (t90 - t10) * dt
	r.Front_s = 1.25 * r.Rise_s
	r.Origin_s = t0 + t10*dt - 0.1*r.Front_s
	if t50 := waveform.CrossDown(tail, 0.5*peak, ip, len(tail)); t50 >= 0 {
		r.TimeToHalf_s = t0 + t50*dt - r.Origin_s
	}
	return true
}

// crest fits a parabola to sign*x[lo..hi] by least squares and returns its vertex.
func crest(x []float64, lo, hi int, sign float64) (peak, at float64, ok bool) {
	if hi-lo < 4 {
		return 0, 0, false
	}
	c, h := float64(lo+hi)/2, float64(hi-lo)/2
	var s [5]float64  // sums of u^k, k = 0..4
	var sy [3]float64 // sums of y u^k, k = 0..2
	for i := lo; i <= hi; i++ {
		u := (float64(i) - c) / h
		y := sign * x[i]
		uk := 1.0
		for k := 0; k < 5; k++ {
			s[k] += uk
			if k < 3 {
				sy[k] += y * uk
			}
			uk *= u
		}
	}
	a := mat.NewDense(3, 3, []float64{s[0], s[1], s[2], s[1], s[2], s[3], s[2], s[3], s[4]})
	var coef mat.VecDense
	if err := coef.SolveVec(a, mat.NewVecDense(3, sy[:])); err != nil {
		return 0, 0, false
	}
	a0, a1, a2 := coef.AtVec(0), coef.AtVec(1), coef.AtVec(2)
	if !(a2 < 0) {
		return 0, 0, false
	}
	u := -a1 / (2 * a2)
	return a0 + a1*u + a2*u*u, c + u*h, true
}

// MeasuredField gives a channel that records the field itself, in V/m (a calibrated
// sensor with its own integration), its peak and its change over the record: the
// pre-trigger level is removed, no droop undone.
func MeasuredField(e []float64, t0, dt float64) (*FieldResult, error) {
	bl := preTrigger(e)
	f := make([]float64, len(e))
	ip := 0
	for k, v := range e {
		f[k] = v - bl.Level
		if math.Abs(f[k]) > math.Abs(f[ip]) {
			ip = k
		}
	}
	if f[ip] == 0 {
		return nil, fmt.Errorf("%w: the field is zero throughout", ErrNoSignal)
	}
	res := &FieldResult{Field: f, Polarity: 1, Peak_v_per_m: math.Abs(f[ip]), PeakTime_s: t0 + float64(ip)*dt,
		EndChange_v_per_m: f[len(f)-1], Tau_s: math.NaN()}
	if f[ip] < 0 {
		res.Polarity = -1
	}
	return res, nil
}
