package impulse

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/probe"
)

// The widened reference set (docs/selfcheck.md), after the reference groups of IEC
// 61083-2 (from memory: full lightning impulses smooth, with oscillation and with noise;
// chopped on the front and on the tail; switching; impulse currents). Every reference
// value comes from testdata/reference/impulse_refs.py; the records are built here from
// the construction parameters the script wrote, with its noise generator (gauss).

// Parameter names of the self-check's lines; the printer chooses units by them.
const (
	ParamTestVoltage  = "test voltage"
	ParamChopVoltage  = "voltage at chopping"
	ParamSteepness    = "steepness S"
	ParamPeakCurrent  = "peak current"
	ParamPeakField    = "peak field"
	ParamEndField     = "field at record end"
	ParamVerdict      = "verdict"
	ParamOutcome      = "evaluation"
	ParamShape        = "shape"
	ParamPolarity     = "polarity"
	outcomeNoImpulse  = "no impulse found"
	outcomeIncomplete = "incomplete"
)

type rateCase struct {
	Shape string  `json:"shape"`
	Dt    float64 `json:"dt_s"`
	N     int     `json:"n"`
	Td    float64 `json:"td_s"`
	Peak  float64 `json:"peak_v"`
	Noise float64 `json:"noise"`
	Seed  uint64  `json:"seed"`
	// quantised and clipped records
	Bits     int     `json:"bits"`
	RangeMin float64 `json:"range_min_v"`
	RangeMax float64 `json:"range_max_v"`
}

type chopCase struct {
	Label      string  `json:"label"`
	Dt         float64 `json:"dt_s"`
	N          int     `json:"n"`
	Td         float64 `json:"td_s"`
	Peak       float64 `json:"peak_v"`
	Chop       float64 `json:"chop_s"`
	Coll       float64 `json:"collapse_s"`
	Undershoot float64 `json:"undershoot"`
	RingF      float64 `json:"ring_f_hz"`
	RingDamp   float64 `json:"ring_damp_s"`
	Noise      float64 `json:"noise"`
	Seed       uint64  `json:"seed"`
	Uc         float64 `json:"voltage_at_chopping_v"`
	Ut         float64 `json:"test_voltage_v"`
	T1         float64 `json:"front_time_s"`
	Tc         float64 `json:"time_to_chopping_s"`
	Dur        float64 `json:"collapse_duration_s"`
	Steep      float64 `json:"steepness_v_per_s"`
}

type noImpulseCase struct {
	Dt     float64 `json:"dt_s"`
	N      int     `json:"n"`
	Td     float64 `json:"td_s"`
	Offset float64 `json:"offset_v"`
	Step   float64 `json:"step_v"`
	Rise   float64 `json:"rise_tau_s"`
	Noise  float64 `json:"noise_v"`
	Seed   uint64  `json:"seed"`
}

type channelCase struct {
	Kind       string             `json:"kind"`
	Label      string             `json:"label"`
	Dt         float64            `json:"dt_s"`
	N          int                `json:"n"`
	TOn        float64            `json:"t_on_s"`
	K          float64            `json:"k"`
	Tau1       float64            `json:"tau1_s"`
	Tau2       float64            `json:"tau2_s"`
	Circuit    map[string]float64 `json:"circuit"`
	PolesRe    []float64          `json:"poles_re"`
	PolesIm    []float64          `json:"poles_im"`
	ResiduesRe []float64          `json:"residues_re"`
	ResiduesIm []float64          `json:"residues_im"`
	Noise      float64            `json:"noise"`
	Seed       uint64             `json:"seed"`
	Ref        struct {
		Peak   float64 `json:"peak"`
		T1     float64 `json:"front_time_s"`
		T2     float64 `json:"time_to_half_s"`
		AtEnd  float64 `json:"value_at_end"`
		Origin float64 `json:"virtual_origin_s"`
	} `json:"reference"`
}

