package main

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path"
	"regexp"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/probe"
)

// SetupFileName is the setup file hvshot looks for beside the captures.
const SetupFileName = "hvshot.toml"

// Quantity is a number in SI, written in the setup file either as a bare number or as
// a string with a unit: 300e3, "300 kV", "2 ns", "1 Mohm".
type Quantity struct {
	V   float64
	Set bool
}

func (q *Quantity) UnmarshalTOML(v any) error {
	switch x := v.(type) {
	case int64:
		q.V = float64(x)
	case float64:
		q.V = x
	case string:
		f, _, err := readers.ParseQuantity(x)
		if err != nil {
			return err
		}
		q.V = f
	default:
		return fmt.Errorf("want a number or a string with a unit, got %T", v)
	}
	if math.IsNaN(q.V) || math.IsInf(q.V, 0) {
		return fmt.Errorf("not a finite number")
	}
	q.Set = true
	return nil
}

// Setup is a test series' setup file.
type Setup struct {
	Series    string         `toml:"series"`
	Nominal   NominalSetup   `toml:"nominal"`
	Tolerance ToleranceSetup `toml:"tolerance"`
	Method    MethodSetup    `toml:"method"`
	Generator GeneratorSetup `toml:"generator"`
	Read      ReadSetup      `toml:"read"`
	Channels  []ChannelSetup `toml:"channel"`
	Path      string         `toml:"-"`
	Text      string         `toml:"-"`
}

type NominalSetup struct {
	Shape       string   `toml:"shape"`
	TestVoltage Quantity `toml:"test_voltage"`
	Chopped     bool     `toml:"chopped"`
}

type ToleranceSetup struct {
	TestVoltagePct   *float64 `toml:"test_voltage_pct"`
	FrontTimePct     *float64 `toml:"front_time_pct"`
	TimeToHalfPct    *float64 `toml:"time_to_half_pct"`
	OvershootMaxPct  *float64 `toml:"overshoot_max_pct"`
	TimeToPeakPct    *float64 `toml:"time_to_peak_pct"`
	SwitchingHalfPct *float64 `toml:"switching_time_to_half_pct"`
}

type MethodSetup struct {
	FitFrom       *float64 `toml:"fit_from"`
	FitTo         *float64 `toml:"fit_to"`
	OvershootOver string   `toml:"overshoot_over"`
	Shape         string   `toml:"force_shape"`
}

type GeneratorSetup struct {
	Stages          int      `toml:"stages"`
	ChargingVoltage Quantity `toml:"charging_voltage"`
}

type ReadSetup struct {
	Interval   Quantity `toml:"interval"`
	TimeColumn string   `toml:"time_column"`
}

type ChannelSetup struct {
	Name     string        `toml:"name"`  // the name this channel gets in the results
	Match    string        `toml:"match"` // file channel name or pattern (path.Match)
	Index    int           `toml:"index"` // 1-based column or channel number
	Role     string        `toml:"role"`  // divider, coil, antenna
	Ratio    Quantity      `toml:"ratio"` // multiply the recorded values (divider ratio x probe attenuation)
	DroopTau Quantity      `toml:"droop_tau"`
	Optional bool          `toml:"optional"` // files without this channel are not an error
	Coil     *CoilSetup    `toml:"coil"`
	Antenna  *AntennaSetup `toml:"antenna"`
	line     int
}

type CoilSetup struct {
	Mutual          Quantity `toml:"mutual"`      // M in H
	Calibration     Quantity `toml:"calibration"` // A per V*s
	Geometry        string   `toml:"geometry"`    // small, rectangular, circular
	Turns           float64  `toml:"turns"`
	Area            Quantity `toml:"area"`
	Distance        Quantity `toml:"distance"`
	Height          Quantity `toml:"height"`
	Inner           Quantity `toml:"inner"`
	Outer           Quantity `toml:"outer"`
	Radius          Quantity `toml:"radius"`
	Inductance      Quantity `toml:"inductance"`
	Resistance      Quantity `toml:"resistance"`
	LoadResistance  Quantity `toml:"load_resistance"`
	LoadCapacitance Quantity `toml:"load_capacitance"`
	Bandwidth       Quantity `toml:"bandwidth"`
}

type AntennaSetup struct {
	Kind            string   `toml:"kind"` // whip, plate, calibrated
	Height          Quantity `toml:"height"`
	Radius          Quantity `toml:"radius"`
	EffectiveHeight Quantity `toml:"effective_height"`
	Capacitance     Quantity `toml:"capacitance"`
	Area            Quantity `toml:"area"`
	Calibration     Quantity `toml:"calibration"` // (V/m) per V
	LoadResistance  Quantity `toml:"load_resistance"`
	LoadCapacitance Quantity `toml:"load_capacitance"`
	DroopTau        string   `toml:"droop_tau"` // a time, or "estimate"
	TailStart       Quantity `toml:"tail_start"`
}

