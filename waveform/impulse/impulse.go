package impulse

import (
	"errors"
	"fmt"
	"math"

	"github.com/hvshot/hvshot/fit"
	"github.com/hvshot/hvshot/waveform"
)

// Collapse is where on the impulse the voltage collapsed.
type Collapse string

const (
	CollapseFront Collapse = "front" // before the extreme
	CollapseCrest Collapse = "crest" // at 90 % of the extreme or above, after it
	CollapseTail  Collapse = "tail"  // lower, on the tail
)

// Shape is the class of an impulse.
type Shape string

const (
	LightningFull    Shape = "lightning-full"
	LightningChopped Shape = "lightning-chopped"
	Switching        Shape = "switching"
	None             Shape = "none"
)

// ErrNoImpulse is returned for a record without an impulse: noise, a flat line, a step.
var ErrNoImpulse = errors.New("no impulse found")

// ErrFit is returned when the base curve of a lightning impulse cannot be fitted.
var ErrFit = errors.New("base curve fit failed")

// Settings are the evaluation's choices. DefaultSettings gives the ones hvshot uses.
type Settings struct {
	// Fit window: from FitFrom x Ue on the front to FitTo x Ue on the tail
	// (IEC 60060-1:2010 Annex B as we recall it; from memory: 0.2 and 0.4).
	FitFrom, FitTo float64
	// OvershootOver is the denominator of the relative overshoot: "extreme" divides
	// (Ue - Ub) by Ue, "base" by Ub (from memory; the report names the one used).
	OvershootOver string
	// LightningMaxFront_s splits lightning from switching by the front time estimate
	// fit.FrontTimeFactor x (t90 - t30) of the record (ours: 20 us, far from both standard shapes).
	LightningMaxFront_s float64
	// ChopDrop: a fall of more than this fraction of Ue within one front time after the
	// peak is a collapse, not a tail (ours: 0.4; a 1.2/50 tail falls 2 % in that time).
	ChopDrop float64
	// CollapseHigh, CollapseLow: the points C and D on the collapse, as fractions of the
	// voltage at chopping (from memory: 0.7 and 0.1, duration (tD - tC)/0.6).
	CollapseHigh, CollapseLow float64
	// SwitchingK0, K1, K2: Tp = K T_AB with K = K0 + K1 T_AB + K2 T2, times in us
	// (from memory: 2.42, -3.08e-3, 1.51e-4).
	SwitchingK0, SwitchingK1, SwitchingK2 float64
	// SwitchingSmooth: the residual of a switching impulse is low-passed with a
	// zero-phase time constant of this fraction of T_AB to keep noise off the extreme
	// (ours: 0.1; the base curve carries the shape, so the shape is untouched).
	SwitchingSmooth float64
	// MinSNR: an extreme below this many noise RMS is no impulse (ours: 10).
	MinSNR float64
	// DriftMax: a baseline trend that reaches this fraction of Ue at the 50 % point is
	// warned about, with its effect on Ut and T2 (ours: 0.01).
	DriftMax float64
	// PolarityRun: this many samples in a row beyond the noise and a tenth of the
	// largest excursion, of one sign, give the impulse's polarity (ours: 3, so a lone
	// glitch does not).
	PolarityRun int
	// ForceShape overrides the classification when not empty.
	ForceShape Shape
}

// DefaultSettings returns the settings documented in docs/method.md.
func DefaultSettings() Settings {
	return Settings{
		FitFrom: 0.2, FitTo: 0.4, OvershootOver: "extreme",
		LightningMaxFront_s: 20e-6, ChopDrop: 0.4,
		CollapseHigh: 0.7, CollapseLow: 0.1,
		SwitchingK0: 2.42, SwitchingK1: -3.08e-3, SwitchingK2: 1.51e-4,
		SwitchingSmooth: 0.1, MinSNR: 10, PolarityRun: 3, DriftMax: 0.01,
	}
}

