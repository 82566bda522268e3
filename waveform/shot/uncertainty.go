package shot

import (
	"fmt"
	"hash/fnv"
	"math"
	"slices"
	"strings"

	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/probe"
	"github.com/hvshot/hvshot/waveform/uncert"
)

// DefaultDraws is the Monte Carlo's default number of noise draws per channel: about
// the most that keep a 100,000-sample lightning shot's uncertainty under 50 ms of one
// core (docs/performance.md). With N draws the record's part has N - 1 degrees of
// freedom, which the coverage factor accounts for (uncert.Budget.Expanded: k = 2.09
// at 31 when the record's part dominates).
const DefaultDraws = 32

// Uncertainty are the settings of the uncertainty per parameter (docs/method.md).
type Uncertainty struct {
	// Draws is the number of noise draws per channel; 0 turns the uncertainty off.
	Draws int
	// Timebase_ppm bounds the digitiser's time base error, +- parts per million (a
	// rectangular distribution; ours: 25 ppm, a common digitiser specification).
	Timebase_ppm float64
	// Reading_samples is the half-width, in sample intervals, within which each
	// instant read off the sampled record is known (ours: 0.5, half a sample).
	Reading_samples float64
}

// DefaultUncertainty returns the settings of docs/method.md.
func DefaultUncertainty() Uncertainty {
	return Uncertainty{Draws: DefaultDraws, Timebase_ppm: 25, Reading_samples: 0.5}
}

// UncertSetup is the setup file's [uncertainty] table.
type UncertSetup struct {
	Draws           *int     `toml:"draws"`
	Timebase_ppm    *float64 `toml:"timebase_ppm"`
	Reading_samples *float64 `toml:"reading_samples"`
}

// settings checks the table and returns the settings it gives; at finds a key's line.
func (u *UncertSetup) settings(file string, at func(k ...string) int) (Uncertainty, error) {
	out := DefaultUncertainty()
	if u == nil {
		return out, nil
	}
	bad := func(key, format string, a ...any) error {
		return &SetupError{File: file, Line: at("uncertainty", key), Key: "uncertainty." + key, Msg: fmt.Sprintf(format, a...)}
	}
	if u.Draws != nil {
		if *u.Draws < 0 || *u.Draws == 1 || *u.Draws > 100000 {
			return out, bad("draws", "%d: 0 (no uncertainty) or from 2 to 100000", *u.Draws)
		}
		out.Draws = *u.Draws
	}
	if u.Timebase_ppm != nil {
		if !(*u.Timebase_ppm >= 0 && *u.Timebase_ppm < 1e4) {
			return out, bad("timebase_ppm", "%g: parts per million, from 0 to 10000", *u.Timebase_ppm)
		}
		out.Timebase_ppm = *u.Timebase_ppm
	}
	if u.Reading_samples != nil {
		if !(*u.Reading_samples >= 0 && *u.Reading_samples <= 10) {
			return out, bad("reading_samples", "%g: a half-width in samples, from 0 to 10", *u.Reading_samples)
		}
		out.Reading_samples = *u.Reading_samples
	}
	return out, nil
}

// checkUncertainty validates a channel's expanded_uncertainty_pct.
func (c *ChannelSetup) checkUncertainty() error {
	if u := c.Uncertainty_pct; u != nil && !(*u > 0 && *u < 100) {
		return fmt.Errorf("expanded_uncertainty_pct: %g: a percentage above 0 and below 100", *u)
	}
	return nil
}

// uRule is how a parameter's uncertainty arises besides the record's noise.
type uRule struct {
	amp  float64 // the power of the scale factor in the value (Ut 1, action integral 2, times 0)
	time float64 // the power of the time base in the value (T1 1, di/dt -1, charge 1)
	// instants is the root of the sum of the squared coefficients of the instants read
	// off the record in the parameter's formula, T1 = 1.67 (t90 - t30): 1.67 sqrt 2;
	// nil when none is.
	instants func(*sources) float64
	on       string // the time parameter whose instants a rate rests on ("" for itself)
	bin      bool   // a spectral line's frequency: known to half a frequency bin
	// input: a value that may be given rather than measured (a droop constant); it has
	// an uncertainty only when the row says it was estimated from the record.
	input bool
	// setup: a value the setup alone determines (an atmospheric factor, resistors
	// designed for the nominal shape): no uncertainty from the record, none stated.
	setup bool
}

