package readers

import (
	"math"
	"strconv"
	"unsafe"
)

// pow10 holds the powers of ten that float64 represents exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

var pow10u = [...]uint64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11,
	1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19}

// digitRun returns the value of the decimal digits at b[i:] and the index after them.
// Runs of more than 19 digits overflow the value; callers check the length. (An
// eight-bytes-at-a-time SWAR version measured no faster here: the parse is bound by
// the per-field overhead, not the digit loop.)
func digitRun(b []byte, i int) (uint64, int) {
	var m uint64
	for ; i < len(b); i++ {
		c := b[i] - '0'
		if c > 9 {
			break
		}
		m = m*10 + uint64(c)
	}
	return m, i
}

// parseFloat parses a decimal number written with decimal separator dec ('.' or ',').
// Integers and small powers take Clinger's fast path (an exact mantissa below 2^53
// times an exact power of ten up to 1e22: one correctly rounded multiply); any other
// mantissa of up to 19 digits takes Eisel-Lemire (eisel.go); both give the correctly
// rounded result, bit-identical to strconv.ParseFloat. The rest goes to strconv.
func parseFloat(b []byte, dec byte) (float64, bool) {
	f, end, ok := fastPrefix(b, 0, dec)
	if ok && end == len(b) {
		return f, true
	}
	return slowFloat(b, dec)
}

// fastPrefix parses the simple number at b[i:] and returns it and the index after
// it; ok is false when the number needs the slow path or there is none.
func fastPrefix(b []byte, i int, dec byte) (f float64, end int, ok bool) {
	n := len(b)
	neg := false
	if i < n && (b[i] == '-' || b[i] == '+') {
		neg = b[i] == '-'
		i++
	}
	exp := 0
	d0 := i
	mant, i := digitRun(b, i)
	nd := i - d0
	if i < n && b[i] == dec {
		i++
		f0 := i
		var frac uint64
		frac, i = digitRun(b, i)
		if k := i - f0; k > 0 {
			if nd+k > 19 {
				return 0, i, false
			}
			mant = mant*pow10u[k] + frac
			exp = -k
			nd += k
		}
	}
	// More than 19 digits may have overflowed mant; leading zeros count here, which
	// only sends a few extra cells to the slow path.
	if nd == 0 || nd > 19 {
		return 0, i, false
	}
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		i++
		eneg := false
		if i < n && (b[i] == '-' || b[i] == '+') {
			eneg = b[i] == '-'
			i++
		}
		e0 := i
		e := 0
		for ; i < n; i++ {
			c := b[i] - '0'
			if c > 9 {
				break
			}
			if e < 10000 {
				e = e*10 + int(c)
			}
		}
		if i == e0 {
			return 0, i, false
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	if mant == 0 {
		if neg {
			return math.Copysign(0, -1), i, true
		}
		return 0, i, true
	}
	if mant>>53 == 0 && exp >= 0 && exp <= 22 {
		// Clinger: exact mantissa times exact power, one rounding
		f = float64(mant) * pow10[exp]
		if neg {
			f = -f
		}
		return f, i, true
	}
	// Everything else with up to 19 digits, without a division.
	if f, ok = eiselLemire(mant, exp, neg); ok {
		return f, i, true
	}
	// Eisel-Lemire declines values that sit exactly on (or next to) a float, which
	// short decimals such as 1.022775e+04 = 10227.75 often do; Clinger's division is
	// exact for them.
	if mant>>53 == 0 && exp < 0 && exp >= -22 {
		f = float64(mant) / pow10[-exp]
		if neg {
			f = -f
		}
		return f, i, true
	}
	return 0, i, false
}

// slowFloat handles what the fast path does not, through strconv. Underscores and hex
// are refused: no scope writes them and strconv would read "0x1p3" as a number.
func slowFloat(b []byte, dec byte) (float64, bool) {
	var buf [64]byte
	s := b
	if len(s) > 1 && s[0] == '"' && s[len(s)-1] == '"' {
		s = s[1 : len(s)-1]
	}
	if len(s) == 0 || len(s) > len(buf) {
		return 0, false
	}
	t := buf[:len(s)]
	for i, c := range s {
		switch {
		case c == dec:
			c = '.'
		case c == '.' && dec != '.':
			return 0, false
		case c == '_' || c == 'x' || c == 'X' || c == 'p' || c == 'P':
			return 0, false
		case c == ',' || c == ';' || c == ' ' || c == '\t':
			// a line split under the wrong delimiter: refused before strconv, whose
			// error allocates, since the sniffer tries every dialect on every line
			return 0, false
		}
		t[i] = c
	}
	f, err := strconv.ParseFloat(unsafe.String(&t[0], len(t)), 64)
	if err != nil {
		// A value out of range is still a number; report it as not finite.
		if e, ok := err.(*strconv.NumError); ok && e.Err == strconv.ErrRange {
			return f, true
		}
		return 0, false
	}
	return f, true
}
