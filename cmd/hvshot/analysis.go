package main

import (
	"errors"
	"fmt"
	"math"
	"path"
	"path/filepath"
	"strings"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/probe"
)

// Warn is a warning in the output: a short code and words.
type Warn struct {
	Code string `json:"code"`
	Text string `json:"text"`
}

// Row is one evaluated channel of one file: the machine-readable output of
// docs/output.md. SI units; absent values are nil and omitted.
type Row struct {
	File     string `json:"file"`
	Channel  string `json:"channel,omitempty"`
	Role     string `json:"role,omitempty"`
	Shape    string `json:"shape,omitempty"`
	Polarity string `json:"polarity,omitempty"`

	TestVoltageV  *float64 `json:"test_voltage_v,omitempty"`
	ExtremeV      *float64 `json:"extreme_v,omitempty"`
	BasePeakV     *float64 `json:"base_peak_v,omitempty"`
	OvershootPct  *float64 `json:"overshoot_pct,omitempty"`
	FrontTime_s   *float64 `json:"front_time_s,omitempty"`
	TimeToHalf_s  *float64 `json:"time_to_half_s,omitempty"`
	Origin_s      *float64 `json:"virtual_origin_s,omitempty"`
	ChopTime_s    *float64 `json:"chop_time_s,omitempty"`
	ChopVoltageV  *float64 `json:"chop_voltage_v,omitempty"`
	Collapse_s    *float64 `json:"collapse_time_s,omitempty"`
	TimeToPeak_s  *float64 `json:"time_to_peak_s,omitempty"`
	TimeAbove90_s *float64 `json:"time_above_90_s,omitempty"`
	TimeToZero_s  *float64 `json:"time_to_zero_s,omitempty"`
	Efficiency    *float64 `json:"efficiency,omitempty"`
	BaseTau1_s    *float64 `json:"base_tau1_s,omitempty"`
	BaseTau2_s    *float64 `json:"base_tau2_s,omitempty"`
	FitRMSV       *float64 `json:"fit_rms_v,omitempty"`
	ResidualHz    *float64 `json:"residual_freq_hz,omitempty"`

	PeakCurrentA   *float64 `json:"peak_current_a,omitempty"`
	MaxDidt        *float64 `json:"max_didt_a_per_s,omitempty"`
	RiseTime_s     *float64 `json:"rise_time_s,omitempty"`
	CurrentFront_s *float64 `json:"current_front_time_s,omitempty"`
	CurrentHalf_s  *float64 `json:"current_time_to_half_s,omitempty"`
	ChargeC        *float64 `json:"charge_c,omitempty"`
	ActionA2s      *float64 `json:"action_integral_a2s,omitempty"`
	PeakFieldVPerM *float64 `json:"peak_field_v_per_m,omitempty"`
	FieldEndVPerM  *float64 `json:"field_change_v_per_m,omitempty"`
	DroopTau_s     *float64 `json:"droop_tau_s,omitempty"`
	DroopEstimated bool     `json:"droop_tau_estimated,omitempty"`

	Verdict  string   `json:"verdict"`
	Failures []string `json:"failures"`
	Warnings []Warn   `json:"warnings"`
	Error    string   `json:"error,omitempty"`

	failures []impulse.Failure
	plot     string // plot file, relative to the output folder
}

