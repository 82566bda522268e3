package shot

import (
	"fmt"
	"slices"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/probe"
)

// CoilSetup describes a B-dot coil: its mutual inductance to the discharge path (given,
// from a calibration, or from its geometry), its own inductance and resistance, and the
// load the scope puts on it.
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

// Model returns the coil's circuit model. A calibration factor k (A per V s) is the
// same circuit with M = 1/k, R = 1 and L = the coil's L/R.
func (c *CoilSetup) Model() (probe.Coil, error) {
	for _, q := range []struct {
		key, unit string
		q         Quantity
	}{{"mutual", "H", c.Mutual}, {"distance", "m", c.Distance}, {"height", "m", c.Height}, {"inner", "m", c.Inner}, {"outer", "m", c.Outer},
		{"radius", "m", c.Radius}, {"inductance", "H", c.Inductance}, {"resistance", "ohm", c.Resistance}, {"load_resistance", "ohm", c.LoadResistance},
		{"load_capacitance", "F", c.LoadCapacitance}, {"bandwidth", "Hz", c.Bandwidth}} {
		if err := q.q.in(q.key, q.unit); err != nil {
			return probe.Coil{}, err
		}
	}
	if c.Calibration.Set {
		if !(c.Calibration.V > 0) {
			return probe.Coil{}, fmt.Errorf("calibration must be positive (A per V s)")
		}
		tauLR := 0.0
		if c.Inductance.Set && c.LoadResistance.V > 0 {
			tauLR = c.Inductance.V / c.LoadResistance.V
		}
		return probe.Coil{M_h: 1 / c.Calibration.V, L_h: tauLR, R_ohm: 1}, nil
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
				return probe.Coil{}, err
			}
			m = probe.MutualSmallCoil(c.Turns, c.Area.V, c.Distance.V)
		case "rectangular":
			if err := need(&c.Height, &c.Inner, &c.Outer); err != nil {
				return probe.Coil{}, err
			}
			if c.Outer.V <= c.Inner.V {
				return probe.Coil{}, fmt.Errorf("outer must exceed inner")
			}
			m = probe.MutualRectangular(c.Turns, c.Height.V, c.Inner.V, c.Outer.V)
		case "circular":
			if err := need(&c.Radius, &c.Distance); err != nil {
				return probe.Coil{}, err
			}
			if c.Distance.V <= c.Radius.V {
				return probe.Coil{}, fmt.Errorf("distance must exceed radius")
			}
			m = probe.MutualCircular(c.Turns, c.Radius.V, c.Distance.V)
		default:
			return probe.Coil{}, fmt.Errorf("give mutual, calibration, or geometry = small | rectangular | circular")
		}
	}
	if !(m > 0) {
		return probe.Coil{}, fmt.Errorf("mutual must be positive")
	}
	if !c.LoadResistance.Set || !(c.LoadResistance.V > 0) {
		return probe.Coil{}, fmt.Errorf("load_resistance (the scope input, 50 ohm or 1 Mohm) is required")
	}
	return probe.Coil{M_h: m, L_h: c.Inductance.V, Rc_ohm: c.Resistance.V, R_ohm: c.LoadResistance.V, C_f: c.LoadCapacitance.V, Bandwidth_hz: c.Bandwidth.V}, nil
}

// AntennaSetup describes an E-field antenna and its load.
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

// Model returns the antenna's circuit model.
func (a *AntennaSetup) Model() (probe.Antenna, error) {
	for _, q := range []struct {
		key, unit string
		q         Quantity
	}{{"height", "m", a.Height}, {"radius", "m", a.Radius}, {"effective_height", "m", a.EffectiveHeight}, {"capacitance", "F", a.Capacitance},
		{"load_resistance", "ohm", a.LoadResistance}, {"load_capacitance", "F", a.LoadCapacitance}, {"tail_start", "s", a.TailStart}} {
		if err := q.q.in(q.key, q.unit); err != nil {
			return probe.Antenna{}, err
		}
	}
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

// ParseCoil reads a coil described on the command line as key=value pairs with the
// setup file's keys ("mutual=1nH,inductance=50nH,load_resistance=50"). Keys named in
// extra are returned as written instead (a caller's own keys, such as a synthetic
// current's peak); any other key is an error.
func ParseCoil(s string, extra ...string) (*CoilSetup, map[string]string, error) {
	c := &CoilSetup{}
	words := map[string]*string{"geometry": &c.Geometry}
	qs := map[string]*Quantity{"mutual": &c.Mutual, "calibration": &c.Calibration, "area": &c.Area, "distance": &c.Distance,
		"height": &c.Height, "inner": &c.Inner, "outer": &c.Outer, "radius": &c.Radius, "inductance": &c.Inductance,
		"resistance": &c.Resistance, "load_resistance": &c.LoadResistance, "load_capacitance": &c.LoadCapacitance, "bandwidth": &c.Bandwidth}
	var turns string
	words["turns"] = &turns
	rest, err := parseKV(s, qs, words, extra)
	if err == nil && turns != "" {
		if c.Turns, err = strconv.ParseFloat(turns, 64); err != nil {
			err = fmt.Errorf("turns: a number, not %q", turns)
		}
	}
	return c, rest, err
}

// ParseAntenna is ParseCoil for an antenna ("kind=whip,height=0.5m,radius=2mm,...").
func ParseAntenna(s string, extra ...string) (*AntennaSetup, map[string]string, error) {
	a := &AntennaSetup{}
	words := map[string]*string{"kind": &a.Kind, "droop_tau": &a.DroopTau}
	qs := map[string]*Quantity{"height": &a.Height, "radius": &a.Radius, "effective_height": &a.EffectiveHeight,
		"capacitance": &a.Capacitance, "area": &a.Area, "calibration": &a.Calibration, "load_resistance": &a.LoadResistance,
		"load_capacitance": &a.LoadCapacitance, "tail_start": &a.TailStart}
	rest, err := parseKV(s, qs, words, extra)
	return a, rest, err
}

func parseKV(s string, qs map[string]*Quantity, words map[string]*string, extra []string) (map[string]string, error) {
	rest := map[string]string{}
	for _, p := range strings.Split(s, ",") {
		p = strings.TrimSpace(p)
		if p == "" {
			continue
		}
		i := strings.IndexByte(p, '=')
		if i <= 0 {
			return nil, fmt.Errorf("%q: want key=value", p)
		}
		k, v := strings.TrimSpace(p[:i]), strings.TrimSpace(p[i+1:])
		switch {
		case qs[k] != nil:
			// as in the setup file: a bare number is in SI, anything else carries a unit
			var x any = v
			if f, err := strconv.ParseFloat(v, 64); err == nil {
				x = f
			}
			if err := qs[k].UnmarshalTOML(x); err != nil {
				return nil, fmt.Errorf("%s: %v", k, err)
			}
		case words[k] != nil:
			*words[k] = v
		case slices.Contains(extra, k):
			rest[k] = v
		default:
			known := slices.Sorted(func(yield func(string) bool) {
				for k := range qs {
					yield(k)
				}
				for k := range words {
					yield(k)
				}
				for _, k := range extra {
					yield(k)
				}
			})
			return nil, fmt.Errorf("unknown key %q (known: %s)", k, strings.Join(known, ", "))
		}
	}
	return rest, nil
}
