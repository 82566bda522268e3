// Package synth makes synthetic captures: lightning and switching impulses of any
// shape, chopped or ringing, with noise, offset and a scope's quantisation and clipping,
// and coil and antenna channels computed from a current through the sensor models.
//
// Records are deterministic for a seed and say in their metadata that they are synthetic.
package synth

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/hvshot/hvshot/fit"
	"github.com/hvshot/hvshot/waveform"
)

// Spec describes one synthetic shot. Times in seconds, voltages in volts.
type Spec struct {
	Switching    bool
	Front_s      float64 // T1 (lightning) or Tp (switching)
	Tail_s       float64 // T2
	Tau1_s       float64 // when both taus are set they are used instead of Front/Tail
	Tau2_s       float64
	Peak_v       float64 // magnitude of the smooth curve's maximum
	Negative     bool
	Chop_s       float64 // chop instant after the start of the curve; 0 for a full impulse
	Collapse_s   float64 // duration of the linear collapse
	OscFreq_hz   float64
	OscAmp       float64 // fraction of Peak_v
	OscDamp_s    float64
	Noise        float64 // RMS, fraction of Peak_v
	Offset_v     float64
	PreTrigger_s float64
	Interval_s   float64
	Duration_s   float64
	Range_v      float64 // scope full scale (+-), in the channel's volts; 0 = none
	Bits         int     // ADC bits; 0 = no quantisation
	Seed         uint64

	Coil    *Coil
	Antenna *Antenna
	Winding *Winding // a winding under test: its current from the applied voltage
}

// Coil is the pickup coil and the discharge current it sees.
type Coil struct {
	M_h, L_h, Rc_ohm, R_ohm float64
	Peak_a                  float64 // amplitude factor: the double exponential's peak, or the damped sine's envelope at t = 0
	// current shape: a double exponential (Tau1, Tau2) or, with Freq set, a damped sine
	Tau1_s, Tau2_s float64
	Freq_hz        float64
	Damp_s         float64
	Noise_v        float64
}

// Antenna is the field antenna: its high-frequency gain (V per V/m), droop constant and
// the field change, which follows the charge the current has moved.
type Antenna struct {
	Gain         float64
	Tau_s        float64
	Peak_v_per_m float64
	Noise_v      float64
}

// Shape returns the double exponential of the spec, peak 1, starting at 0.
func (s Spec) Shape() (fit.DoubleExp, error) {
	if s.Tau1_s > 0 && s.Tau2_s > 0 {
		p := fit.DoubleExp{U: 1, Tau1_s: s.Tau1_s, Tau2_s: s.Tau2_s}
		p.U = 1 / p.PeakFactor()
		return p, nil
	}
	var p fit.DoubleExp
	var err error
	if s.Switching {
		p, err = fit.ForSwitching(s.Front_s, s.Tail_s)
	} else {
		p, err = fit.ForLightning(s.Front_s, s.Tail_s)
	}
	if err != nil {
		return p, err
	}
	p.U = 1 / p.PeakFactor()
	return p, nil
}

// Current returns the coil's current model at time u after the start.
func (c *Coil) current(u float64) (i, didt float64) {
	if u < 0 {
		return 0, 0
	}
	if c.Freq_hz > 0 {
		w := 2 * math.Pi * c.Freq_hz
		e := math.Exp(-u / c.Damp_s)
		return c.Peak_a * e * math.Sin(w*u), c.Peak_a * e * (w*math.Cos(w*u) - math.Sin(w*u)/c.Damp_s)
	}
	p := fit.DoubleExp{U: 1, Tau1_s: c.Tau1_s, Tau2_s: c.Tau2_s}
	k := c.Peak_a / p.PeakFactor()
	e1, e2 := math.Exp(-u/c.Tau1_s), math.Exp(-u/c.Tau2_s)
	return k * (e1 - e2), k * (-e1/c.Tau1_s + e2/c.Tau2_s)
}

