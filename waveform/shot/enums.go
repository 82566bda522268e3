package shot

import "fmt"

// Role is what a channel measures.
type Role string

const (
	Divider Role = "divider" // a voltage divider: the impulse voltage
	Coil    Role = "coil"    // a B-dot pickup coil: the discharge current
	Antenna Role = "antenna" // an E-field antenna: the radiated field
)

// ParseRole reads a role name.
func ParseRole(s string) (Role, error) {
	switch r := Role(s); r {
	case Divider, Coil, Antenna:
		return r, nil
	}
	return "", fmt.Errorf("divider, coil or antenna, not %q", s)
}

// UnmarshalText lets the setup file's role key be checked as it is decoded.
func (r *Role) UnmarshalText(b []byte) error {
	v, err := ParseRole(string(b))
	if err != nil {
		return err
	}
	*r = v
	return nil
}

// Verdict is a row's outcome.
type Verdict string

const (
	Pass     Verdict = "pass"     // evaluated, and within every tolerance that applies
	Fail     Verdict = "fail"     // evaluated, and some parameter out of tolerance
	Error    Verdict = "error"    // not read or not evaluated; the row's error says why
	Measured Verdict = "measured" // evaluated, and no tolerance applies (a coil or antenna channel)
)

// Word is the verdict as screens show it.
func (v Verdict) Word() string {
	switch v {
	case Pass:
		return "PASS"
	case Fail:
		return "FAIL"
	case Measured:
		return "MEASURED"
	}
	return "ERROR"
}

// Polarity is the sign of an impulse or a reconstructed signal; magnitudes in the rows
// are positive.
type Polarity string

const (
	Positive Polarity = "positive"
	Negative Polarity = "negative"
)

func polarityOf(sign int) Polarity {
	if sign < 0 {
		return Negative
	}
	return Positive
}