type groupsDoc struct {
	NoiseGen struct {
		Seed  uint64    `json:"seed"`
		First []float64 `json:"first"`
	} `json:"noise_generator"`
	Rates            []rateCase           `json:"rates"`
	Chopped          []chopCase           `json:"chopped"`
	OscillatingNoisy []map[string]float64 `json:"oscillating_noisy"`
	Quantised        rateCase             `json:"quantised"`
	Outcomes         struct {
		Clipped       rateCase      `json:"clipped"`
		CutTail       rateCase      `json:"cut_tail"`
		NoImpulseNois noImpulseCase `json:"no_impulse_noise"`
		NoImpulseStep noImpulseCase `json:"no_impulse_step"`
	} `json:"outcomes"`
	Channels []channelCase `json:"channels"`
}

// gauss returns n standard normal deviates from splitmix64 and the Box-Muller transform,
// the generator impulse_refs.py implements the same way, so that the script's reference
// procedure and hvshot see the same noisy record.
func gauss(seed uint64, n int) []float64 {
	out := make([]float64, n+1)
	s := seed
	next := func() float64 {
		s += 0x9E3779B97F4A7C15
		z := s
		z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9
		z = (z ^ (z >> 27)) * 0x94D049BB133111EB
		z ^= z >> 31
		return float64(z>>11+1) / (1 << 53) // in (0, 1]
	}
	for i := 0; i < n; i += 2 {
		u1, u2 := next(), next()
		r := math.Sqrt(-2 * math.Log(u1))
		out[i], out[i+1] = r*math.Cos(2*math.Pi*u2), r*math.Sin(2*math.Pi*u2)
	}
	return out[:n]
}

// shapeRecord builds the scaled double exponential of a reference shape, with noise of
// rc.Noise x peak from gauss.
func shapeRecord(sh map[string]float64, rc rateCase) []float64 {
	x := dexp(sh["tau1_s"], sh["tau2_s"], rc.Peak, rc.Td, rc.Dt, rc.N, 0, 0)
	if rc.Noise > 0 {
		for i, g := range gauss(rc.Seed, rc.N) {
			x[i] += rc.Noise * rc.Peak * g
		}
	}
	return x
}

// quantise rounds x to the centres of 2^bits codes over the range and holds samples
// beyond it at the edge codes, as a digitiser does.
func quantise(x []float64, bits int, lo, hi float64) {
	m := math.Exp2(float64(bits))
	q := (hi - lo) / m
	for i, v := range x {
		c := math.Floor((v - lo) / q)
		c = math.Max(0, math.Min(m-1, c))
		x[i] = lo + (c+0.5)*q
	}
}

// outcome is the verdict waveform/shot gives a shot (docs/method.md): fail when a
// measured parameter is out of tolerance, else incomplete when Unmeasured names one,
// else pass.
func outcome(r *Result, nom Nominal) string {
	un := Unmeasured(r, nom)
	for _, f := range Judge(r, nom, DefaultTolerances()) {
		if _, out := un[f.Parameter]; !out {
			return "fail"
		}
	}
	if len(un) > 0 {
		return outcomeIncomplete
	}
	return "pass"
}

func errOutcome(err error) string {
	if errors.Is(err, ErrNoImpulse) {
		return outcomeNoImpulse
	}
	return "error: " + err.Error()
}

type checker struct{ out []Check }

func (c *checker) cmp(cs, p string, ref, got, lim float64) {
	e := 100 * (got - ref) / ref
	c.out = append(c.out, Check{Case: cs, Param: p, Ref: ref, Got: got, Err_pct: e, Limit_pct: lim, OK: math.Abs(e) <= lim})
}

func (c *checker) expect(cs, p, want, found string) {
	c.out = append(c.out, Check{Case: cs, Param: p, Expect: want, Found: found, OK: want == found})
}