// Generate makes the record.
func Generate(s Spec) (*waveform.Record, error) {
	if !(s.Interval_s > 0) || !(s.Duration_s > s.Interval_s) {
		return nil, fmt.Errorf("synth: interval and duration must be positive, duration longer")
	}
	n := int(s.Duration_s/s.Interval_s) + 1
	if n > 1<<26 {
		return nil, fmt.Errorf("synth: %d samples is too many", n)
	}
	shape, err := s.Shape()
	if err != nil {
		return nil, err
	}
	rng := rand.New(rand.NewPCG(s.Seed, 0x68767368))
	dt := s.Interval_s
	t0 := -s.PreTrigger_s
	sign := 1.0
	if s.Negative {
		sign = -1
	}
	div := make([]float64, n)
	var applied []float64 // the voltage before the scope's noise, for a winding
	if s.Winding != nil {
		applied = make([]float64, n)
	}
	for i := range div {
		u := t0 + float64(i)*dt
		v := 0.0
		if u > 0 {
			v = shape.At(u)
			if s.OscAmp != 0 && s.OscFreq_hz > 0 {
				v += s.OscAmp * math.Exp(-u/s.OscDamp_s) * math.Sin(2*math.Pi*s.OscFreq_hz*u)
			}
			if s.Chop_s > 0 && u > s.Chop_s {
				f := 0.0
				if s.Collapse_s > 0 && u < s.Chop_s+s.Collapse_s {
					f = 1 - (u-s.Chop_s)/s.Collapse_s
				}
				v *= f
			}
		}
		div[i] = sign*v*s.Peak_v + s.Offset_v + s.Noise*s.Peak_v*rng.NormFloat64()
		if applied != nil {
			applied[i] = sign * v * s.Peak_v
		}
	}
	ch := waveform.Channel{Name: "divider", Unit: "V", Samples: div}
	scope(&ch, s.Range_v, s.Bits)
	chans := []waveform.Channel{ch}
	if c := s.Coil; c != nil {
		v := coilVoltage(c, t0, dt, n)
		for i := range v {
			v[i] += c.Noise_v * rng.NormFloat64()
		}
		chans = append(chans, waveform.Channel{Name: "coil", Unit: "V", Samples: v})
	}
	if a := s.Antenna; a != nil {
		if s.Coil == nil {
			return nil, fmt.Errorf("synth: the antenna's field follows the coil's current; give a coil")
		}
		// field ~ charge moved: the running integral of the current, scaled to its peak
		q := make([]float64, n)
		for i := range q {
			q[i], _ = s.Coil.current(t0 + float64(i)*dt)
		}
		q = waveform.CumTrapz(q, dt, nil)
		_, qmax := waveform.Extreme(q)
		e := make([]float64, n)
		if qmax != 0 {
			for i := range e {
				e[i] = a.Peak_v_per_m * q[i] / qmax
			}
		}
		// antenna high-pass, exact for a field linear between samples
		v := make([]float64, n)
		r := math.Exp(-dt / a.Tau_s)
		k := a.Gain * a.Tau_s / dt * (1 - r)
		for i := 1; i < n; i++ {
			v[i] = v[i-1]*r + k*(e[i]-e[i-1])
		}
		for i := range v {
			v[i] += a.Noise_v * rng.NormFloat64()
		}
		chans = append(chans, waveform.Channel{Name: "antenna", Unit: "V", Samples: v})
	}
	if w := s.Winding; w != nil {
		cur, err := w.Current(applied, dt)
		if err != nil {
			return nil, err
		}
		for i := range cur {
			cur[i] += w.Noise_a * rng.NormFloat64()
		}
		chans = append(chans, waveform.Channel{Name: "current", Unit: "A", Samples: cur})
	}
	rec, err := waveform.NewRecord("synthetic", dt, t0, chans)
	if err != nil {
		return nil, err
	}
	rec.Meta["synthetic"] = "yes: made by hvshot synth, not a measurement"
	rec.Meta["synthetic shape"] = fmt.Sprintf("tau1 %.6g s, tau2 %.6g s, peak %.6g V", shape.Tau1_s, shape.Tau2_s, s.Peak_v)
	rec.Meta["synthetic seed"] = fmt.Sprint(s.Seed)
	return rec, nil
}

// scope quantises to bits over +-rangeV and clips at the range, as an ADC does.
func scope(c *waveform.Channel, rangeV float64, bits int) {
	if rangeV <= 0 {
		return
	}
	c.HasRange, c.RangeMin, c.RangeMax = true, -rangeV, rangeV
	c.ADCBits = bits
	q := 0.0
	if bits > 0 {
		q = 2 * rangeV / math.Exp2(float64(bits))
	}
	for i, v := range c.Samples {
		if q > 0 {
			v = math.Round(v/q) * q
		}
		c.Samples[i] = math.Max(-rangeV, math.Min(rangeV, v))
	}
}

// coilVoltage integrates L dIc/dt + (R + Rc) Ic = M dI/dt with RK4, 16 steps a
// sample, and returns V = R Ic.
func coilVoltage(c *Coil, t0, dt float64, n int) []float64 {
	v := make([]float64, n)
	if c.L_h == 0 {
		for i := range v {
			_, d := c.current(t0 + float64(i)*dt)
			v[i] = c.R_ohm * c.M_h * d / (c.R_ohm + c.Rc_ohm)
		}
		return v
	}
	f := func(t, ic float64) float64 {
		_, d := c.current(t)
		return (c.M_h*d - (c.R_ohm+c.Rc_ohm)*ic) / c.L_h
	}
	const sub = 16
	h := dt / sub
	ic := 0.0
	for i := range v {
		v[i] = c.R_ohm * ic
		t := t0 + float64(i)*dt
		for k := 0; k < sub; k++ {
			k1 := f(t, ic)
			k2 := f(t+h/2, ic+h/2*k1)
			k3 := f(t+h/2, ic+h/2*k2)
			k4 := f(t+h, ic+h*k3)
			ic += h / 6 * (k1 + 2*k2 + 2*k3 + k4)
			t += h
		}
	}
	return v
}
