package shot

import (
	"errors"
	"fmt"
	"maps"
	"slices"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/atmos"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/probe"
)

// Shot is one evaluated record: a row per channel and, beside each, what its plot draws.
type Shot struct {
	ID     string
	Rows   []Row
	Curves []*Curves // parallel to Rows; nil where there is nothing to draw
	Traces []Trace   // each divider row's curve, small, for the series' overlay
}

// Curves are what a row's plot shows: a divider's impulse with the nominal it was
// judged against, or a sensor's reconstructed signal.
type Curves struct {
	Impulse    *impulse.Result
	Nominal    impulse.Nominal
	Tolerances impulse.Tolerances

	Signal              []float64 // sensor: current in A or field in V/m, signed
	Start_s, Interval_s float64
	Quantity, Unit      string // "current", "A" or "field", "V/m"

	Spectrum *SpectrumCurve // the row's spectrum; nil when it has no curve
	Compare  *CompareCurve  // beside the reference, in a comparison
}

// PlotFailed is the warning code of a row whose plot could not be written.
const PlotFailed = "plot-failed"

// PlotsLost reports whether a plot of the shot could not be written.
func (s *Shot) PlotsLost() bool {
	for _, r := range s.Rows {
		for _, w := range r.Warnings {
			if w.Code == PlotFailed {
				return true
			}
		}
	}
	return false
}

// Synthetic reports whether a record says it is synthetic: hvshot's own writers mark
// every synthetic capture ("synthetic" in a text preamble, "note = synthetic: ..." in a
// raw description).
func Synthetic(rec *waveform.Record) bool {
	_, marked := rec.Meta["synthetic"]
	return marked || strings.HasPrefix(rec.Meta["note"], "synthetic")
}

// Failed is the shot of a file that could not be read: one error row naming it.
func Failed(id string, err error) *Shot {
	msg := err.Error()
	if !strings.Contains(msg, id) {
		msg = id + ": " + msg
	}
	return &Shot{ID: id, Rows: []Row{errorRow(id, msg)}, Curves: []*Curves{nil}}
}

func errorRow(id, msg string) Row {
	r := Row{File: id, Verdict: Error, Error: msg}
	r.fill(newSources())
	return r
}

// Evaluate evaluates every described channel of rec under cfg; id is the shot's
// identity (see Identities). It never fails as a whole: a channel that cannot be
// evaluated is an error row that says why. The record's samples are not changed.
func Evaluate(rec *waveform.Record, id string, cfg *Config) *Shot {
	plans, warns, err := plan(rec, cfg)
	if err != nil {
		return Failed(id, err)
	}
	// a ratio given for a channel the file does not have would be lost without a word
	for k := range cfg.Ratios {
		found := false
		for _, p := range plans {
			found = found || k == p.ch.Name || k == p.setup.Name || strings.EqualFold(k, "CH"+strconv.Itoa(p.index+1))
		}
		if !found {
			warns = append(warns, Warning{"ratio-unmatched", fmt.Sprintf("the ratio for %q matches no channel; the file's channels are %s", k, channelNames(rec))})
		}
	}
	// Channels named like sensors that nothing describes are left out, said on the
	// file's rows, when something else in the file can be evaluated; alone, each is an
	// error row that says what to do.
	var named []string
	kept := plans[:0:0]
	for _, p := range plans {
		if p.named != "" {
			named = append(named, fmt.Sprintf("%s (a %s?)", p.ch.Name, p.named))
		} else {
			kept = append(kept, p)
		}
	}
	if len(named) > 0 && len(kept) > 0 {
		warns = append(warns, Warning{"sensor-undescribed", fmt.Sprintf("not evaluated: %s, named like sensor channels and described by nothing; give each a role and its sensor (--role NAME=coil with --coil, or a [[channel]] table in the setup file)", strings.Join(named, ", "))})
		plans = kept
	}
	s := &Shot{ID: id}
	for _, p := range plans {
		row, c := evaluateChannel(rec, id, p, cfg)
		row.Warnings = append(row.Warnings, warns...)
		s.Rows = append(s.Rows, row)
		s.Curves = append(s.Curves, c)
		if c != nil {
			if t := trace(&row, c); t != nil {
				s.Traces = append(s.Traces, *t)
			}
		}
	}
	frequencyDomain(s, cfg)
	return s
}