var reDecodeErr = regexp.MustCompile(`line (\d+) \(last key "([^"]*)"\): (.*)`)

// SetupError names the setup file, line and key.
type SetupError struct {
	File string
	Line int
	Key  string
	Msg  string
}

func (e *SetupError) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s:%d: %s: %s", e.File, e.Line, e.Key, e.Msg)
	}
	if e.Key != "" {
		return fmt.Sprintf("%s: %s: %s", e.File, e.Key, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

// keyLine finds the line of a dotted key in TOML text: the table header, then the key.
func keyLine(text string, key toml.Key) int {
	sc := bufio.NewScanner(strings.NewReader(text))
	table := ""
	want := key[len(key)-1]
	parent := strings.Join(key[:len(key)-1], ".")
	no := 0
	for sc.Scan() {
		no++
		l := strings.TrimSpace(sc.Text())
		if strings.HasPrefix(l, "[") {
			table = strings.Trim(l, "[] ")
			continue
		}
		if i := strings.IndexByte(l, '='); i > 0 && strings.TrimSpace(l[:i]) == want && (table == parent || parent == "" && table == "") {
			return no
		}
	}
	return 0
}

// LoadSetup reads and checks a setup file.
func LoadSetup(file string) (*Setup, error) {
	b, err := os.ReadFile(file)
	if err != nil {
		return nil, &SetupError{File: file, Msg: err.Error()}
	}
	return ParseSetup(b, file)
}

// ParseSetup decodes setup text; unknown keys, wrong types and missing values are
// errors naming the key and the line.
func ParseSetup(b []byte, file string) (*Setup, error) {
	var s Setup
	md, err := toml.NewDecoder(bytes.NewReader(b)).Decode(&s)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, &SetupError{File: file, Line: pe.Position.Line, Key: pe.LastKey, Msg: pe.Message}
		}
		// decode errors read "toml: line N (last key "k"): message"
		if m := reDecodeErr.FindStringSubmatch(err.Error()); m != nil {
			line, _ := strconv.Atoi(m[1])
			return nil, &SetupError{File: file, Line: line, Key: m[2], Msg: m[3]}
		}
		return nil, &SetupError{File: file, Msg: strings.TrimPrefix(err.Error(), "toml: ")}
	}
	text := string(b)
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0]
		return nil, &SetupError{File: file, Line: keyLine(text, k), Key: k.String(), Msg: "unknown key"}
	}
	s.Path, s.Text = file, text
	// channel table lines, for later messages
	no, ch := 0, 0
	sc := bufio.NewScanner(strings.NewReader(text))
	for sc.Scan() {
		no++
		if strings.TrimSpace(sc.Text()) == "[[channel]]" && ch < len(s.Channels) {
			s.Channels[ch].line = no
			ch++
		}
	}
	bad := func(line int, key, format string, a ...any) error {
		return &SetupError{File: file, Line: line, Key: key, Msg: fmt.Sprintf(format, a...)}
	}
	if s.Nominal.Shape != "" {
		if _, err := impulse.ParseNominal(s.Nominal.Shape); err != nil {
			return nil, bad(keyLine(text, toml.Key{"nominal", "shape"}), "nominal.shape", "%v", err)
		}
	}
	switch s.Method.OvershootOver {
	case "", "extreme", "base":
	default:
		return nil, bad(keyLine(text, toml.Key{"method", "overshoot_over"}), "method.overshoot_over", "\"extreme\" or \"base\", not %q", s.Method.OvershootOver)
	}
	if s.Generator.Stages < 0 {
		return nil, bad(keyLine(text, toml.Key{"generator", "stages"}), "generator.stages", "must be positive")
	}
	for i := range s.Channels {
		c := &s.Channels[i]
		where := fmt.Sprintf("channel %d", i+1)
		if c.Match == "" && c.Index == 0 {
			return nil, bad(c.line, where, "needs match (a name or pattern) or index")
		}
		if c.Match != "" {
			if _, err := path.Match(c.Match, ""); err != nil {
				return nil, bad(c.line, where+".match", "bad pattern %q", c.Match)
			}
		}
		switch c.Role {
		case "divider":
		case "coil":
			if c.Coil == nil {
				return nil, bad(c.line, where, "role coil needs a [channel.coil] table")
			}
			if _, err := c.Coil.model(); err != nil {
				return nil, bad(c.line, where+".coil", "%v", err)
			}
		case "antenna":
			if c.Antenna == nil {
				return nil, bad(c.line, where, "role antenna needs a [channel.antenna] table")
			}
			if _, err := c.Antenna.model(); err != nil {
				return nil, bad(c.line, where+".antenna", "%v", err)
			}
		case "":
			return nil, bad(c.line, where+".role", "missing: divider, coil or antenna")
		default:
			return nil, bad(c.line, where+".role", "divider, coil or antenna, not %q", c.Role)
		}
	}
	return &s, nil
}