func fixed(c float64) func(*sources) float64 { return func(*sources) float64 { return c } }

// impulseShape picks the instants' coefficients by the impulse's shape family.
func impulseShape(lightning, switching float64) func(*sources) float64 {
	return func(s *sources) float64 {
		if s.imp != nil && s.imp.Shape == impulse.Switching {
			return switching
		}
		return lightning
	}
}

// The instants' coefficients, from the definitions in docs/method.md:
// T1 = 1.67 (t90 - t30); O1 = t30 - 0.3 T1 = 1.501 t30 - 0.501 t90; T2 = t50 - O1;
// the instant of chopping 1.5 tC - 0.5 tD, so Tc = 1.5 tC - 0.5 tD - O1; the collapse
// (tD - tC)/0.6; a switching T2 and Tz run from the fitted true origin (no instant);
// currents: T1 = 1.25 (t90 - t10), O1 = 1.125 t10 - 0.125 t90, T2 = t50 - O1.
var (
	sq = math.Sqrt
	// uRules holds every Number column's rule, by key (TestEveryNumberHasItsRule).
	uRules = map[string]uRule{
		"test_voltage_v":          {amp: 1},
		"extreme_v":               {amp: 1},
		"base_peak_v":             {amp: 1},
		"overshoot_pct":           {},
		"front_time_s":            {time: 1, instants: fixed(1.67 * sq(2))},
		"time_to_half_s":          {time: 1, instants: impulseShape(sq(1+1.501*1.501+0.501*0.501), 1)},
		"virtual_origin_s":        {time: 1, instants: impulseShape(sq(1.501*1.501+0.501*0.501), 0)},
		"chop_time_s":             {time: 1, instants: fixed(sq(1.5*1.5 + 0.5*0.5 + 1.501*1.501 + 0.501*0.501))},
		"chop_voltage_v":          {amp: 1},
		"collapse_time_s":         {time: 1, instants: fixed(sq(2) / 0.6)},
		"front_steepness_v_per_s": {amp: 1, time: -1, instants: fixed(sq(1.5*1.5 + 0.5*0.5 + 1.501*1.501 + 0.501*0.501)), on: "chop_time_s"},
		"time_to_peak_s":          {time: 1, instants: timeToPeakInstants},
		"time_above_90_s":         {time: 1, instants: fixed(sq(2))},
		"time_to_zero_s":          {time: 1, instants: fixed(1)},
		"efficiency":              {amp: 1},
		"base_tau1_s":             {time: 1},
		"base_tau2_s":             {time: 1},
		"fit_rms_v":               {amp: 1},
		"residual_freq_hz":        {time: -1, bin: true},
		"peak_current_a":          {amp: 1},
		"max_didt_a_per_s":        {amp: 1, time: -1},
		"rise_time_s":             {time: 1, instants: fixed(sq(2))},
		"current_front_time_s":    {time: 1, instants: fixed(1.25 * sq(2))},
		"current_time_to_half_s":  {time: 1, instants: fixed(sq(1 + 1.125*1.125 + 0.125*0.125))},
		"charge_c":                {amp: 1, time: 1},
		"action_integral_a2s":     {amp: 2, time: 1},
		"peak_field_v_per_m":      {amp: 1},
		"field_change_v_per_m":    {amp: 1},
		"droop_tau_s":             {time: 1, input: true},
		"kt":                      {setup: true},
		// resistances from the base curve's time constants and the stated capacitances
		"front_resistance_ohm":             {time: 1},
		"tail_resistance_ohm":              {time: 1},
		"front_resistance_for_nominal_ohm": {setup: true},
		"tail_resistance_for_nominal_ohm":  {setup: true},
		// the spectrum's and a comparison's numbers: the Monte Carlo does not take a
		// spectrum a draw (docs/method.md), so they have the stated parts only when the
		// record's part is there, which it is not: their uncertainty stays absent
		"bw90_hz":                    {time: -1},
		"bw99_hz":                    {time: -1},
		"difference_peak_pct":        {},
		"difference_rms_pct":         {},
		"difference_peak_time_s":     {time: 1},
		"transfer_deviation_pct":     {},
		"transfer_deviation_freq_hz": {time: -1},
	}
)