func evaluateChannel(rec *waveform.Record, id string, p planned, cfg *Config) (Row, *Curves) {
	cs := p.setup
	label := p.ch.Name
	if cs.Name != "" {
		label = cs.Name
	}
	row := Row{File: id, Channel: label, Role: cs.Role, Synthetic: Synthetic(rec), Fired: rec.Trigger}
	src := newSources()
	fail := func(err error) (Row, *Curves) {
		row.Verdict, row.Error = Error, fmt.Sprintf("%s: channel %s: %v", id, label, err)
		if len(rec.Warnings) > 0 {
			// what the reader saw may be why (a capture cut off mid-impulse)
			row.Error += "; the reader warned: " + strings.Join(rec.Warnings, "; ")
		}
		row.fill(src)
		return row, nil
	}
	if p.named != "" {
		row.Role = ""
		return fail(fmt.Errorf("its name says %s, and no %s is described: give it a role (--role %s=%s with --%s, or a [[channel]] in the setup file), or --role %s=divider to judge it as a divider",
			p.named, p.named, p.ch.Name, p.named, p.named, p.ch.Name))
	}
	// Scale and droop on a copy; the record stays as read.
	ch := *p.ch
	ch.Samples = append([]float64(nil), p.ch.Samples...)
	ratio := cs.Ratio.V
	if cs.Role == Divider && cfg.Ratio != 0 {
		ratio = cfg.Ratio
	}
	for k, v := range cfg.Ratios {
		if k == p.ch.Name || k == label || strings.EqualFold(k, "CH"+strconv.Itoa(p.index+1)) {
			ratio = v
		}
	}
	if ratio != 0 && ratio != 1 {
		for i := range ch.Samples {
			ch.Samples[i] *= ratio
		}
		ch.RangeMin, ch.RangeMax = ch.RangeMin*ratio, ch.RangeMax*ratio
		if ch.RangeMin > ch.RangeMax {
			ch.RangeMin, ch.RangeMax = ch.RangeMax, ch.RangeMin
		}
	}
	if cl, ok := waveform.DetectClipping(p.ch); ok && cs.Role != Divider {
		row.Warnings = append(row.Warnings, Warning{"clipped", fmt.Sprintf("%d samples stuck at the channel's limit from sample %d: the reconstruction is not trustworthy", cl.Length, cl.Index)})
	}
	recorded, droop := ch.Samples, 0.0 // as the Monte Carlo of the uncertainty perturbs them
	if cs.DroopTau.Set && cs.DroopTau.V > 0 {
		recorded, droop = slices.Clone(ch.Samples), cs.DroopTau.V
		waveform.UndoDroop(ch.Samples, rec.Interval_s, cs.DroopTau.V)
		src.droop_s = cs.DroopTau.V
	}
	for _, w := range rec.Warnings {
		row.Warnings = append(row.Warnings, Warning{"reader", w})
	}
	row.Warnings = append(row.Warnings, recordPlausible(rec)...)
	dt, t0 := rec.Interval_s, rec.Start_s
	switch cs.Role {
	case Current, Field, Coil, Antenna:
		// every sensor gives a current or a field: reconstructed, or taken as recorded
		var cur *probe.CurrentResult
		var fld *probe.FieldResult
		var err error
		switch cs.Role {
		case Current:
			cur, err = probe.MeasuredCurrent(ch.Samples, t0, dt)
		case Field:
			fld, err = probe.MeasuredField(ch.Samples, t0, dt)
		case Coil:
			var m probe.Coil
			if m, err = cs.Coil.Model(); err == nil {
				cur, err = m.Current(ch.Samples, t0, dt)
			}
		case Antenna:
			var m probe.Antenna
			if m, err = cs.Antenna.Model(); err == nil {
				fld, err = m.Field(ch.Samples, t0, dt)
			}
		}
		if err != nil {
			return fail(err)
		}
		c := &Curves{Start_s: t0, Interval_s: dt}
		if cur != nil {
			src.cur, row.Polarity = cur, polarityOf(cur.Polarity)
			row.Warnings = appendWarnings(row.Warnings, cur.Warnings)
			c.Signal, c.Quantity, c.Unit = cur.Current, "current", "A"
		} else {
			src.fld, row.Polarity, row.DroopEstimated = fld, polarityOf(fld.Polarity), fld.TauEstimated
			row.Warnings = appendWarnings(row.Warnings, fld.Warnings)
			c.Signal, c.Quantity, c.Unit = fld.Field, "field", "V/m"
		}
		sensorUncertainty(&row, src, &ch, recorded, droop, t0, dt, cs, cfg)
		row.Verdict = Measured
		row.fill(src)
		return row, c
	}
	r, err := impulse.EvaluateChannel(&ch, t0, dt, cfg.Settings)
	if err != nil {
		if errors.Is(err, impulse.ErrNoImpulse) {
			row.Shape = impulse.None
		}
		return fail(err)
	}
	row.Shape, row.Polarity = r.Shape, polarityOf(r.Polarity)
	src.imp = r
	if cfg.Stages > 0 && cfg.Charging_v > 0 {
		src.efficiency = r.TestVoltage_v / (float64(cfg.Stages) * cfg.Charging_v)
	}
	row.Warnings = appendWarnings(row.Warnings, r.Warnings)
	timeSlip := slices.ContainsFunc(row.Warnings, func(w Warning) bool { return w.Code == TimeImplausible })
	if !timeSlip {
		pw := impulsePlausible(r, cfg.Nominal.Tail_s)
		row.Warnings, timeSlip = append(row.Warnings, pw...), len(pw) > 0
	}
	nom := cfg.Nominal.For(r.Shape)
	test := cfg.TestFor(id)
	air, logLine := cfg.AirAt(rec.Trigger)
	if len(cfg.AirLog) > 0 && logLine == 0 {
		row.Warnings = append(row.Warnings, Warning{"air-unlogged", "no logged air reading before the shot was fired: the atmospheric correction uses the setup's fixed readings, if any"})
	}
	var corr *atmos.Correction
	switch {
	case test != nil && !test.Procedure.Withstand():
		nom.Peak_v = 0 // the level varies by design: no shot is judged on it
	case cfg.Comparison != nil && cfg.Comparison.RefID == id && nom.Peak_v > 0:
		// a comparison's reference is a reduced-level impulse by design (a winding test's)
		nom.Peak_v = 0
		row.Warnings = append(row.Warnings, Warning{"reference-level", "the comparison's reference: its level is not judged against the nominal test voltage"})
	case test != nil:
		nom.Peak_v, corr = test.Specified_v, test.correction(air)
	case nom.Peak_v > 0:
		corr, _ = cfg.atmosphere(air)
	}
	if corr != nil {
		// a withstand test applies U0 Kt (IEC 60060-1 clause 4.3): judged against that
		nom.Peak_v, src.kt = atmos.ToApply(nom.Peak_v, *corr), corr.Kt
	}
	code, text, scaleOK := scaleSlip(r.TestVoltage_v, nom.Peak_v)
	if code != "" {
		row.Warnings = append(row.Warnings, Warning{code, text})
	}
	// Judged on what could be measured; what could not, or what a slip of unit or
	// scale makes untrustworthy, leaves compliance unshown.
	unmeasured := impulse.Unmeasured(r, nom)
	slipped := map[string]string{}
	if timeSlip {
		// the shape is classified by the times too
		for _, p := range []string{"front_time", "time_to_half", "time_to_peak", "shape"} {
			slipped[p] = "the time unit looks misread"
		}
	}
	if !scaleOK {
		slipped["test_voltage"] = "the voltage scale looks wrong"
	}
	for p, why := range slipped {
		unmeasured[p] = why
	}
	for _, f := range impulse.Judge(r, nom, cfg.Tolerances) {
		if _, out := unmeasured[f.Parameter]; !out {
			row.Failures = append(row.Failures, f)
		}
	}
	row.Unmeasured = slices.Sorted(maps.Keys(unmeasured))
	// what the statistics may not trust, whatever the nominal judges (a clipped Ut
	// without a nominal test voltage is still a clipped Ut)
	untrusted := impulse.Unmeasured(r, impulse.Nominal{Peak_v: 1}.For(r.Shape))
	for p := range slipped {
		untrusted[p] = ""
	}
	row.untrusted = slices.Sorted(maps.Keys(untrusted))
	row.Verdict = Pass
	switch {
	case len(row.Failures) > 0:
		row.Verdict = Fail
	case len(row.Unmeasured) > 0:
		row.Verdict = Incomplete
	}
	// the circuit rests on the base curve's time constants: not on a curve whose times
	// could not be measured or trusted
	if !slices.ContainsFunc(row.untrusted, func(p string) bool { return p == "front_time" || p == "time_to_half" || p == "time_to_peak" }) {
		if src.advice = advise(r, nom, cfg); src.advice != nil && timeFailed(row.Failures) {
			row.Advice = src.advice.Sentence()
		}
	}
	if len(row.Unmeasured) > 0 {
		// the parameters grouped by their reason: "(the record is clipped): front_time, ..."
		byWhy := map[string][]string{}
		for _, p := range row.Unmeasured {
			byWhy[unmeasured[p]] = append(byWhy[unmeasured[p]], p)
		}
		var why []string
		for _, w := range slices.Sorted(maps.Keys(byWhy)) {
			why = append(why, strings.Join(byWhy[w], ", ")+" ("+w+")")
		}
		row.Warnings = append(row.Warnings, Warning{"not-measured", "compliance not shown: " + strings.Join(why, "; ")})
	}
	dividerUncertainty(&row, src, &ch, recorded, droop, r, nom, cs, cfg)
	row.fill(src)
	if test != nil && cs.Role == Divider {
		settingUp := test.application(&row, r, cfg.Nominal.Chopped, nom.Peak_v)
		// the chop is the test object's discharge, not the generator's fault; a
		// setting-up impulse is below the level by design
		discharged := row.Discharge != "none" && row.DischargeSource == "record"
		row.Failures = slices.DeleteFunc(row.Failures, func(f impulse.Failure) bool {
			return discharged && f.Parameter == "shape" || settingUp && f.Parameter == "test_voltage"
		})
		if len(row.Failures) == 0 && row.Verdict == Fail {
			switch {
			case len(row.Unmeasured) > 0:
				row.Verdict = Incomplete
			case discharged:
				row.Verdict = Discharge
			default:
				row.Verdict = Pass
			}
		}
	}
	return row, &Curves{Impulse: r, Nominal: nom, Tolerances: cfg.Tolerances}
}

// appendWarnings takes the evaluations' warnings, which have Warning's own shape.
func appendWarnings[W ~struct {
	Code string `json:"code"`
	Text string `json:"text"`
}](to []Warning, ws []W) []Warning {
	for _, w := range ws {
		to = append(to, Warning(w))
	}
	return to
}