func (c *checker) failed(cs string, err error) {
	c.out = append(c.out, Check{Case: cs, Param: ParamOutcome, Expect: "evaluated", Found: errOutcome(err)})
}

func rateLabel(dt float64) string {
	if dt < 1e-8 {
		return fmt.Sprintf("%.0f GS/s", 1e-9/dt)
	}
	return fmt.Sprintf("%.0f MS/s", 1e-6/dt)
}

// groups adds the widened reference set's checks.
func groups(doc groupsDoc, shapes map[string]map[string]float64, s Settings) []Check {
	c := &checker{}
	// Sampling rates: 1 GS/s runs the recursive test voltage filter and the block-mean
	// fit, 100 and 50 MS/s the frequency-domain filter. Limits: clean, hvshot's claim
	// (Ut 0.1 %, times 0.5 %); 0.5 % noise, IEC 61083-1's reference-recorder limits as
	// the design notes record them (peak 0.7 %, T1 2 %, T2 1.5 %; from memory).
	for _, rc := range doc.Rates {
		sh := shapes[rc.Shape]
		cs := fmt.Sprintf("%s, %s (clean)", rc.Shape, rateLabel(rc.Dt))
		lu, lt1, lt2 := 0.1, 0.5, 0.5
		if rc.Noise > 0 {
			cs = fmt.Sprintf("%s, %s (%.1f %% noise)", rc.Shape, rateLabel(rc.Dt), 100*rc.Noise)
			lu, lt1, lt2 = 0.7, 2, 1.5
		}
		r, err := Evaluate(shapeRecord(sh, rc), 0, rc.Dt, s)
		if err != nil {
			c.failed(cs, err)
			continue
		}
		c.cmp(cs, ParamTestVoltage, rc.Peak, r.TestVoltage_v, lu)
		c.cmp(cs, "front time T1", sh["front_time_s"], r.FrontTime_s, lt1)
		c.cmp(cs, "time to half T2", sh["time_to_half_s"], r.TimeToHalf_s, lt2)
	}

	// Chops: the construction of impulse_refs.py's chop_case.
	for _, ch := range doc.Chopped {
		cs := "handbook chopped on the " + ch.Label
		x := chopRecord(ch, shapes["handbook-lightning"])
		r, err := Evaluate(x, 0, ch.Dt, s)
		if err != nil {
			c.failed(cs, err)
			continue
		}
		found := string(r.Shape)
		if r.Shape == LightningChopped {
			found = "chopped on the tail"
			if r.FrontChopped {
				found = "chopped on the front"
			}
		}
		if ch.Noise == 0 {
			// Clean: hvshot's claim, as for full impulses (levels 0.1 %, times 0.5 %; S
			// is Uc/Tc, so 0.6 %); T1 of the chopped front 1 % and the collapse duration
			// 5 %, as for the existing chopped case (docs/selfcheck.md).
			c.expect(cs, ParamShape, "chopped on the front", found)
			c.cmp(cs, ParamTestVoltage, ch.Ut, r.TestVoltage_v, 0.1)
			c.cmp(cs, ParamChopVoltage, ch.Uc, r.ChopVoltage_v, 0.1)
			c.cmp(cs, "time to chopping Tc", ch.Tc, r.ChopTime_s, 0.5)
			c.cmp(cs, ParamSteepness, ch.Steep, r.Steepness_v_per_s, 0.6)
			c.cmp(cs, "front time T1", ch.T1, r.FrontTime_s, 1)
			c.cmp(cs, "collapse duration", ch.Dur, r.Collapse_s, 5)
			continue
		}
		// Noisy tail chop with undershoot: peak and T1 by IEC 61083-1's reference-recorder
		// limits (0.7 %, 2 %; from memory), the voltage at chopping as a peak (0.7 %);
		// Tc 1 % (ours: O1 off by 2 % of T1 moves a 4.2 us Tc by 0.6 %); the collapse
		// duration 5 % (hvshot's claim, as above).
		c.expect(cs, ParamShape, "chopped on the tail", found)
		pol := "positive"
		if r.Polarity < 0 {
			pol = "negative"
		}
		c.expect(cs, ParamPolarity, "positive", pol)
		c.cmp(cs, ParamTestVoltage, ch.Ut, r.TestVoltage_v, 0.7)
		c.cmp(cs, "front time T1", ch.T1, r.FrontTime_s, 2)
		c.cmp(cs, ParamChopVoltage, ch.Uc, r.ChopVoltage_v, 0.7)
		c.cmp(cs, "time to chopping Tc", ch.Tc, r.ChopTime_s, 1)
		c.cmp(cs, "collapse duration", ch.Dur, r.Collapse_s, 5)
	}

	// Oscillation plus noise: against the NumPy residual procedure on the same record,
	// with the oscillating cases' limits (hvshot's claim: Ut 0.2 %, T1 1 %, T2 0.5 %,
	// beta' 0.3 points).
	for _, o := range doc.OscillatingNoisy {
		n := int(o["n"])
		x := oscillatingRecord(o)
		g := gauss(uint64(o["seed"]), n)
		for i := range x {
			x[i] += o["noise"] * g[i]
		}
		cs := fmt.Sprintf("oscillation %.1f MHz, %.0f %%, %s, %.1f %% noise", o["f_mhz"], 100*o["amp"], rateLabel(o["dt_s"]), 100*o["noise"])
		r, err := Evaluate(x, 0, o["dt_s"], s)
		if err != nil {
			c.failed(cs, err)
			continue
		}
		c.cmp(cs, ParamTestVoltage, o["test_voltage"], r.TestVoltage_v, 0.2)
		c.cmp(cs, "front time T1", o["front_time_s"], r.FrontTime_s, 1)
		c.cmp(cs, "time to half T2", o["time_to_half_s"], r.TimeToHalf_s, 0.5)
		d := r.Overshoot_pct - o["overshoot_pct"]
		c.out = append(c.out, Check{Case: cs, Param: "overshoot (points)", Ref: o["overshoot_pct"], Got: r.Overshoot_pct, Err_pct: d, Limit_pct: 0.3, Abs: true, OK: math.Abs(d) <= 0.3})
	}

	// 8-bit quantisation, through the channel (range stated, so clipping is looked
	// for): quantisation acts as noise of a code over sqrt(12) (0.15 % here), below the
	// noisy cases', so IEC 61083-1's reference-recorder limits apply (from memory).
	{
		q := doc.Quantised
		cs := fmt.Sprintf("%s, %d-bit, %.1f %% noise", q.Shape, q.Bits, 100*q.Noise)
		sh := shapes[q.Shape]
		x := shapeRecord(sh, q)
		quantise(x, q.Bits, q.RangeMin, q.RangeMax)
		ch := waveform.Channel{Samples: x, Unit: "V", HasRange: true, RangeMin: q.RangeMin, RangeMax: q.RangeMax, ADCBits: q.Bits}
		if r, err := EvaluateChannel(&ch, 0, q.Dt, s); err != nil {
			c.failed(cs, err)
		} else {
			c.expect(cs, ParamVerdict, "pass", outcome(r, Nominal{Peak_v: q.Peak}.For(r.Shape)))
			c.cmp(cs, ParamTestVoltage, q.Peak, r.TestVoltage_v, 0.7)
			c.cmp(cs, "front time T1", sh["front_time_s"], r.FrontTime_s, 2)
			c.cmp(cs, "time to half T2", sh["time_to_half_s"], r.TimeToHalf_s, 1.5)
		}
	}

	// Outcomes that are not numbers: a clipped record (range stated, and not), a tail
	// cut before 50 %: verdict incomplete (docs/method.md); negative records with no
	// impulse: no impulse found.
	{
		cl := doc.Outcomes.Clipped
		sh := shapes[cl.Shape]
		for _, stated := range []bool{true, false} {
			cs := fmt.Sprintf("%s clipped at %.0f kV, range stated", cl.Shape, cl.RangeMax/1e3)
			x := shapeRecord(sh, cl)
			quantise(x, cl.Bits, cl.RangeMin, cl.RangeMax)
			ch := waveform.Channel{Samples: x, Unit: "V"}
			if stated {
				ch.HasRange, ch.RangeMin, ch.RangeMax, ch.ADCBits = true, cl.RangeMin, cl.RangeMax, cl.Bits
			} else {
				cs = fmt.Sprintf("%s clipped at %.0f kV, no range stated", cl.Shape, cl.RangeMax/1e3)
			}
			if r, err := EvaluateChannel(&ch, 0, cl.Dt, s); err != nil {
				c.failed(cs, err)
			} else {
				c.expect(cs, ParamVerdict, outcomeIncomplete, outcome(r, Nominal{Peak_v: cl.Peak}.For(r.Shape)))
			}
		}
		ct := doc.Outcomes.CutTail
		sh = shapes[ct.Shape]
		cs := fmt.Sprintf("%s cut %.0f us after its start", ct.Shape, (float64(ct.N)*ct.Dt-ct.Td)*1e6)
		if r, err := Evaluate(shapeRecord(sh, ct), 0, ct.Dt, s); err != nil {
			c.failed(cs, err)
		} else {
			// what the record holds is still measured to hvshot's clean claim
			c.expect(cs, ParamVerdict, outcomeIncomplete, outcome(r, Nominal{Peak_v: ct.Peak}.For(r.Shape)))
			c.cmp(cs, ParamTestVoltage, ct.Peak, r.TestVoltage_v, 0.1)
			c.cmp(cs, "front time T1", sh["front_time_s"], r.FrontTime_s, 0.5)
		}
		for _, ni := range []struct {
			label string
			c     noImpulseCase
		}{{"negative noise, no impulse", doc.Outcomes.NoImpulseNois}, {"negative step, no impulse", doc.Outcomes.NoImpulseStep}} {
			x := noImpulseRecord(ni.c)
			found := "evaluated"
			if _, err := Evaluate(x, 0, ni.c.Dt, s); err != nil {
				found = errOutcome(err)
			}
			c.expect(ni.label, ParamOutcome, outcomeNoImpulse, found)
		}
	}

	// Coil, antenna and shunt channels: the channel's voltage from the circuit's closed
	// form (poles and residues, checked by the script against solve_ivp), reconstructed
	// by waveform/probe; the IEC 62475 current parameters (from memory) against brentq on
	// the drive. Limits: noise-free, hvshot's clean claim carried over (peak 0.1 %,
	// times 0.5 %; the field at the record's end, where the droop is undone most, 0.5 %);
	// the noisy shunt, IEC 61083-1's reference-recorder limits (from memory).
	for _, cc := range doc.Channels {
		v := channelRecord(cc)
		cs := cc.Kind + ", " + cc.Label
		lp, lt1, lt2 := 0.1, 0.5, 0.5
		if cc.Noise > 0 {
			lp, lt1, lt2 = 0.7, 2, 1.5
		}
		switch cc.Kind {
		case "antenna":
			a := probe.Antenna{Calibration: 1 / cc.Circuit["gain"], Tau_s: cc.Circuit["tau_s"]}
			f, err := a.Field(v, 0, cc.Dt)
			if err != nil {
				c.failed(cs, err)
				continue
			}
			c.cmp(cs, ParamPeakField, cc.Ref.Peak, f.Peak_v_per_m, lp)
			c.cmp(cs, ParamEndField, cc.Ref.AtEnd, f.EndChange_v_per_m, 0.5)
			continue
		}
		var cr *probe.CurrentResult
		var err error
		if cc.Kind == "coil" {
			k := cc.Circuit
			cr, err = probe.Coil{M_h: k["M_h"], L_h: k["L_h"], Rc_ohm: k["Rc_ohm"], R_ohm: k["R_ohm"], C_f: k["C_f"]}.Current(v, 0, cc.Dt)
		} else {
			cr, err = probe.MeasuredCurrent(v, 0, cc.Dt)
		}
		if err != nil {
			c.failed(cs, err)
			continue
		}
		c.cmp(cs, ParamPeakCurrent, cc.Ref.Peak, cr.Peak_a, lp)
		c.cmp(cs, "front time T1", cc.Ref.T1, cr.Front_s, lt1)
		c.cmp(cs, "time to half T2", cc.Ref.T2, cr.TimeToHalf_s, lt2)
	}
	return c.out
}

