package shot

import (
	"errors"
	"testing"
)

// The setup parser never panics: any text is a setup or a *SetupError naming the file.
func FuzzParseSetup(f *testing.F) {
	f.Add([]byte("series = \"x\"\n[nominal]\nshape = \"1.2/50\"\ntest_voltage = \"300 kV\"\n"))
	f.Add([]byte("[[channel]]\nindex = 2\nrole = \"coil\"\n[channel.coil]\ngeometry = \"rectangular\"\nturns = 1\nheight = \"5 cm\"\ninner = \"50 cm\"\nouter = \"55 cm\"\nload_resistance = 50\n"))
	f.Add([]byte("[[channel]]\nmatch = \"ant*\"\nrole = \"antenna\"\n[channel.antenna]\nkind = \"whip\"\nheight = \"0.5 m\"\nradius = \"2 mm\"\nload_resistance = \"1 Mohm\"\nload_capacitance = \"20 pF\"\ndroop_tau = \"estimate\"\n"))
	f.Add([]byte("[tolerance]\nfront_time_pct = 30\n[method]\nforce_shape = \"switching\"\n[read]\ninterval = \"2 ns\"\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		s, err := ParseSetup(b, "fuzz.toml")
		if err != nil {
			var se *SetupError
			if !errors.As(err, &se) {
				t.Fatalf("error is %T, not *SetupError: %v", err, err)
			}
			return
		}
		if s == nil {
			t.Fatal("nil setup and nil error")
		}
		FromSetup(s) // a parsed setup always makes a configuration
	})
}