// ruleOf is a column's rule; one the table lacks (TestEveryNumberHasItsRule fails on
// it) is guessed from the unit: a scale factor's power 1 for an amplitude, a time
// base's for a time, no instants.
func ruleOf(c *Column) uRule {
	if r, ok := uRules[c.Key]; ok {
		return r
	}
	switch c.Unit {
	case "s":
		return uRule{time: 1}
	case "%", "":
		return uRule{}
	}
	return uRule{amp: 1}
}

// timeToPeakInstants: Tp = K T_AB with K = K0 + K1 T_AB + K2 T2 (us), so Tp moves by
// (K0 + 2 K1 T_AB + K2 T2) for each unit of T_AB = t90 - t30, two instants.
func timeToPeakInstants(s *sources) float64 {
	r := s.imp
	if r == nil {
		return math.NaN()
	}
	st := impulse.DefaultSettings()
	tab, t2 := (r.T90_s-r.T30_s)*1e6, r.TimeToHalf_s*1e6
	return sq(2) * math.Abs(st.SwitchingK0+2*st.SwitchingK1*tab+st.SwitchingK2*t2)
}

// unitSuffix is the key ending of each unit, for the companions' keys.
var unitSuffix = map[string]string{"V": "_v", "s": "_s", "%": "_pct", "A": "_a", "A/s": "_a_per_s", "C": "_c",
	"A^2 s": "_a2s", "V/m": "_v_per_m", "V/s": "_v_per_s", "Hz": "_hz", "ohm": "_ohm", "": ""}

// U95Suffix marks an expanded uncertainty's key: front_time_s has front_time_u95_s.
const U95Suffix = "_u95"

// companions is the column table's expanded uncertainties, one per Number column,
// placed after the last of them; each names its parameter in Of.
var companions = addCompanions()

func addCompanions() []*Column {
	var out []*Column
	for _, c := range Columns {
		if c.Kind != Number {
			continue
		}
		// a key not ending in its unit's suffix gets _u95 at its end
		// (TestEveryNumberHasItsRule asks for both)
		suf, ok := unitSuffix[c.Unit]
		if !ok || !strings.HasSuffix(c.Key, suf) {
			suf = ""
		}
		parent := c
		u := &Column{Key: strings.TrimSuffix(c.Key, suf) + U95Suffix + suf, Unit: c.Unit, Kind: Number, Of: parent,
			Label: "U(" + c.Label + ")", Screen: c.Screen, Scale: c.Scale, Digits: 2, Fixed: c.Fixed,
			Doc: "the expanded uncertainty (about 95 %) of `" + c.Key + "`",
			value: func(s *sources) float64 {
				if s.u95 == nil {
					return math.NaN()
				}
				return s.u95[parent.index]
			}}
		out = append(out, u)
	}
	// after the last number, so that the parameters and their uncertainties stay
	// together and the words that follow them keep their order
	at := 0
	for i, c := range Columns {
		if c.Kind == Number {
			at = i + 1
		}
	}
	Columns = slices.Insert(Columns, at, out...)
	return out
}

// Companion is a parameter's expanded-uncertainty column, nil when it has none.
func (c *Column) Companion() *Column {
	for _, u := range companions {
		if u.Of == c {
			return u
		}
	}
	return nil
}

// certificateK is the coverage factor assumed behind a stated expanded uncertainty.
const certificateK = 2

// scaleSource is the standard relative uncertainty of a channel's scale factor and
// where it comes from: the channel's own expanded_uncertainty_pct, else, for a divider,
// the measuring system's; NaN when neither is stated. k = 2 is assumed for both: a
// calibration certificate states its expanded uncertainty so (GUM 4.3.3; common
// practice).
func scaleSource(cs ChannelSetup, cfg *Config) float64 {
	switch {
	case cs.Uncertainty_pct != nil:
		return uncert.FromExpanded(*cs.Uncertainty_pct/100, certificateK)
	case cs.Role == Divider && cfg.Record.Uncertainty_pct > 0:
		return uncert.FromExpanded(cfg.Record.Uncertainty_pct/100, certificateK)
	}
	return math.NaN()
}

