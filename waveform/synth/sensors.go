package synth

import (
	"fmt"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/probe"
	"github.com/hvshot/hvshot/waveform/shot"
)

// signalQuantities reads the keys that describe a synthetic sensor's signal.
func signalQuantities(m map[string]string) (map[string]float64, error) {
	out := map[string]float64{}
	for k, v := range m {
		f, _, err := readers.ParseQuantity(v)
		if err != nil {
			return nil, fmt.Errorf("%s: %v", k, err)
		}
		out[k] = f
	}
	return out, nil
}

// ParseCoil reads a synthetic coil channel given in the setup file's words for the
// coil (mutual, inductance, load_resistance, ...) plus the current it sees: peak, and
// freq and damp (a damped sine) or tau1 and tau2 (a double exponential), and noise.
func ParseCoil(s string) (*Coil, error) {
	cs, extra, err := shot.ParseCoil(s, "peak", "freq", "damp", "tau1", "tau2", "noise")
	if err == nil && (cs.LoadCapacitance.Set || cs.Bandwidth.Set) {
		err = fmt.Errorf("the synthetic coil has no load capacitance or bandwidth")
	}
	var m probe.Coil
	if err == nil {
		m, err = cs.Model()
	}
	var v map[string]float64
	if err == nil {
		v, err = signalQuantities(extra)
	}
	if err != nil {
		return nil, fmt.Errorf("coil: %v", err)
	}
	return &Coil{M_h: m.M_h, L_h: m.L_h, Rc_ohm: m.Rc_ohm, R_ohm: m.R_ohm, Peak_a: v["peak"], Freq_hz: v["freq"], Damp_s: v["damp"],
		Tau1_s: v["tau1"], Tau2_s: v["tau2"], Noise_v: v["noise"]}, nil
}

// ParseAntenna reads a synthetic antenna channel given in the setup file's words for
// the antenna plus peak (the field change) and noise.
func ParseAntenna(s string) (*Antenna, error) {
	as, extra, err := shot.ParseAntenna(s, "peak", "noise")
	var m probe.Antenna
	if err == nil {
		m, err = as.Model()
	}
	var g float64
	if err == nil {
		g, err = m.Gain()
	}
	var v map[string]float64
	if err == nil {
		v, err = signalQuantities(extra)
	}
	if err == nil && m.EstimateTau {
		err = fmt.Errorf("droop_tau: a synthetic antenna needs a time, not \"estimate\"")
	}
	if err != nil {
		return nil, fmt.Errorf("antenna: %v", err)
	}
	tau := m.Tau_s
	if tau == 0 {
		tau = m.R_ohm * (m.Ca_f + m.CL_f)
	}
	return &Antenna{Gain: g, Tau_s: tau, Peak_v_per_m: v["peak"], Noise_v: v["noise"]}, nil
}
