package readers

import (
	"fmt"
	"strings"
	"unicode"
)

// unitReading is one way to read a unit spelling: the SI symbol, the factor to SI, and
// the exact spelling it stands for.
type unitReading struct {
	si     string
	factor float64
	spell  string
}

// labPrefixes are the prefixes a high-voltage lab writes with each unit. A spelling in
// the wrong case is matched only against these, so that "MHZ" is megahertz (nobody
// records millihertz) while "mv" stays ambiguous (millivolt and megavolt are both
// real in this trade). Siemens is listed only so that "MS" is seen to be ambiguous;
// no reader accepts a value in siemens.
var labPrefixes = []struct {
	spell, si string
	prefixes  []string
}{
	{"V/m", "V/m", []string{"", "m", "k", "M"}},
	{"A/s", "A/s", []string{"", "k", "M", "G"}},
	{"Vs", "V*s", []string{"", "u", "m"}},
	{"Wb", "Wb", []string{"", "u", "m"}},
	{"Hz", "Hz", []string{"", "k", "M", "G"}},
	{"V", "V", []string{"", "u", "m", "k", "M"}},
	{"A", "A", []string{"", "u", "m", "k", "M"}},
	{"s", "s", []string{"", "p", "n", "u", "m"}},
	{"ohm", "ohm", []string{"", "m", "k", "M"}},
	{"S", "S", []string{"m", "M"}},
}

var unitWords = map[string]string{"s": "seconds", "V": "volts", "A": "amperes", "Hz": "hertz", "S": "siemens",
	"V/m": "volts per metre", "A/s": "amperes per second", "V*s": "volt-seconds", "Wb": "webers", "ohm": "ohms"}

var prefixWords = map[string]string{"": "", "p": "pico", "n": "nano", "u": "micro", "m": "milli", "k": "kilo", "M": "mega", "G": "giga"}

// foldReadings returns every reading of u that ignores letter case, over labPrefixes.
func foldReadings(u string) []unitReading {
	var out []unitReading
	for _, b := range labPrefixes {
		for _, p := range b.prefixes {
			if strings.EqualFold(u, p+b.spell) {
				out = append(out, unitReading{b.si, siPrefix[p], p + b.spell})
			}
		}
	}
	return out
}

func (r unitReading) words() string {
	p := strings.TrimSuffix(r.spell, map[string]string{"V*s": "Vs"}[r.si])
	p = strings.TrimSuffix(p, r.si)
	return fmt.Sprintf("%s (%s%s)", r.spell, prefixWords[p], unitWords[r.si])
}

// foldedUnit reads a unit written in a case SI does not use ("kv", "NS", "MHZ") when
// exactly one lab reading fits; two readings ("mv": millivolt or megavolt) are an
// error naming both, so a flag never silently takes the wrong power of a thousand.
func foldedUnit(u string) (unitReading, error) {
	rs := foldReadings(u)
	var known []unitReading
	for _, r := range rs {
		if r.si != "S" {
			known = append(known, r)
		}
	}
	switch {
	case len(rs) > 1:
		var w []string
		for _, r := range rs {
			w = append(w, r.words())
		}
		return unitReading{}, fmt.Errorf("unit %q is ambiguous: %s; write it in the case SI uses", u, strings.Join(w, " or "))
	case len(known) == 1:
		return known[0], nil
	}
	return unitReading{}, fmt.Errorf("unknown unit %q", u)
}

// wordUnits are unit names written out, as some instruments label columns ("Volt",
// "Second"), compared in lower case with a plural "s" removed.
var wordUnits = map[string]string{"volt": "V", "second": "s", "sec": "s", "ampere": "A", "amp": "A", "hertz": "Hz"}

var wordPrefixes = map[string]float64{"": 1, "pico": 1e-12, "nano": 1e-9, "micro": 1e-6, "milli": 1e-3, "kilo": 1e3, "mega": 1e6}

// indexUnits are the words a units row uses for a column that counts samples.
var indexUnits = map[string]bool{"sequence": true, "samples": true, "sample": true, "points": true, "point": true, "pts": true, "index": true, "#": true}

const unitIndex = "#" // the "unit" of a sample-index column

// headerUnit reads a unit as files write it in headers and units rows: an SI symbol,
// the same in brackets, a word ("Volt", "Seconds", "millivolt"), a spelling in another
// case when only one lab reading fits ("S" for seconds, "KV"), or a sample count
// ("Sequence", returned as unitIndex).
func headerUnit(u string) (si string, factor float64, ok bool) {
	u = strings.TrimSpace(u)
	if len(u) >= 2 && ((u[0] == '(' && u[len(u)-1] == ')') || (u[0] == '[' && u[len(u)-1] == ']')) {
		u = strings.TrimSpace(u[1 : len(u)-1])
	}
	if u == "" {
		return "", 1, true
	}
	if si, f, ok := ParseUnit(u); ok {
		return si, f, true
	}
	l := strings.ToLower(u)
	if indexUnits[l] {
		return unitIndex, 1, true
	}
	for p, pf := range wordPrefixes {
		if w, found := strings.CutPrefix(l, p); found {
			for _, cand := range []string{w, strings.TrimSuffix(w, "s")} {
				if si, ok := wordUnits[cand]; ok {
					return si, pf, true
				}
			}
		}
	}
	if r, err := foldedUnit(u); err == nil {
		return r.si, r.factor, true
	}
	return "", 0, false
}

