package shot

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/impulse"
)

// Set applies one setting given as text, the way a command line or a lab's script
// gives it; a setting given this way overrides the setup file's:
//
//	nominal         front/tail in us: 1.2/50, 250/2500
//	peak            the nominal test voltage with its unit: 300kV
//	chopped         true: chopped impulses are intended
//	overshoot_over  extreme or base: the overshoot's denominator
//	stages          the generator's stage count
//	charging        the charging voltage per stage with its unit: 40kV
//	ratio           a divider ratio for every divider channel (1000) or one (CH1=1000)
func (c *Config) Set(key, value string) error {
	switch key {
	case "nominal":
		n, err := impulse.ParseNominal(value)
		if err != nil {
			return err
		}
		n.Peak_v, n.Chopped = c.Nominal.Peak_v, c.Nominal.Chopped
		c.Nominal = n
	case "peak", "charging":
		v, err := readers.ParseQuantityIn(value, "V")
		if err != nil {
			return err
		}
		if v < 0 {
			return fmt.Errorf("%q: a magnitude; the polarity comes from the record", value)
		}
		if key == "peak" {
			c.Nominal.Peak_v = math.Abs(v)
		} else {
			c.Charging_v = math.Abs(v)
		}
	case "chopped":
		b, err := strconv.ParseBool(value)
		if err != nil {
			return fmt.Errorf("true or false, not %q", value)
		}
		c.Nominal.Chopped = b
	case "overshoot_over":
		if value != "extreme" && value != "base" {
			return fmt.Errorf("extreme or base, not %q", value)
		}
		c.Settings.OvershootOver = value
	case "stages":
		n, err := strconv.Atoi(value)
		if err != nil || n < 1 {
			return fmt.Errorf("a positive whole number, not %q", value)
		}
		c.Stages = n
	case "ratio":
		return c.AddRatio(value)
	default:
		return fmt.Errorf("no setting %q", key)
	}
	return nil
}

// Check reports settings that do nothing alone: stages without a charging voltage, or
// the reverse (the efficiency needs both), a coil or antenna description no role uses.
func (c *Config) Check(coil, antenna bool) error {
	if (c.Stages > 0) != (c.Charging_v > 0) {
		return fmt.Errorf("the generator's stages and charging voltage go together (the efficiency is Ut/(stages x charging voltage)): give both")
	}
	for _, x := range []struct {
		given bool
		role  Role
		flag  string
	}{{coil, Coil, "--coil"}, {antenna, Antenna, "--antenna"}} {
		used := false
		for _, r := range c.Roles {
			used = used || r.Role == x.role
		}
		if x.given && !used {
			return fmt.Errorf("%s describes a %s that no --role NAME=%s uses", x.flag, x.role, x.role)
		}
	}
	return nil
}

// Override is a setting given as text (see Set), with the words its error starts with
// (a command line's flag: "--peak: ").
type Override struct{ Blame, Key, Value string }

// Configure is the evaluation's configuration: the setup's (nil: none), then the
// overrides that have a value, then the roles given apart from the setup ("NAME=ROLE",
// see AddRole, with the coil's and antenna's descriptions), checked as a whole.
func Configure(s *Setup, over []Override, roles, coil, antenna []string) (*Config, error) {
	cfg := NewConfig()
	if s != nil {
		cfg = FromSetup(s)
	}
	for _, o := range over {
		if o.Value == "" {
			continue
		}
		if err := cfg.Set(o.Key, o.Value); err != nil {
			return nil, fmt.Errorf("%s%v", o.Blame, err)
		}
	}
	for _, r := range roles {
		if err := cfg.AddRole(r, strings.Join(coil, ","), strings.Join(antenna, ",")); err != nil {
			return nil, fmt.Errorf("--role %v", err)
		}
	}
	return cfg, cfg.Check(len(coil) > 0, len(antenna) > 0)
}

// Apply gives the reading options what the [read] table says: an interval for files
// that state none (an option's own interval replaces a file's), and the time column
// when the options leave it to be found.
func (r ReadSetup) Apply(o readers.Options) readers.Options {
	if r.Interval.Set {
		o.DefaultInterval_s = r.Interval.V
	}
	if r.TimeColumn != "" && o.TimeColumn == "auto" {
		o.TimeColumn = r.TimeColumn
	}
	return o
}