// chopRecord is impulse_refs.py's chop_case construction: the shape up to the instant
// of chopping, a straight collapse to -undershoot x Uc, a damped cosine after, noise.
func chopRecord(ch chopCase, sh map[string]float64) []float64 {
	x := dexp(sh["tau1_s"], sh["tau2_s"], ch.Peak, ch.Td, ch.Dt, ch.N, 0, 0)
	uc := ch.Uc
	var g []float64
	if ch.Noise > 0 {
		g = gauss(ch.Seed, ch.N)
	}
	for i := range x {
		t := float64(i) * ch.Dt
		switch {
		case t <= ch.Chop:
		case t < ch.Chop+ch.Coll:
			x[i] = uc - (1+ch.Undershoot)*uc*(t-ch.Chop)/ch.Coll
		default:
			u := t - ch.Chop - ch.Coll
			x[i] = -ch.Undershoot * uc * math.Exp(-u/ch.RingDamp) * math.Cos(2*math.Pi*ch.RingF*u)
		}
		if g != nil {
			x[i] += ch.Noise * ch.Peak * g[i]
		}
	}
	return x
}

// oscillatingRecord is impulse_refs.py's tvf_residual_case construction, per unit.
func oscillatingRecord(o map[string]float64) []float64 {
	n := int(o["n"])
	x := make([]float64, n)
	for i := range x {
		if u := float64(i)*o["dt_s"] - o["td_s"]; u >= 0 {
			x[i] = math.Exp(-u/o["tau1_s"]) - math.Exp(-u/o["tau2_s"]) + o["amp"]*math.Exp(-u/o["damp_s"])*math.Sin(2*math.Pi*o["f_mhz"]*1e6*u)
		}
	}
	return x
}