// quantumOf is the channel's least step, in its scaled unit (ch scaled, samples as
// recorded and scaled): from its resolution when the file states bits and range, else
// the least step in the data.
func quantumOf(ch *waveform.Channel, samples []float64) float64 {
	if ch.HasRange && ch.ADCBits > 0 && ch.ADCBits < 64 {
		return (ch.RangeMax - ch.RangeMin) / math.Exp2(float64(ch.ADCBits))
	}
	return uncert.LeastStep(samples)
}

// seedOf makes each shot's and channel's draws reproducible and their own.
func seedOf(id, channel string) uint64 {
	h := fnv.New64a()
	h.Write([]byte(id))
	h.Write([]byte{0})
	h.Write([]byte(channel))
	return h.Sum64()
}

// numbers are the Number columns that are parameters (not uncertainties).
func numbers() []*Column {
	var out []*Column
	for _, c := range Columns {
		if c.Kind == Number && c.Of == nil {
			out = append(out, c)
		}
	}
	return out
}

// values reads every parameter of nums from src into out.
func values(nums []*Column, src *sources, out []float64) {
	for k, c := range nums {
		out[k] = c.value(src)
	}
}

// truncation is how much of a divider's record its parameters need, when less than
// the whole: every point a full impulse's parameters are read at lies before the
// latest of its 50 % point, its fit window's end and (switching) the ends of its time
// above 90 % and of its time to zero, and the zero-phase filter on the residual (the
// test voltage function, or a switching impulse's smoothing over a tenth of T_AB)
// reaches back from beyond there by e^-30 at most. A chopped impulse, or one whose
// 50 % point the record lacks, needs it all.
func truncation(r *impulse.Result, n int, s impulse.Settings) int {
	if r.Shape == impulse.LightningChopped || math.IsNaN(r.T50_s) {
		return n
	}
	idx := func(t float64) float64 { return (t - r.Start_s) / r.Interval_s }
	last := math.Max(idx(r.T50_s), float64(r.FitTo))
	tau := waveform.TestVoltageTau_s
	if r.Shape == impulse.Switching {
		if math.IsNaN(r.TimeAbove90_s) {
			return n
		}
		last = math.Max(last, idx(r.T90_s+r.TimeAbove90_s))
		if !math.IsNaN(r.TimeToZero_s) {
			last = math.Max(last, idx(r.Origin_s+r.TimeToZero_s))
		}
		// the smoothing's constant comes from the recorded curve's 30-90 % time, which
		// noise moves: half again as long, to be safe
		tau = 1.5 * s.SwitchingSmooth * (r.T90_s - r.T30_s)
	}
	k := int(math.Ceil(last + 30*tau/r.Interval_s))
	return min(max(k, 0), n)
}