// snakeBases are the units a snake_case suffix may name. Letters that are also common
// labels or other quantities (c for Celsius, t, f, h, m) are left out, so "temp_c" and
// "phase_t" stay names.
var snakeBases = map[string]string{"v": "V", "a": "A", "s": "s", "hz": "Hz", "v/m": "V/m", "a/s": "A/s", "wb": "Wb", "vs": "V*s", "ohm": "ohm"}

// labelWords take a one-letter label: "ch_a" is channel A, not a current.
var labelWords = map[string]bool{"ch": true, "chan": true, "channel": true, "phase": true, "probe": true, "input": true,
	"in": true, "trace": true, "port": true, "signal": true, "source": true, "line": true, "sensor": true, "group": true}

// snakeUnit reads the unit after an underscore in names such as "t_us", "u_kv" or
// "e_kv_per_m". The base letter may be in either case; a prefix letter is read as SI
// writes it when only one lab prefix fits in any case ("kv": kilo), and as written
// when two do ("mv" is millivolt: snake_case writes milli in lower case).
func snakeUnit(u string) (si string, factor float64, ok bool) {
	u = strings.ReplaceAll(u, "_per_", "/")
	if u == "" || strings.ContainsAny(u, "_ ") {
		return "", 0, false
	}
	l := strings.ToLower(u)
	for base, si := range snakeBases {
		if !strings.HasSuffix(l, base) {
			continue
		}
		p := u[:len(u)-len(base)]
		if p == "" {
			return si, 1, true
		}
		var fits []string
		for _, b := range labPrefixes {
			if b.si != si {
				continue
			}
			for _, q := range b.prefixes {
				if q != "" && strings.EqualFold(q, p) {
					fits = append(fits, q)
				}
			}
		}
		switch {
		case len(fits) == 1:
			return si, siPrefix[fits[0]], true
		case len(fits) > 1:
			if f, ok := siPrefix[p]; ok {
				return si, f, true
			}
		}
	}
	return "", 0, false
}

// SplitHeader splits a header cell into a name and a unit. Units are understood
// in brackets ("U [V]", "Voltage (kV)", "t (us)"), after a slash ("I/kA", "t/us"),
// after the word "in" ("C1 in V", "Time in s", "in s"), and after an underscore
// ("time_s", "u_kv", "e_kv_per_m", "peak_ms"). Brackets that hold no unit but a
// label with a digit ("X(CH1)") stay part of the name; other bracketed words are
// returned as the unit so that the caller can refuse a unit it does not know.
func SplitHeader(cell string) (name, unit string) {
	c := strings.TrimSpace(strings.Trim(strings.TrimSpace(cell), `"'`))
	for _, br := range [][2]string{{"[", "]"}, {"(", ")"}} {
		if j := strings.LastIndex(c, br[0]); j >= 0 && strings.HasSuffix(c, br[1]) {
			in := strings.TrimSpace(c[j+1 : len(c)-1])
			if _, _, ok := headerUnit(in); ok || !strings.ContainsFunc(in, unicode.IsDigit) {
				return strings.TrimSpace(c[:j]), in
			}
			return c, ""
		}
	}
	// "I/kA": a quantity over its unit, as ISO 80000-1 writes axis labels. Only when
	// the part after the slash is a known unit, so "V/m" alone stays a name.
	if _, _, whole := ParseUnit(c); !whole {
		for j := strings.Index(c, "/"); j > 0 && j < len(c)-1; {
			if _, _, ok := headerUnit(c[j+1:]); ok {
				return strings.TrimSpace(c[:j]), strings.TrimSpace(c[j+1:])
			}
			k := strings.Index(c[j+1:], "/")
			if k < 0 {
				break
			}
			j += 1 + k
		}
	}
	l := strings.ToLower(c)
	j := strings.LastIndex(l, " in ") + 1
	if j == 0 && strings.HasPrefix(l, "in ") {
		j = 0
	} else if j == 0 {
		j = -1
	}
	if j >= 0 {
		if u := strings.TrimSpace(c[j+3:]); u != "" {
			if _, _, ok := headerUnit(u); ok {
				return strings.TrimSpace(c[:j]), u
			}
		}
	}
	for j := strings.Index(c, "_"); j > 0; {
		name, u := c[:j], c[j+1:]
		if si, f, ok := snakeUnit(u); ok {
			single := len(u) == 1
			if !(single && labelWords[strings.ToLower(name)]) {
				return name, unitSpelling(si, f)
			}
		}
		k := strings.Index(c[j+1:], "_")
		if k < 0 {
			break
		}
		j += 1 + k
	}
	return c, ""
}

// unitSpelling writes an SI symbol with the prefix of factor, for a unit that
// SplitHeader hands on as text.
func unitSpelling(si string, f float64) string {
	for _, p := range []string{"", "p", "n", "u", "m", "k", "M", "G"} {
		if siPrefix[p] == f {
			if si == "V*s" && p != "" {
				return p + "Vs"
			}
			return p + si
		}
	}
	return si
}

// timeNames are header names of a time column, compared in lower case.
var timeNames = map[string]bool{"t": true, "time": true, "x": true, "s": true, "sec": true, "seconds": true,
	"second": true, "zeit": true, "temps": true, "tiempo": true, "timestamp": true, "x-axis": true, "xaxis": true}

// indexNames are header names of a column that counts samples, compared in lower case.
var indexNames = map[string]bool{"": true, "index": true, "idx": true, "sample": true, "samples": true, "n": true,
	"no": true, "nr": true, "#": true, "point": true, "points": true, "pt": true, "sequence": true, "seq": true,
	"unnamed: 0": true, "number": true, "count": true, "i": true}