// Warning is a remark on the measurement itself, with a stable short code.
type Warning struct {
	Code string `json:"code"`
	Text string `json:"text"`
}

// Result holds an evaluated impulse. Times are from the record's time base (t0 +
// i dt) unless named as durations; magnitudes are positive, Polarity gives the sign.
// A value that does not apply or could not be found is NaN.
type Result struct {
	Shape    Shape
	Polarity int // +1 or -1
	Baseline waveform.Baseline
	Noise_v  float64 // baseline noise RMS

	Extreme_v     float64 // Ue, the recorded curve's extreme
	TestVoltage_v float64 // Ut, the test voltage curve's maximum
	BasePeak_v    float64 // Ub, the base curve's maximum
	Overshoot_pct float64 // beta' in percent
	FrontTime_s   float64 // T1
	TimeToHalf_s  float64 // T2 (lightning from O1, switching from the true origin)
	Origin_s      float64 // O1 (lightning), true origin (switching)
	ChopTime_s    float64 // Tc, from O1 to the instant of chopping
	ChopVoltage_v float64 // voltage at the instant of chopping
	Collapse_s    float64 // duration of the voltage collapse
	ChopInstant_s float64
	// FrontChopped: chopped on the front, judged by its own quantities (time to
	// chopping, voltage at chopping, steepness), not by a full impulse's T1 and overshoot.
	FrontChopped bool
	// Collapse is where the voltage collapsed, whatever the shape (a chopped impulse's
	// chop, or a disruptive discharge during a switching impulse); "" when it did not.
	Collapse          Collapse
	Steepness_v_per_s float64 // front-chopped: the voltage at chopping over the time to chopping (from memory)
	// DriftUt_pct, DriftT2_pct: how far the baseline's trend moves Ut and T2, in percent,
	// when it reaches DriftMax of Ue at the 50 % point; NaN otherwise.
	DriftUt_pct, DriftT2_pct float64
	TimeToPeak_s             float64 // Tp (switching)
	TimeAbove90_s            float64 // Td (switching)
	TimeToZero_s             float64 // Tz (switching), from the true origin

	// Instants of the defining points on the test voltage curve, for plots.
	T30_s, T90_s, T50_s float64

	Fit             fit.Result
	FitOK           bool
	FitFrom         int // fit window, sample indices
	FitTo           int
	ResidualFreq_hz float64 // dominant frequency of the fit residual
	ResidualAmp_v   float64

	// Curves on the record's time base, polarity made positive and baseline removed:
	// the recorded curve, the base curve and the test voltage curve (NaN past a chop).
	Recorded, Base, TestVoltage []float64
	Start_s, Interval_s         float64

	Warnings []Warning
}

func nan() float64 { return math.NaN() }

func (r *Result) warn(code, format string, a ...any) {
	r.Warnings = append(r.Warnings, Warning{Code: code, Text: fmt.Sprintf(format, a...)})
}

func (r *Result) at(idx float64) float64 { return r.Start_s + idx*r.Interval_s }

// Evaluate evaluates the samples x of a divider channel (volts at the high-voltage
// side) on the time base t0 + i dt.
func Evaluate(x []float64, t0, dt float64, s Settings) (*Result, error) {
	return evaluate(x, t0, dt, s, nil, nil)
}

// Reevaluate measures x again as prior measured a record like it (the same record with
// other noise, for a Monte Carlo of its uncertainty): prior's pre-trigger length,
// polarity, shape and kind of chop are kept, the base-curve fit starts from prior's,
// and only the parameters are measured (Ut, Ue, Ub, beta', T1, T2, O1, the chop's and
// the switching impulse's times, the fit's residual RMS), with no warnings, drift or
// residual frequency. x may be a leading part of prior's record that holds every point
// the parameters are read at; it is overwritten (it becomes the result's Recorded).
func Reevaluate(x []float64, prior *Result, s Settings) (*Result, error) {
	return evaluate(x, prior.Start_s, prior.Interval_s, s, prior, nil)
}