// measureUncertainty fills src.u95 and row's systematic parts: the Monte Carlo over
// the record's noise and the type B parts. The noise is modelled from samples (as
// recorded, scaled; quantum its step), the draws are added to centre (the record, or
// its best estimate without noise) and remeasure evaluates one noisy copy into src's
// shape. Nothing when the draws are 0.
func measureUncertainty(row *Row, src *sources, samples, centre []float64, quantum float64, pre int, dt float64, cs ChannelSetup, cfg *Config,
	remeasure func(x []float64) (*sources, error)) {
	set := cfg.Uncertainty
	if set.Draws <= 0 {
		return
	}
	nums := numbers()
	nz := uncert.NoiseOf(samples[:pre], quantum)
	sp := uncert.MonteCarlo(centre, nz, set.Draws, seedOf(row.File, row.Channel), len(nums), func(x, out []float64) error {
		s, err := remeasure(x)
		if err != nil {
			return err
		}
		values(nums, s, out)
		return nil
	})
	if sp.Failed > 0 {
		row.Warnings = append(row.Warnings, Warning{"uncertainty-draws-failed", fmt.Sprintf("%d of %d records with another draw of the record's own noise could not be evaluated: the parameters are fragile at this noise level", sp.Failed, sp.Draws)})
	}
	scale := scaleSource(cs, cfg)
	tb := uncert.Rect(set.Timebase_ppm * 1e-6)
	src.u95 = make([]float64, len(Columns))
	row.sys = make([]float64, len(Columns))
	for i := range src.u95 {
		src.u95[i], row.sys[i] = math.NaN(), math.NaN()
	}
	vals := make([]float64, len(nums))
	values(nums, src, vals)
	for k, c := range nums {
		v := math.Abs(vals[k])
		if math.IsNaN(v) || math.IsInf(v, 0) || sp.N[k] < 2 {
			continue
		}
		rule := ruleOf(c)
		if rule.input && !row.DroopEstimated || rule.setup {
			continue
		}
		b := uncert.Budget{Record: sp.SD[k], RecordDOF: uncert.SpreadDOF(float64(sp.N[k]-1), nz.DOF()), Scale: math.Abs(rule.amp) * scale * v, Timebase: math.Abs(rule.time) * tb * v, Reading: math.NaN()}
		if rule.amp == 0 {
			b.Scale = math.NaN()
		}
		if rule.time == 0 {
			b.Timebase = math.NaN()
		}
		if rule.instants != nil {
			reading := rule.instants(src) * uncert.Rect(set.Reading_samples*dt)
			b.Reading = reading
			if rule.on != "" {
				// a rate: its relative reading uncertainty is its time's
				on := slices.IndexFunc(nums, func(o *Column) bool { return o.Key == rule.on })
				b.Reading = math.NaN()
				if t := math.Abs(vals[on]); t > 0 {
					b.Reading = math.Abs(rule.time) * v * reading / t
				}
			}
		}
		if rule.bin && src.imp != nil {
			if r := src.imp; r.FitTo > r.FitFrom {
				m := waveform.SmoothLen(min(r.FitTo, r.FitFrom+8192) - r.FitFrom)
				b.Reading = uncert.Rect(0.5 / (float64(m) * dt)) // half a bin of the residual's spectrum
			}
		}
		src.u95[c.index] = b.Expanded()
		// what every shot of a series shares, for the series' mean (Summary)
		row.sys[c.index] = uncert.Combine(b.Scale, b.Timebase) / v
	}
}

// remeasureImpulse is a divider's evaluation for the Monte Carlo: its droop undone in
// place, r's decisions kept (impulse.Reevaluate), the circuit identified again when the
// shot's was (nom its nominal).
func remeasureImpulse(r *impulse.Result, nom impulse.Nominal, advised bool, droop_s float64, cfg *Config) func(x []float64) (*sources, error) {
	var w impulse.Work
	return func(x []float64) (*sources, error) {
		if droop_s > 0 {
			waveform.UndoDroop(x, r.Interval_s, droop_s)
		}
		q, err := w.Reevaluate(x, r, cfg.Settings)
		if err != nil {
			return nil, err
		}
		s := newSources()
		s.imp = q
		if advised {
			s.advice = advise(q, nom, cfg)
		}
		if cfg.Stages > 0 && cfg.Charging_v > 0 {
			s.efficiency = q.TestVoltage_v / (float64(cfg.Stages) * cfg.Charging_v)
		}
		return s, nil
	}
}