// noImpulseRecord: an offset with noise, and (Step != 0) a step rising with Rise from Td.
func noImpulseRecord(c noImpulseCase) []float64 {
	x := make([]float64, c.N)
	g := gauss(c.Seed, c.N)
	for i := range x {
		x[i] = c.Offset + c.Noise*g[i]
		if t := float64(i)*c.Dt - c.Td; c.Step != 0 && t > 0 {
			x[i] += c.Step * (1 - math.Exp(-t/c.Rise))
		}
	}
	return x
}

// channelRecord is the channel's closed-form response Re sum r_j exp(p_j u), u = t - t_on,
// plus noise x the drive's peak for a noisy case.
func channelRecord(cc channelCase) []float64 {
	v := make([]float64, cc.N)
	for i := range v {
		u := float64(i)*cc.Dt - cc.TOn
		if u <= 0 {
			continue
		}
		var s complex128
		for j := range cc.PolesRe {
			s += complex(cc.ResiduesRe[j], cc.ResiduesIm[j]) * cmplx.Exp(complex(cc.PolesRe[j], cc.PolesIm[j])*complex(u, 0))
		}
		v[i] = real(s)
	}
	if cc.Noise > 0 {
		for i, g := range gauss(cc.Seed, cc.N) {
			v[i] += cc.Noise * cc.Ref.Peak * g
		}
	}
	return v
}