// Work keeps a re-evaluation's curves from one call to the next, so that a Monte
// Carlo's many draws do not allocate (and clear) them anew.
type Work struct{ base, res []float64 }

// Reevaluate is the package's Reevaluate on w's buffers: the result's Base and
// TestVoltage are w's until its next call.
func (w *Work) Reevaluate(x []float64, prior *Result, s Settings) (*Result, error) {
	return evaluate(x, prior.Start_s, prior.Interval_s, s, prior, w)
}

// buf is a slice of n from *b, its old contents left: the caller overwrites all of it.
func (w *Work) buf(b *[]float64, n int) []float64 {
	if cap(*b) < n {
		*b = make([]float64, n)
	}
	return (*b)[:n]
}

func evaluate(x []float64, t0, dt float64, s Settings, prior *Result, work *Work) (*Result, error) {
	n := len(x)
	r := &Result{Start_s: t0, Interval_s: dt}
	for _, p := range []*float64{&r.Extreme_v, &r.TestVoltage_v, &r.BasePeak_v, &r.Overshoot_pct, &r.FrontTime_s,
		&r.TimeToHalf_s, &r.Origin_s, &r.ChopTime_s, &r.ChopVoltage_v, &r.Collapse_s, &r.ChopInstant_s,
		&r.TimeToPeak_s, &r.TimeAbove90_s, &r.TimeToZero_s, &r.T30_s, &r.T90_s, &r.T50_s, &r.ResidualFreq_hz, &r.ResidualAmp_v, &r.Steepness_v_per_s} {
		*p = nan()
	}
	if n < waveform.MinSamples {
		return nil, fmt.Errorf("%w: %d samples", ErrNoImpulse, n)
	}
	var pre int
	var diffNoise float64
	if prior != nil {
		pre, diffNoise = min(prior.Baseline.Samples, n), 0
	} else {
		pre, diffNoise = waveform.Onset(x)
	}
	if pre < 16 {
		r.warn("pretrigger-short", "only %d samples before the impulse: the baseline and noise estimates are weak", pre)
	}
	bl := waveform.EstimateBaseline(x, pre)
	if pre < 2 {
		bl = waveform.Baseline{Level: x[0], Samples: 1}
	}
	r.Baseline = bl
	r.Noise_v = bl.NoiseRMS
	noise := math.Max(bl.NoiseRMS, diffNoise)
	if prior != nil {
		r.Polarity = prior.Polarity
	} else {
		r.Polarity = frontPolarity(x, bl.Level, noise, s.PolarityRun)
	}
	y := x // a re-evaluation's x is its own copy
	if prior == nil {
		y = make([]float64, n)
	}
	for i, v := range x {
		y[i] = float64(r.Polarity) * (v - bl.Level)
	}
	r.Recorded = y
	ip, ue := waveform.ArgMax(y, 0, n)
	r.Extreme_v = ue
	lo := 0.0
	for _, v := range y {
		if prior != nil {
			break // only a warning rests on it
		}
		lo = min(lo, v)
	}
	if lo < -0.5*ue && ue > 0 {
		r.warn("opposite-excursion", "the record swings to the opposite polarity by %.0f %% of the peak (an undershoot after a chop, or ringing): the polarity is the front's", -100*lo/ue)
	}
	if !(ue > 0) || ue < s.MinSNR*noise {
		return nil, fmt.Errorf("%w: the largest excursion (%.3g V) is within %.0f x the noise (%.3g V RMS)", ErrNoImpulse, ue, s.MinSNR, noise)
	}
	t30 := waveform.LastCrossUp(y, 0.3*ue, 0, ip+1)
	t90 := waveform.CrossUp(y, 0.9*ue, int(math.Max(t30, 0)), ip+1)
	if t30 < 0 || t90 < 0 {
		return nil, fmt.Errorf("%w: the record starts above 30 %% of its extreme, so it has no front", ErrNoImpulse)
	}
	tailMin := math.Inf(1)
	for _, v := range y[ip:] {
		if v < tailMin {
			tailMin = v
		}
		if prior != nil {
			break // prior found the fall; a tail is never searched twice
		}
	}
	if tailMin > 0.9*ue && prior == nil {
		return nil, fmt.Errorf("%w: the record never falls below 90 %% after its extreme (a step, or a record far too short)", ErrNoImpulse)
	}
	if bl.NoiseRMS > 0.02*ue {
		r.warn("baseline-noisy", "baseline noise %.2g %% of the extreme value", 100*bl.NoiseRMS/ue)
	}
	frontSamples := fit.FrontTimeFactor * (t90 - t30)
	shape := LightningFull
	if frontSamples*dt > s.LightningMaxFront_s {
		shape = Switching
	}
	// Chop: a fall of ChopDrop x Ue within one front time.
	w := int(math.Max(2, math.Round(frontSamples)))
	chopAt := -1
	if prior != nil {
		shape = prior.Shape
	}
	for i := ip; i+w < n && (prior == nil || shape == LightningChopped); i++ {
		if y[i]-y[i+w] > s.ChopDrop*ue {
			chopAt = i
			break
		}
	}
	if chopAt < 0 && ip+w >= n && n-1 > ip && y[ip]-y[n-1] > s.ChopDrop*ue {
		chopAt = ip
	}
	if chopAt >= 0 && shape == LightningFull && prior == nil {
		shape = LightningChopped
	}
	if chopAt >= 0 {
		// where a collapse fell, for a disruptive discharge's record (our convention):
		// on the front when the curve still rises steeply into the extreme the collapse
		// follows at once (as for a front-chopped impulse below), else within 10 % of
		// the extreme, or lower on the tail
		k := max(2, w/4)
		switch {
		case chopAt <= ip+1 && ip >= k && y[ip]-y[ip-k] > 0.02*ue:
			r.Collapse = CollapseFront
		case y[chopAt] >= 0.9*ue:
			r.Collapse = CollapseCrest
		default:
			r.Collapse = CollapseTail
		}
	}
	if prior != nil {
		r.Collapse = prior.Collapse
	}
	if s.ForceShape != "" && prior == nil {
		shape = s.ForceShape
	}
	r.Shape = shape

	if shape == LightningChopped {
		if chopAt < 0 {
			chopAt = ip
		}
		if err := r.collapse(y, chopAt, w, s); err != nil {
			return nil, err
		}
		// On the front: the curve still rises steeply into its extreme, which the
		// collapse follows at once (ours: by 2 % of Ue over the last quarter of a front
		// time); a chop on the crest or the tail has a flat or falling curve there.
		k := max(2, w/4)
		onset := int(math.Round((r.ChopInstant_s - t0) / dt))
		r.FrontChopped = ip >= k && onset-ip <= k && y[ip]-y[ip-k] > 0.02*ue
		if prior != nil {
			r.FrontChopped = prior.FrontChopped
		}
		if r.FrontChopped {
			r.Collapse = CollapseFront
		}
	}
	end := n
	if shape == LightningChopped {
		end = int(math.Floor((r.ChopInstant_s - t0) / dt))
		if end < ip+1 {
			end = ip + 1
		}
		if end > n {
			end = n
		}
	}

	// Base curve.
	from := int(math.Ceil(waveform.CrossUp(y, s.FitFrom*ue, int(math.Max(0, t30-3*(t90-t30))), ip+1)))
	if from < 0 {
		from = 0
	}
	to := -1
	if shape == LightningChopped {
		to = end
	} else if c := waveform.CrossDown(y, s.FitTo*ue, ip, n); c >= 0 {
		to = int(math.Floor(c)) + 1
	} else {
		to = n
		r.warn("fit-window-cut", "the record ends before the tail falls to %.0f %%: the base curve is fitted up to the record's end", 100*s.FitTo)
	}
	r.FitFrom, r.FitTo = from, to
	abs := func(i float64) float64 {
		if i < 0 {
			return -1
		}
		return t0 + i*dt
	}
	var fr fit.Result
	ferr := ErrFit
	if prior != nil && prior.FitOK {
		// a record that differs by noise has its minimum beside prior's
		// to a relative 1e-9 in the cost: Gauss-Newton's second step from beside the
		// minimum, the parameters then off by far less than noise moves them
		fr, ferr = fit.Fit(y, t0, dt, from, to, prior.Fit.Params, &fit.Settings{BlockRMS: true, RelTol: 1e-9})
	}
	var start fit.DoubleExp
	if ferr != nil {
		start = fit.StartValues(abs(t30), abs(t90), abs(waveform.CrossDown(y, 0.5*ue, ip, n)), ue)
	}
	for _, k := range []float64{1, 0.5, 2, 0.25} {
		if ferr == nil {
			break
		}
		st := start
		st.Tau2_s *= k
		if st.Tau1_s < 3*st.Tau2_s {
			st.Tau1_s = 3 * st.Tau2_s
		}
		fr, ferr = fit.Fit(y, t0, dt, from, to, st, nil)
	}
	r.Fit = fr
	r.FitOK = ferr == nil
	var base []float64
	if work != nil {
		base = work.buf(&work.base, n)
	} else {
		base = make([]float64, n)
	}
	if r.FitOK {
		fr.Params.Eval(t0, dt, base)
		r.BasePeak_v = fr.Params.Peak()
		if shape == LightningChopped {
			_, r.BasePeak_v = waveform.ArgMax(base, 0, end)
		}
	} else if shape == LightningFull {
		return nil, fmt.Errorf("%w: %v", ErrFit, ferr)
	} else {
		r.warn("fit-failed", "base curve fit failed (%v): parameters are read from the recorded curve", ferr)
		copy(base, y)
	}
	r.Base = base

	// Residual, filtered, added back.
	var res []float64
	if work != nil {
		res = work.buf(&work.res, end)
	} else {
		res = make([]float64, end)
	}
	var ss float64
	for i := range res {
		res[i] = y[i] - base[i]
		if i >= from && i < to {
			ss += res[i] * res[i]
		}
	}
	if prior != nil && r.FitOK && to > from {
		r.Fit.ResidualRMS = math.Sqrt(ss / float64(to-from))
	}
	if r.FitOK && to-from > 16 && prior == nil {
		// Ringing decays within microseconds; 8k samples from the fit start see it
		// (resolution 1/(8192 dt), 122 kHz at 1 GS/s).
		hi := min(to, end, from+8192)
		f, a := waveform.DominantFrequency(res[from:hi], dt, 2/(float64(hi-from)*dt))
		if a > 3*bl.NoiseRMS && a > 0.002*ue {
			r.ResidualFreq_hz, r.ResidualAmp_v = f, a
		}
		if fr.ResidualRMS > math.Max(5*bl.NoiseRMS, 0.02*ue) {
			r.warn("fit-residual-large", "base curve fit residual %.2g %% of Ue against baseline noise %.2g %%: check the shape and the fit window", 100*fr.ResidualRMS/ue, 100*bl.NoiseRMS/ue)
		}
	}
	if shape == Switching {
		if tau := s.SwitchingSmooth * (t90 - t30) * dt; tau > 0 {
			waveform.ZeroPhaseLowPass(res, dt, tau)
		}
	} else {
		if prior == nil {
			waveform.ApplyTestVoltageFunction(res, dt)
		} else {
			// The parameters are read from the fit window on, where the filter's start
			// has died away (e^-30) within 30 of its time constants; the recursive
			// filter at every interval, as a spread needs it (ApplyTestVoltageFunctionRecursive).
			lo := max(0, min(from, end-2)-int(30*waveform.TestVoltageTau_s/dt))
			waveform.ApplyTestVoltageFunctionRecursive(res[lo:], dt)
		}
	}
	// The test voltage curve takes the residual's place (NaN past a chop).
	tv := res
	if end < n {
		tv = make([]float64, n)
		copy(tv, res)
		for i := end; i < n; i++ {
			tv[i] = math.NaN()
		}
	}
	for i := 0; i < end; i++ {
		tv[i] += base[i]
	}
	r.TestVoltage = tv
	itv, ut := waveform.ArgMax(tv, 0, end)
	r.TestVoltage_v = ut
	if r.FitOK {
		den := ue
		if s.OvershootOver == "base" {
			den = r.BasePeak_v
		}
		r.Overshoot_pct = 100 * (ue - r.BasePeak_v) / den
	}
	// Front on the test voltage curve.
	a30 := waveform.LastCrossUp(tv, 0.3*ut, 0, itv+1)
	a90 := waveform.CrossUp(tv, 0.9*ut, int(math.Max(0, a30)), itv+1)
	if a30 < 0 || a90 < 0 {
		return nil, fmt.Errorf("%w: no 30 %% and 90 %% points on the test voltage curve", ErrNoImpulse)
	}
	r.T30_s, r.T90_s = abs(a30), abs(a90)
	if a90-a30 < 30 {
		r.warn("front-undersampled", "%.0f samples between 30 %% and 90 %% on the front; IEC 61083-1 asks for at least 30 (sample rate >= 30/Tx)", a90-a30)
	}
	switch shape {
	case Switching:
		r.switching(tv, itv, a30, a90, s)
	default:
		r.FrontTime_s = fit.FrontTimeFactor * (a90 - a30) * dt
		r.Origin_s = abs(a30) - 0.3*r.FrontTime_s
		if shape == LightningChopped {
			r.ChopTime_s = r.ChopInstant_s - r.Origin_s
			if r.FrontChopped {
				r.Steepness_v_per_s = r.ChopVoltage_v / r.ChopTime_s
			}
		} else if a50 := waveform.CrossDown(tv, 0.5*ut, itv, n); a50 >= 0 {
			r.T50_s = abs(a50)
			r.TimeToHalf_s = r.T50_s - r.Origin_s
		} else {
			r.warn("record-short", "the record ends before the tail falls to 50 %%: no time to half-value (record %.3g us after O1)", (abs(float64(n-1))-r.Origin_s)*1e6)
		}
	}
	if prior == nil {
		r.drift(tv, itv, pre, s)
	}
	return r, nil
}

