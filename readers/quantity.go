package readers

import "fmt"

// examples are what a message shows for a quantity in each unit.
var examples = map[string]string{"V": "300kV", "s": "2ns", "Hz": "1MHz", "A": "2kA", "V/m": "20kV/m", "H": "1nH", "ohm": "50ohm", "F": "20pF", "m": "5cm"}

// ParseQuantityIn reads a number that must carry a unit of the given SI unit ("V", "s",
// ...), with any SI prefix: "300kV", "2 ns". A bare number is refused, so that 5 is
// never silently 5 s where 5 ns was meant.
func ParseQuantityIn(s, unit string) (float64, error) {
	v, u, err := ParseQuantity(s)
	ex := examples[unit]
	if ex == "" {
		ex = "1" + unit
	}
	switch {
	case err != nil:
		return 0, fmt.Errorf("%v; write e.g. %s", err, ex)
	case u == "":
		return 0, fmt.Errorf("%q has no unit; write it with one, e.g. %s", s, ex)
	case u != unit:
		return 0, fmt.Errorf("%q is in %s, not %s; write e.g. %s", s, u, unit, ex)
	}
	return v, nil
}