// dividerUncertainty runs measureUncertainty for a divider channel's result r, on the
// leading part of its samples (scaled, before any droop is undone) that its parameters
// need when that part measures the same, else on the whole record. The draws are
// centred on the record without its noise (impulse.Result.Denoised) unless a droop
// was undone, whose inverse is not at hand: then on the record itself.
func dividerUncertainty(row *Row, src *sources, ch *waveform.Channel, samples []float64, droop_s float64, r *impulse.Result, nom impulse.Nominal, cs ChannelSetup, cfg *Config) {
	if cfg.Uncertainty.Draws <= 0 {
		return
	}
	centre := samples
	if droop_s == 0 {
		centre = r.Denoised()
	}
	n := truncation(r, len(samples), cfg.Settings)
	if n < len(samples) {
		// the part must measure as the whole does, every parameter, or the whole is used
		nums := numbers()
		a, b := make([]float64, len(nums)), make([]float64, len(nums))
		q, err1 := remeasureImpulse(r, nom, src.advice != nil, droop_s, cfg)(slices.Clone(centre[:n]))
		w, err2 := remeasureImpulse(r, nom, src.advice != nil, droop_s, cfg)(slices.Clone(centre))
		same := err1 == nil && err2 == nil
		if same {
			values(nums, q, a)
			values(nums, w, b)
		}
		for k := 0; same && k < len(nums); k++ {
			same = math.IsNaN(a[k]) && math.IsNaN(b[k]) || math.Abs(a[k]-b[k]) <= 1e-9*math.Abs(b[k])
		}
		if !same {
			n = len(samples)
		}
	}
	pre := min(r.Baseline.Samples, n)
	measureUncertainty(row, src, samples, centre[:n], quantumOf(ch, samples), pre, r.Interval_s, cs, cfg, remeasureImpulse(r, nom, src.advice != nil, droop_s, cfg))
}

// sensorUncertainty runs measureUncertainty for a sensor channel, re-running its whole
// reconstruction on each noisy copy of its samples (scaled, before any droop is undone).
func sensorUncertainty(row *Row, src *sources, ch *waveform.Channel, samples []float64, droop_s, t0, dt float64, cs ChannelSetup, cfg *Config) {
	if cfg.Uncertainty.Draws <= 0 {
		return
	}
	measureUncertainty(row, src, samples, samples, quantumOf(ch, samples), waveform.PreTriggerLen(samples), dt, cs, cfg, func(x []float64) (*sources, error) {
		if droop_s > 0 {
			waveform.UndoDroop(x, dt, droop_s)
		}
		s := newSources()
		var err error
		switch cs.Role {
		case Current:
			s.cur, err = probe.MeasuredCurrent(x, t0, dt)
		case Field:
			s.fld, err = probe.MeasuredField(x, t0, dt)
		case Coil:
			var m probe.Coil
			if m, err = cs.Coil.Model(); err == nil {
				s.cur, err = m.Current(x, t0, dt)
			}
		case Antenna:
			var m probe.Antenna
			if m, err = cs.Antenna.Model(); err == nil {
				s.fld, err = m.Field(x, t0, dt)
			}
		}
		s.droop_s = src.droop_s
		return s, err
	})
}

// welfordSys averages the rows' shared relative uncertainty of one statistic.
type welfordSys struct {
	sum float64
	n   int
}

func (w *welfordSys) add(r *Row, c *Column) {
	if c.index < len(r.sys) && !math.IsNaN(r.sys[c.index]) {
		w.sum += r.sys[c.index]
		w.n++
	}
}

// mean is the shots' mean relative shared uncertainty, NaN when none had one.
func (w welfordSys) mean() float64 {
	if w.n == 0 {
		return math.NaN()
	}
	return w.sum / float64(w.n)
}

// seriesUncertainty fills a statistic's type A evaluation from its n values' sd, with
// sys the relative standard uncertainty every shot shares. The mean of n shots is
// known to sd/sqrt n from their scatter (GUM 4.2.3), one shot's value as a member of
// the series to sd (4.2.2: the scatter of repeated shots, the generator's own
// included); neither scatter averages away what all shots share, which is added in
// quadrature (5.1.2). k from the scatter's n - 1 degrees of freedom (G.4.1). The
// noise of each shot's record is in the scatter already and is not added again.
func seriesUncertainty(st *Stat, sys float64) {
	if st.N < 2 {
		return
	}
	shared := sys * math.Abs(st.Mean)
	mean, single := uncert.Repeat(st.SD, st.N)
	u95 := func(a float64) *float64 {
		b := uncert.Budget{Record: a, RecordDOF: float64(st.N - 1), Scale: shared, Timebase: math.NaN(), Reading: math.NaN()}
		v := b.Expanded()
		return &v
	}
	st.UMean, st.U95Mean, st.U95Shot = &mean, u95(mean), u95(single)
}