// drift judges the baseline's trend where it acts: the pre-trigger part's slope,
// extrapolated to the 50 % point on the tail (or the record's end), against DriftMax of
// Ue, when the extrapolation stands above three times its own uncertainty. The warning
// gives the effect on Ut and T2: the drift at the peak, and the drift at t50 over the
// tail's slope there.
func (r *Result) drift(tv []float64, itv, pre int, s Settings) {
	r.DriftUt_pct, r.DriftT2_pct = math.NaN(), math.NaN()
	bl, n := r.Baseline, len(tv)
	if pre <= 16 || bl.Slope == 0 || r.Shape == LightningChopped {
		return // a chopped impulse has no tail for the trend to act on
	}
	c := float64(pre-1) / 2 // the pre-trigger's centre, where the level is exact
	// a least-squares slope over pre samples of noise sigma has sigma sqrt(12/pre^3)
	sd := bl.NoiseRMS * math.Sqrt(12/math.Pow(float64(pre), 3))
	slope := float64(r.Polarity) * bl.Slope
	i50 := float64(n - 1)
	if !math.IsNaN(r.T50_s) {
		i50 = (r.T50_s - r.Start_s) / r.Interval_s
	}
	d50 := slope * (i50 - c)
	if math.Abs(d50) <= s.DriftMax*r.Extreme_v || math.Abs(d50) <= 3*sd*(i50-c) {
		return
	}
	r.DriftUt_pct = 100 * slope * (float64(itv) - c) / r.TestVoltage_v
	what := "the record's end"
	if k := int(math.Round(i50)); !math.IsNaN(r.TimeToHalf_s) && k > 0 && k < n-1 {
		what = "the 50 % point"
		// the tail crosses 50 % later by the drift over its (falling) slope there
		if ds := (tv[k+1] - tv[k-1]) / 2; ds < 0 {
			r.DriftT2_pct = 100 * (-d50 / ds) * r.Interval_s / r.TimeToHalf_s
		}
	}
	effect := fmt.Sprintf("Ut about %+.2g %%", r.DriftUt_pct)
	if !math.IsNaN(r.DriftT2_pct) {
		effect += fmt.Sprintf(" and T2 about %+.2g %%", r.DriftT2_pct)
	}
	r.warn("baseline-drift", "the baseline's trend, from the pre-trigger part, reaches %.2g %% of Ue at %s: %s off for it", 100*math.Abs(d50)/r.Extreme_v, what, effect)
}

