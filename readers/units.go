package readers

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// SI prefixes of the SI Brochure (BIPM, 9th edition, table 7), with "u" accepted for
// micro as scope software writes it.
var siPrefix = map[string]float64{
	"Q": 1e30, "R": 1e27, "Y": 1e24, "Z": 1e21, "E": 1e18, "P": 1e15, "T": 1e12, "G": 1e9,
	"M": 1e6, "k": 1e3, "h": 1e2, "da": 1e1, "": 1, "d": 1e-1, "c": 1e-2, "m": 1e-3,
	"u": 1e-6, "µ": 1e-6, "μ": 1e-6, "n": 1e-9, "p": 1e-12, "f": 1e-15, "a": 1e-18,
	"z": 1e-21, "y": 1e-24, "r": 1e-27, "q": 1e-30,
}

// baseUnits are the units hvshot records, longest first so "V/m" wins over "V".
// Units with other spellings map to the SI symbol.
var baseUnits = []struct{ spell, si string }{
	{"V/m", "V/m"}, {"A/s", "A/s"}, {"V*s", "V*s"}, {"Vs", "V*s"}, {"Wb", "Wb"},
	{"Hz", "Hz"}, {"sec", "s"}, {"V", "V"}, {"A", "A"}, {"s", "s"}, {"T", "T"}, {"C", "C"},
	{"F", "F"}, {"H", "H"}, {"Ω", "ohm"}, {"ohm", "ohm"}, {"m", "m"},
}

// ParseUnit splits a unit such as "kV", "us", "mA" or "kV/m" into its SI symbol and the
// factor that takes a value in it to SI. ok is false for an unknown unit.
func ParseUnit(u string) (si string, factor float64, ok bool) {
	u = strings.TrimSpace(u)
	if u == "" {
		return "", 1, true
	}
	for _, b := range baseUnits {
		if strings.HasSuffix(u, b.spell) {
			p := strings.TrimSuffix(u, b.spell)
			if f, ok := siPrefix[p]; ok {
				return b.si, f, true
			}
		}
	}
	return "", 0, false
}

// ParseQuantity reads a number with an optional unit, "2 ns", "1e-9s", "300kV",
// "100 MS/s", into SI. A rate in S/s or Sa/s is returned as a rate, unit "S/s".
func ParseQuantity(s string) (float64, string, error) {
	s = strings.TrimSpace(s)
	i := 0
	for i < len(s) && strings.IndexByte("+-0123456789.eE", s[i]) >= 0 {
		// an 'e' only belongs to the number when a digit or sign follows
		if (s[i] == 'e' || s[i] == 'E') && (i+1 >= len(s) || strings.IndexByte("+-0123456789", s[i+1]) < 0) {
			break
		}
		i++
	}
	v, err := strconv.ParseFloat(strings.ReplaceAll(s[:i], ",", "."), 64)
	if err != nil {
		// a decimal comma
		v, err = strconv.ParseFloat(strings.ReplaceAll(strings.TrimSpace(s[:i]), ",", "."), 64)
		if err != nil {
			return 0, "", fmt.Errorf("%q is not a number with a unit", s)
		}
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, "", fmt.Errorf("%q is not finite", s)
	}
	u := strings.TrimSpace(s[i:])
	for _, rate := range []string{"Sa/s", "S/s", "sps", "SPS"} {
		if strings.HasSuffix(u, rate) {
			f, ok := siPrefix[strings.TrimSpace(strings.TrimSuffix(u, rate))]
			if !ok {
				return 0, "", fmt.Errorf("unknown prefix in %q", s)
			}
			return v * f, "S/s", nil
		}
	}
	si, f, ok := ParseUnit(u)
	if !ok {
		r, err := foldedUnit(u)
		if err != nil {
			return 0, "", fmt.Errorf("%v in %q", err, s)
		}
		si, f = r.si, r.factor
	}
	return v * f, si, nil
}
