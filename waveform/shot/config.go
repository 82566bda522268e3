package shot

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform/atmos"
	"github.com/hvshot/hvshot/waveform/circuit"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/spectrum"
)

// Config is everything a shot's evaluation needs, fixed for a series. Start from
// NewConfig (the defaults) or FromSetup, then override fields as a caller's own
// settings (command-line flags) require.
type Config struct {
	Series     string
	Nominal    impulse.Nominal // Front_s 0: the standard shape of the family found
	Tolerances impulse.Tolerances
	Settings   impulse.Settings
	Stages     int     // generator stages, for the efficiency; 0 when not described
	Charging_v float64 // charging voltage per stage
	// Circuit is the generator's discharge circuit, for the resistor columns and advice;
	// nil when not described. Its stage count is Stages at evaluation.
	Circuit *circuit.Generator

	// Channels describe the file's channels (the setup's [[channel]] tables); a
	// required one missing from a file is that file's error.
	Channels []ChannelSetup
	// Roles assign roles by channel name or "CHn" position when Channels is empty (the
	// command line's --role); one that matches nothing is a warning on the file's rows.
	Roles []ChannelSetup
	// Ratio, when not 0, multiplies the recorded values of every divider channel in
	// place of its description's ratio (a divider ratio for the whole series, from the
	// command line). Ratios does the same for single channels, by the file's channel
	// name, the result's name, or "CHn" for the n-th channel; it wins over both.
	Ratio  float64
	Ratios map[string]float64

	Setup *Setup // the setup file this came from, if any

	// Record names the test object, laboratory, operator and measuring system.
	Record TestRecord
	// Air is the laboratory's air and AirPath_m the test object's minimum discharge
	// path, for the atmospheric correction (Atmosphere); nil when not described.
	Air       *atmos.Conditions
	AirPath_m float64
	// AirLog is the logged air ([atmosphere] log, read by the caller): each shot is
	// corrected with the reading in force when it was fired (AirAt).
	AirLog     atmos.Log
	AirLogFile string // where it was read from
	// Tests are the tests the series holds (the setup's [[test]] tables): their shots
	// and how their outcomes are judged.
	Tests []*TestPlan
	// Spectrum says how each row's spectrum is taken (zero: spectrum.DefaultSettings);
	// Comparison, when set, compares each shot with a reference shot.
	Spectrum   spectrum.Settings
	Comparison *Comparison
	// Uncertainty sets the uncertainty per parameter (uncertainty.go).
	Uncertainty Uncertainty
}

// NewConfig returns the defaults: IEC 60060-1:2010's tolerances, the settings of
// docs/method.md, the standard shape of the family found.
func NewConfig() *Config {
	return &Config{Tolerances: impulse.DefaultTolerances(), Settings: impulse.DefaultSettings(), Uncertainty: DefaultUncertainty()}
}

// FromSetup returns the configuration a parsed setup file describes.
func FromSetup(s *Setup) *Config {
	c := NewConfig()
	c.Setup, c.Series = s, s.Series
	if s.Nominal.Shape != "" {
		c.Nominal, _ = impulse.ParseNominal(s.Nominal.Shape) // checked by ParseSetup
	}
	c.Nominal.Chopped = s.Nominal.Chopped
	if s.Nominal.TestVoltage.Set {
		c.Nominal.Peak_v = math.Abs(s.Nominal.TestVoltage.V)
	}
	t, st := &c.Tolerances, &s.Tolerance
	for _, p := range []struct{ src, dst *float64 }{
		{st.TestVoltage_pct, &t.TestVoltage_pct}, {st.FrontTime_pct, &t.Front_pct}, {st.TimeToHalf_pct, &t.Tail_pct},
		{st.OvershootMax_pct, &t.OvershootMax_pct}, {st.TimeToPeak_pct, &t.TimeToPeak_pct}, {st.SwitchingHalf_pct, &t.SwitchingTail_pct},
		{s.Method.FitFrom, &c.Settings.FitFrom}, {s.Method.FitTo, &c.Settings.FitTo},
	} {
		if p.src != nil {
			*p.dst = *p.src
		}
	}
	if s.Method.OvershootOver != "" {
		c.Settings.OvershootOver = s.Method.OvershootOver
	}
	c.Settings.ForceShape = impulse.Shape(s.Method.Shape)
	c.Stages = s.Generator.Stages
	c.Charging_v = math.Abs(s.Generator.ChargingVoltage.V)
	c.Circuit, _ = s.Generator.circuitOf(func(string, string, ...any) error { return nil }) // checked by ParseSetup
	c.Channels = s.Channels
	none := func(...string) int { return 0 }
	c.Record, _ = s.record(none) // both checked by ParseSetup
	c.Air, c.AirPath_m, _ = s.air(none)
	c.Tests, _ = s.tests(s.Text)
	c.Comparison = s.Comparison.comparison()
	c.Uncertainty, _ = s.Uncertain.settings(s.Path, none)
	return c
}

// AddRatio reads a divider ratio for every divider channel ("1000") or for one channel
// ("CH1=1000", "divider=1000") and sets Ratio or Ratios.
func (c *Config) AddRatio(s string) error {
	ch, val, named := strings.Cut(s, "=")
	if !named {
		val = ch
	}
	v, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
	if err != nil || !(v > 0) || math.IsInf(v, 0) {
		return fmt.Errorf("%q: a positive number, or CHANNEL=NUMBER", s)
	}
	if !named {
		c.Ratio = v
		return nil
	}
	if c.Ratios == nil {
		c.Ratios = map[string]float64{}
	}
	c.Ratios[ch] = v
	return nil
}

// AddRole reads a role given as CHANNEL=ROLE ("CH2=coil", "probe3=antenna"), with the
// sensor described in the setup file's words by coil or antenna, and adds it to Roles.
// Roles describe the channels in place of a setup file's channel tables.
func (c *Config) AddRole(s, coil, antenna string) error {
	ch, role, ok := strings.Cut(s, "=")
	if !ok || ch == "" {
		return fmt.Errorf("%q: want CHANNEL=ROLE, e.g. CH2=coil", s)
	}
	cs := ChannelSetup{Match: ch}
	var err error
	if cs.Role, err = ParseRole(role); err != nil {
		return fmt.Errorf("%q: %v", s, err)
	}
	switch {
	case cs.Role == Coil && strings.TrimSpace(coil) == "":
		return fmt.Errorf("%s: describe the coil with --coil (mutual=..., inductance=..., load_resistance=...)", s)
	case cs.Role == Antenna && strings.TrimSpace(antenna) == "":
		return fmt.Errorf("%s: describe the antenna with --antenna (kind=..., load_resistance=..., ...)", s)
	}
	switch cs.Role {
	case Coil:
		if cs.Coil, _, err = ParseCoil(coil); err != nil {
			return fmt.Errorf("%s: --coil: %v", s, err)
		}
	case Antenna:
		if cs.Antenna, _, err = ParseAntenna(antenna); err != nil {
			return fmt.Errorf("%s: --antenna: %v", s, err)
		}
	}
	if err := cs.Check(); err != nil {
		return fmt.Errorf("%s: %v", s, err)
	}
	c.Roles = append(c.Roles, cs)
	c.Channels = nil
	return nil
}