// frontPolarity is the sign of the first excursion that grows out of the noise into the
// impulse: the first run of samples beyond both 10 noise RMS and a tenth of the record's
// largest excursion, all of one sign. The largest sample's sign would take an undershoot
// after a chop, larger than the impulse, for the impulse itself.
func frontPolarity(x []float64, level, noise float64, run int) int {
	big := 0.0
	for _, v := range x {
		big = math.Max(big, math.Abs(v-level))
	}
	thr := math.Max(10*noise, 0.1*big)
	k, sign := 0, 0
	for _, v := range x {
		d := v - level
		switch {
		case d > thr && sign >= 0:
			k, sign = k+1, 1
		case d < -thr && sign <= 0:
			k, sign = k+1, -1
		case math.Abs(d) > thr:
			k, sign = 1, -sign // a run of the other sign starts
		default:
			k, sign = 0, 0
		}
		if k >= run {
			return sign
		}
	}
	if sign != 0 {
		return sign
	}
	return 1
}

// collapse locates the points C and D of a chop and the instant of chopping.
func (r *Result) collapse(y []float64, chopAt, w int, s Settings) error {
	n := len(y)
	// steepest fall within the window that detected the chop
	ks, best := chopAt+1, 0.0
	for k := chopAt + 1; k <= chopAt+w && k < n; k++ {
		if d := y[k-1] - y[k]; d > best {
			best, ks = d, k
		}
	}
	// The collapse starts where the fall stops being steep: walk back from the steepest
	// sample while each step still falls by more than 5 % of the steepest step. The
	// voltage at chopping is the curve there (the largest of the three samples before).
	k := ks
	for k > 0 && y[k-1]-y[k] > 0.05*best {
		k--
	}
	k0 := k - 2
	if k0 < 0 {
		k0 = 0
	}
	iuc, uc := waveform.ArgMax(y, k0, k+1)
	r.ChopVoltage_v = uc
	// C: last time at or above CollapseHigh x Uc before D.
	hi, lo := s.CollapseHigh*uc, s.CollapseLow*uc
	tD := waveform.CrossDown(y, lo, iuc, n)
	if tD < 0 {
		return fmt.Errorf("%w: the collapse never falls to %.0f %% of the voltage at chopping", ErrNoImpulse, 100*s.CollapseLow)
	}
	tC := -1.0
	for k := int(tD); k > iuc; k-- {
		if y[k] >= hi && y[k+1] < hi {
			tC = float64(k) + (y[k]-hi)/(y[k]-y[k+1])
			break
		}
	}
	if tC < 0 {
		tC = float64(iuc)
	}
	dur := (tD - tC) / (s.CollapseHigh - s.CollapseLow)
	r.Collapse_s = dur * r.Interval_s
	// The line through C and D meets the voltage at chopping (1 - CollapseHigh) x dur
	// before C (from memory: the instant of chopping as the standard draws it).
	r.ChopInstant_s = r.at(tC - (1-s.CollapseHigh)*dur)
	return nil
}