func (c *CoilSetup) model() (any, error) {
	if c.Calibration.Set {
		return nil, nil
	}
	m := c.Mutual.V
	if !c.Mutual.Set {
		need := func(qs ...*Quantity) error {
			for _, q := range qs {
				if !q.Set || !(q.V > 0) {
					return fmt.Errorf("geometry %q needs its dimensions set and positive", c.Geometry)
				}
			}
			if !(c.Turns > 0) {
				return fmt.Errorf("turns must be positive")
			}
			return nil
		}
		switch c.Geometry {
		case "small":
			if err := need(&c.Area, &c.Distance); err != nil {
				return nil, err
			}
			m = probe.MutualSmallCoil(c.Turns, c.Area.V, c.Distance.V)
		case "rectangular":
			if err := need(&c.Height, &c.Inner, &c.Outer); err != nil {
				return nil, err
			}
			if c.Outer.V <= c.Inner.V {
				return nil, fmt.Errorf("outer must exceed inner")
			}
			m = probe.MutualRectangular(c.Turns, c.Height.V, c.Inner.V, c.Outer.V)
		case "circular":
			if err := need(&c.Radius, &c.Distance); err != nil {
				return nil, err
			}
			if c.Distance.V <= c.Radius.V {
				return nil, fmt.Errorf("distance must exceed radius")
			}
			m = probe.MutualCircular(c.Turns, c.Radius.V, c.Distance.V)
		default:
			return nil, fmt.Errorf("give mutual, calibration, or geometry = small | rectangular | circular")
		}
	}
	if !c.LoadResistance.Set || !(c.LoadResistance.V > 0) {
		return nil, fmt.Errorf("load_resistance (the scope input, 50 ohm or 1 Mohm) is required")
	}
	return probe.Coil{M_h: m, L_h: c.Inductance.V, Rc_ohm: c.Resistance.V, R_ohm: c.LoadResistance.V, C_f: c.LoadCapacitance.V, Bandwidth_hz: c.Bandwidth.V}, nil
}

func (a *AntennaSetup) model() (probe.Antenna, error) {
	m := probe.Antenna{R_ohm: a.LoadResistance.V, CL_f: a.LoadCapacitance.V, TailStart_s: a.TailStart.V}
	switch a.DroopTau {
	case "estimate":
		m.EstimateTau = true
	case "":
	default:
		v, u, err := readers.ParseQuantity(a.DroopTau)
		if err != nil || (u != "s" && u != "") || !(v > 0) {
			return m, fmt.Errorf("droop_tau: a time such as \"200 us\", or \"estimate\"")
		}
		m.Tau_s = v
	}
	switch a.Kind {
	case "whip":
		if !(a.Height.V > 0) || !(a.Radius.V > 0) || a.Radius.V >= a.Height.V {
			return m, fmt.Errorf("a whip needs height and radius (radius smaller)")
		}
		m.Heff_m, m.Ca_f = probe.Whip(a.Height.V, a.Radius.V)
	case "plate":
		if !(a.Area.V > 0) || !(a.Capacitance.V > 0) {
			return m, fmt.Errorf("a plate needs area and capacitance")
		}
		m.HeffCa_fm = probe.PlateHeffCa(a.Area.V)
	case "calibrated":
		if a.Calibration.V == 0 {
			return m, fmt.Errorf("calibrated needs calibration in (V/m) per V")
		}
		m.Calibration = a.Calibration.V
	default:
		return m, fmt.Errorf("kind: whip, plate or calibrated, not %q", a.Kind)
	}
	if a.EffectiveHeight.Set {
		m.Heff_m = a.EffectiveHeight.V
	}
	if a.Capacitance.Set {
		m.Ca_f = a.Capacitance.V
	}
	if !m.EstimateTau && m.Tau_s == 0 && !(m.R_ohm > 0 && m.Ca_f+m.CL_f > 0) {
		return m, fmt.Errorf("no droop time constant: give droop_tau, \"estimate\", or load_resistance with the capacitances")
	}
	return m, nil
}

// parseKV reads "key=value,key=value" flags.
func parseKV(s string) (map[string]string, error) {
	out := map[string]string{}
	for _, p := range strings.Split(s, ",") {
		p = strings.TrimSpace(p)
		if p == "" {
			continue
		}
		i := strings.IndexByte(p, '=')
		if i <= 0 {
			return nil, fmt.Errorf("%q: want key=value", p)
		}
		out[strings.TrimSpace(p[:i])] = strings.TrimSpace(p[i+1:])
	}
	return out, nil
}

func quantityOf(m map[string]string, key string) (Quantity, error) {
	v, ok := m[key]
	if !ok {
		return Quantity{}, nil
	}
	var q Quantity
	if f, err := strconv.ParseFloat(v, 64); err == nil {
		return Quantity{V: f, Set: true}, nil
	}
	if err := q.UnmarshalTOML(v); err != nil {
		return q, fmt.Errorf("%s: %v", key, err)
	}
	return q, nil
}
