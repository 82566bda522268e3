package readers

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Prefixes and symbols: SI Brochure (BIPM, 9th edition, tables 7 and 4); the
// readings of a spelling in the wrong case are ours (issue 11).
func TestParseQuantityCase(t *testing.T) {
	cases := []struct {
		in    string
		v     float64
		unit  string
		err   bool
		words []string // in the error: both readings
	}{
		// exact spellings, as before
		{"2ns", 2e-9, "s", false, nil},
		{"300kV", 3e5, "V", false, nil},
		{"5mV", 5e-3, "V", false, nil},
		{"1.2MV", 1.2e6, "V", false, nil},
		{"10ms", 1e-2, "s", false, nil},
		{"3mA", 3e-3, "A", false, nil},
		{"2MA", 2e6, "A", false, nil},
		{"100 MS/s", 1e8, "S/s", false, nil},
		{"1e-9s", 1e-9, "s", false, nil},
		{"40 MHz", 4e7, "Hz", false, nil},
		// case variants with one lab reading
		{"300kv", 3e5, "V", false, nil},
		{"300KV", 3e5, "V", false, nil},
		{"300Kv", 3e5, "V", false, nil},
		{"2NS", 2e-9, "s", false, nil},
		{"5US", 5e-6, "s", false, nil},
		{"100MHZ", 1e8, "Hz", false, nil},
		{"10 khz", 1e4, "Hz", false, nil},
		{"7 S", 7, "s", false, nil},
		// case variants with two readings: refused, naming both
		{"5mv", 0, "", true, []string{"mV (millivolts)", "MV (megavolts)"}},
		{"5Mv", 0, "", true, []string{"mV (millivolts)", "MV (megavolts)"}},
		{"10MS", 0, "", true, []string{"ms (milliseconds)", "MS (megasiemens)"}},
		{"3ma", 0, "", true, []string{"mA (milliamperes)", "MA (megaamperes)"}},
		{"5 bar", 0, "", true, []string{"unknown unit"}},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			v, u, err := ParseQuantity(c.in)
			if c.err {
				require.Error(t, err)
				for _, w := range c.words {
					assert.Contains(t, err.Error(), w)
				}
				return
			}
			require.NoError(t, err)
			assert.Equal(t, c.unit, u)
			assert.InEpsilon(t, c.v, v, 1e-12)
		})
	}
}

func TestSplitHeader(t *testing.T) {
	cases := []struct{ cell, name, unit string }{
		{"U [V]", "U", "V"},
		{"Voltage (kV)", "Voltage", "kV"},
		{"Time [s]", "Time", "s"},
		{"CH1 (V)", "CH1", "V"},
		{"I/kA", "I", "kA"},
		{"t/us", "t", "us"},
		{"E/kV/m", "E", "kV/m"},
		{"V/m", "V/m", ""},
		{"time_s", "time", "s"},
		{"t_us", "t", "us"},
		{"u_kv", "u", "kV"},
		{"voltage_v", "voltage", "V"},
		{"u_v", "u", "V"},
		{"i_a", "i", "A"},
		{"e_v_per_m", "e", "V/m"},
		{"e_kv_per_m", "e", "kV/m"},
		{"peak_ms", "peak", "ms"},
		{"u_mv", "u", "mV"},   // snake_case writes milli in lower case
		{"f_mhz", "f", "MHz"}, // nobody records millihertz
		{"u_divider_kv", "u_divider", "kV"},
		{"ch_a", "ch_a", ""},         // channel A, not a current
		{"signal_b", "signal_b", ""}, // a label
		{"temp_c", "temp_c", ""},     // Celsius is no unit hvshot reads
		{"time_as", "time_as", ""},   // no lab writes attoseconds
		{"X(CH1)", "X(CH1)", ""},
		{"C1 in V", "C1", "V"},
		{"in s", "", "s"},
		{"Time in s", "Time", "s"},
		{"Pressure [bar]", "Pressure", "bar"}, // handed on, so the reader can refuse it
		{"Main signal", "Main signal", ""},
	}
	for _, c := range cases {
		t.Run(c.cell, func(t *testing.T) {
			n, u := SplitHeader(c.cell)
			assert.Equal(t, c.name, n)
			assert.Equal(t, c.unit, u)
		})
	}
}

func TestHeaderUnit(t *testing.T) {
	cases := []struct {
		in     string
		si     string
		factor float64
		ok     bool
	}{
		{"V", "V", 1, true},
		{"Volt", "V", 1, true},
		{"Volts", "V", 1, true},
		{"Second", "s", 1, true},
		{"seconds", "s", 1, true},
		{"S", "s", 1, true},
		{"(ns)", "s", 1e-9, true},
		{"[mV]", "V", 1e-3, true},
		{"millivolt", "V", 1e-3, true},
		{"Sequence", unitIndex, 1, true},
		{"KV", "V", 1e3, true},
		{"mv", "", 0, false},
		{"t", "", 0, false},
		{"CH1", "", 0, false},
		{"x-axis", "", 0, false},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			si, f, ok := headerUnit(c.in)
			require.Equal(t, c.ok, ok)
			if ok {
				assert.Equal(t, c.si, si)
				assert.InEpsilon(t, c.factor, f, 1e-15)
			}
		})
	}
}