func (r *Result) switching(tv []float64, itv int, a30, a90 float64, s Settings) {
	dt := r.Interval_s
	ut := r.TestVoltage_v
	var origin float64
	if r.FitOK {
		origin = r.Fit.Params.Td_s
	} else {
		// The line through the 30 % and 90 % points meets zero at the true origin's
		// first estimate.
		origin = r.at(a30 - 0.3*(a90-a30)/0.6)
		r.warn("origin-estimated", "true origin taken from the line through the 30 %% and 90 %% points")
	}
	r.Origin_s = origin
	tab := (a90 - a30) * dt
	n := len(tv)
	a50 := waveform.CrossDown(tv, 0.5*ut, itv, n)
	t2us := math.NaN()
	if a50 >= 0 {
		r.T50_s = r.at(a50)
		r.TimeToHalf_s = r.T50_s - origin
		t2us = r.TimeToHalf_s * 1e6
	} else {
		r.warn("record-short", "the record ends before the tail falls to 50 %%: no time to half-value")
	}
	if !math.IsNaN(t2us) {
		k := s.SwitchingK0 + s.SwitchingK1*tab*1e6 + s.SwitchingK2*t2us
		r.TimeToPeak_s = k * tab
	}
	r.FrontTime_s = math.NaN()
	if d90 := waveform.CrossDown(tv, 0.9*ut, itv, n); d90 >= 0 {
		r.TimeAbove90_s = (d90 - a90) * dt
	}
	if z := waveform.CrossDown(tv, 0, itv, n); z >= 0 {
		r.TimeToZero_s = r.at(z) - origin
	}
}

