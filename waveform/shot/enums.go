package shot

import "fmt"

// Role is what a channel measures.
type Role string

const (
	Divider Role = "divider" // a voltage divider: the impulse voltage
	Coil    Role = "coil"    // a B-dot pickup coil: the discharge current
	Antenna Role = "antenna" // an E-field antenna: the radiated field
	Current Role = "current" // a channel that records the current itself, in A
	Field   Role = "field"   // a channel that records the field itself, in V/m
)

// ParseRole reads a role name.
func ParseRole(s string) (Role, error) {
	switch r := Role(s); r {
	case Divider, Coil, Antenna, Current, Field:
		return r, nil
	}
	return "", fmt.Errorf("divider, coil, antenna, current or field, not %q", s)
}

// roleOfUnit is the role a channel's unit implies when nothing else gives it one: a
// channel in amperes records a current, one in V/m a field; neither is a divider.
func roleOfUnit(unit string) Role {
	switch unit {
	case "A":
		return Current
	case "V/m":
		return Field
	}
	return ""
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
	// Incomplete: evaluated, but a parameter the verdict needs could not be measured
	// (a record cut before T2, a clipped extreme): compliance is not shown, nor refuted
	// by what could be measured.
	Incomplete Verdict = "incomplete"
	// Discharge: in a test, the test object discharged during the impulse, and the
	// impulse was within tolerance as far as it went; its full shape is not there to
	// judge. The test's outcome counts it.
	Discharge Verdict = "discharge"
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
	case Incomplete:
		return "INCOMPLETE"
	case Discharge:
		return "DISCHARGE"
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