func num(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// Config is everything a file's evaluation needs, fixed for a batch.
type Config struct {
	Setup      *Setup
	Nominal    impulse.Nominal
	HasNominal bool
	Tol        impulse.Tolerances
	Settings   impulse.Settings
	Read       readers.Options
	Stages     int
	Charging_v float64
	Plots      string // svg, png, none
	OutDir     string
	Roles      map[string]ChannelSetup // from flags, by file channel name
}

// Shot is the outcome for one file.
type Shot struct {
	Index int
	Path  string
	Rows  []Row
}

func errorRow(file string, err error) Row {
	msg := err.Error()
	if !strings.Contains(msg, file) {
		msg = file + ": " + msg
	}
	return Row{File: file, Verdict: "error", Error: msg, Failures: []string{}, Warnings: []Warn{}}
}

type plan struct {
	ch    *waveform.Channel
	setup ChannelSetup
}

// channelsFor pairs the record's channels with their setup; without a setup every
// channel is a divider channel in volts.
func channelsFor(rec *waveform.Record, cfg *Config) ([]plan, error) {
	var specs []ChannelSetup
	if cfg.Setup != nil {
		specs = cfg.Setup.Channels
	}
	if len(specs) == 0 {
		var out []plan
		for i := range rec.Channels {
			c := &rec.Channels[i]
			cs := ChannelSetup{Role: "divider"}
			if r, ok := cfg.Roles[c.Name]; ok {
				cs = r
			}
			out = append(out, plan{c, cs})
		}
		return out, nil
	}
	var out []plan
	for k, s := range specs {
		// By name first; formats without names (.npy, raw) fall back to the index.
		var found *waveform.Channel
		for i := range rec.Channels {
			if ok, _ := path.Match(s.Match, rec.Channels[i].Name); s.Match != "" && ok {
				found = &rec.Channels[i]
				break
			}
		}
		if found == nil && s.Index > 0 && s.Index <= len(rec.Channels) {
			found = &rec.Channels[s.Index-1]
		}
		if found == nil && s.Optional {
			continue
		}
		if found == nil {
			var names []string
			for _, c := range rec.Channels {
				names = append(names, c.Name)
			}
			what := fmt.Sprintf("match %q", s.Match)
			if s.Index > 0 {
				what = fmt.Sprintf("index %d", s.Index)
			}
			return nil, fmt.Errorf("setup channel %d (%s, %s) is not in the file, which has %s", k+1, s.Role, what, strings.Join(names, ", "))
		}
		out = append(out, plan{found, s})
	}
	return out, nil
}

// analyzeFile reads and evaluates one capture; it never fails as a whole: a file
// that cannot be read or evaluated gets error rows.
func analyzeFile(p string, cfg *Config) []Row {
	name := p
	rec, err := readers.ReadFile(p, cfg.Read)
	if err != nil {
		return []Row{errorRow(name, err)}
	}
	plans, err := channelsFor(rec, cfg)
	if err != nil {
		return []Row{errorRow(name, err)}
	}
	var rows []Row
	for _, pl := range plans {
		rows = append(rows, analyzeChannel(name, rec, pl, cfg))
	}
	return rows
}

func analyzeChannel(file string, rec *waveform.Record, pl plan, cfg *Config) Row {
	s := pl.setup
	label := pl.ch.Name
	if s.Name != "" {
		label = s.Name
	}
	row := Row{File: file, Channel: label, Role: s.Role, Failures: []string{}, Warnings: []Warn{}}
	fail := func(err error) Row {
		row.Verdict, row.Error = "error", fmt.Sprintf("%s: channel %s: %v", file, label, err)
		return row
	}
	// Scale and droop on a copy; the record stays as read.
	ch := *pl.ch
	ch.Samples = append([]float64(nil), pl.ch.Samples...)
	if s.Ratio.Set {
		for i := range ch.Samples {
			ch.Samples[i] *= s.Ratio.V
		}
		ch.RangeMin, ch.RangeMax = ch.RangeMin*s.Ratio.V, ch.RangeMax*s.Ratio.V
		if ch.RangeMin > ch.RangeMax {
			ch.RangeMin, ch.RangeMax = ch.RangeMax, ch.RangeMin
		}
	}
	if cl, ok := waveform.DetectClipping(pl.ch); ok && s.Role != "divider" {
		row.Warnings = append(row.Warnings, Warn{"clipped", fmt.Sprintf("%d samples stuck at the channel's limit from sample %d: the reconstruction is not trustworthy", cl.Length, cl.Index)})
	}
	if s.DroopTau.Set && s.DroopTau.V > 0 {
		waveform.UndoDroop(ch.Samples, rec.Interval_s, s.DroopTau.V)
		row.DroopTau_s = num(s.DroopTau.V)
	}
	for _, w := range rec.Warnings {
		row.Warnings = append(row.Warnings, Warn{"reader", w})
	}
	dt, t0 := rec.Interval_s, rec.Start_s
	switch s.Role {
	case "coil":
		var res *probe.CurrentResult
		var err error
		if s.Coil.Calibration.Set {
			tauLR := 0.0
			if s.Coil.Inductance.Set && s.Coil.LoadResistance.V > 0 {
				tauLR = s.Coil.Inductance.V / s.Coil.LoadResistance.V
			}
			res, err = probe.CalibratedCoil(ch.Samples, t0, dt, s.Coil.Calibration.V, tauLR)
		} else {
			m, merr := s.Coil.model()
			if merr != nil {
				return fail(merr)
			}
			res, err = m.(probe.Coil).Current(ch.Samples, t0, dt)
		}
		if err != nil {
			return fail(err)
		}
		row.Polarity = polarity(res.Polarity)
		row.PeakCurrentA, row.MaxDidt, row.RiseTime_s = num(res.PeakA), num(res.MaxDidt_a_per_s), num(res.Rise_s)
		row.CurrentFront_s, row.CurrentHalf_s = num(res.Front_s), num(res.TimeToHalf_s)
		row.ChargeC, row.ActionA2s = num(res.Charge_c), num(res.Action_a2s)
		for _, w := range res.Warnings {
			row.Warnings = append(row.Warnings, Warn(w))
		}
		row.Verdict = "pass"
		row.plot = plotSensor(cfg, file, label, rec, res.Current, "current (kA)", 1e-3)
		return row
	case "antenna":
		m, err := s.Antenna.model()
		if err != nil {
			return fail(err)
		}
		res, err := m.Field(ch.Samples, t0, dt)
		if err != nil {
			return fail(err)
		}
		row.Polarity = polarity(res.Polarity)
		row.PeakFieldVPerM, row.FieldEndVPerM = num(res.PeakVPerM), num(res.EndChangeVPerM)
		row.DroopTau_s, row.DroopEstimated = num(res.Tau_s), res.TauEstimated
		for _, w := range res.Warnings {
			row.Warnings = append(row.Warnings, Warn(w))
		}
		row.Verdict = "pass"
		row.plot = plotSensor(cfg, file, label, rec, res.Field, "field (kV/m)", 1e-3)
		return row
	}
	// divider
	r, err := impulse.EvaluateChannel(&ch, t0, dt, cfg.Settings)
	if err != nil {
		if errors.Is(err, impulse.ErrNoImpulse) {
			row.Shape = string(impulse.None)
		}
		return fail(err)
	}
	row.Shape = string(r.Shape)
	row.Polarity = polarity(r.Polarity)
	row.TestVoltageV, row.ExtremeV, row.BasePeakV = num(r.TestVoltageV), num(r.ExtremeV), num(r.BasePeakV)
	row.OvershootPct, row.FrontTime_s, row.TimeToHalf_s = num(r.OvershootPct), num(r.FrontTime_s), num(r.TimeToHalf_s)
	row.Origin_s, row.ChopTime_s, row.ChopVoltageV, row.Collapse_s = num(r.Origin_s), num(r.ChopTime_s), num(r.ChopVoltageV), num(r.Collapse_s)
	row.TimeToPeak_s, row.TimeAbove90_s, row.TimeToZero_s = num(r.TimeToPeak_s), num(r.TimeAbove90_s), num(r.TimeToZero_s)
	if r.FitOK {
		row.BaseTau1_s, row.BaseTau2_s, row.FitRMSV = num(r.Fit.Params.Tau1_s), num(r.Fit.Params.Tau2_s), num(r.Fit.ResidualRMS)
	}
	row.ResidualHz = num(r.ResidualFreq_hz)
	if cfg.Stages > 0 && cfg.Charging_v > 0 {
		row.Efficiency = num(r.TestVoltageV / (float64(cfg.Stages) * cfg.Charging_v))
	}
	for _, w := range r.Warnings {
		row.Warnings = append(row.Warnings, Warn(w))
	}
	nom := cfg.Nominal
	if !cfg.HasNominal {
		// No nominal given: judge against the standard shape of the family found.
		nom = impulse.Nominal{Front_s: 1.2e-6, Tail_s: 50e-6, Chopped: r.Shape == impulse.LightningChopped}
		if r.Shape == impulse.Switching {
			nom = impulse.Nominal{Front_s: 250e-6, Tail_s: 2500e-6}
		}
		nom.Peak_v = cfg.Nominal.Peak_v
	}
	row.failures = impulse.Judge(r, nom, cfg.Tol)
	for _, f := range row.failures {
		row.Failures = append(row.Failures, f.Parameter)
	}
	row.Verdict = "pass"
	if len(row.failures) > 0 {
		row.Verdict = "fail"
	}
	row.plot = plotImpulse(cfg, file, label, r, nom)
	return row
}

func polarity(p int) string {
	if p < 0 {
		return "negative"
	}
	return "positive"
}

// shotName is a file's short name for tables and plot files.
func shotName(p string) string {
	return strings.TrimSuffix(filepath.Base(p), filepath.Ext(p))
}

func defaultTolSettings() (impulse.Tolerances, impulse.Settings) {
	return impulse.DefaultTolerances(), impulse.DefaultSettings()
}