// Denoised is the record r was measured from with its noise taken out where the base
// curve stands for it: the base curve, plus the fit's residual wherever the test
// voltage curve shows it above the noise (ringing, a misfit, a chop's collapse), in the
// record's own units (baseline and polarity put back). A Monte Carlo of the record's
// noise centred here reads each parameter's sensitivity off the curve itself rather
// than off one realisation of its noise: on a slow tail a crossing's local slope
// differs from the curve's by the noise's own slope.
func (r *Result) Denoised() []float64 {
	n := len(r.Recorded)
	out := make([]float64, n)
	if !r.FitOK || len(r.Base) != n {
		copy(out, r.Recorded)
	} else {
		// the test voltage curve's noise: its deviation from the base curve before the fit window
		var ss float64
		m := min(r.Baseline.Samples, r.FitFrom)
		for i := 0; i < m; i++ {
			d := r.TestVoltage[i] - r.Base[i]
			ss += d * d
		}
		lim := 4 * math.Sqrt(ss/float64(max(m, 1)))
		end := n // the residual kept up to here, past the last point it shows above the noise
		for end > 0 && (math.IsNaN(r.TestVoltage[end-1]) || math.Abs(r.TestVoltage[end-1]-r.Base[end-1]) <= lim) {
			end--
		}
		end = min(n, end+int(10*waveform.TestVoltageTau_s/r.Interval_s))
		chop := n
		if r.Shape == LightningChopped {
			chop = int(math.Floor((r.ChopInstant_s - r.Start_s) / r.Interval_s))
		}
		for i := range out {
			out[i] = r.Base[i]
			if (i >= r.FitFrom && i < end) || i >= chop {
				out[i] = r.Recorded[i]
			}
		}
	}
	for i := range out {
		out[i] = float64(r.Polarity)*out[i] + r.Baseline.Level
	}
	return out
}
