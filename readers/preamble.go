package readers

import (
	"fmt"
	"strconv"
	"strings"
	"time"
)

// kv is one setting as the file holds it: in a preamble line, in the extra cells of a
// header row, or in the settings columns beside the data.
type kv struct {
	key, val  string
	line, col int
}

// preamble keys, compared with case, blanks, underscores, dashes and dots removed.
var (
	keyInterval = []string{"sampleinterval", "interval", "dt", "xincrement", "timestep", "samplingperiod", "sampleperiod", "horizontalinterval", "increment", "xinc"}
	keyRate     = []string{"samplerate", "samplingrate", "fs", "samplingfrequency"}
	keyStart    = []string{"start", "starttime", "t0", "xorigin", "xstart", "firsttime"}
	keyUnit     = []string{"unit", "units", "yunit", "verticalunit", "verticalunits"}
	keyTimeUnit = []string{"horizontalunit", "horizontalunits", "xunit", "xunits", "timeunit", "timeunits"}
	keyRange    = []string{"verticalrange", "fullscale", "yrange"}
	keyBits     = []string{"adcbits", "resolution", "bits", "verticalresolution"}
	keyScale    = []string{"verticalscale", "voltsperdiv", "voltsdiv", "vdiv"}
	keyOffset   = []string{"verticaloffset", "verticalposition"}
	keyProbe    = []string{"probe", "proberatio", "probefactor", "probeattenuation", "probeatten", "attenuation"}
	keyLength   = []string{"recordlength", "memorylength", "numberofpoints", "points", "recordpoints"}
	keySource   = []string{"source", "channel"}
	keyStamp    = []string{"triggertime", "acquisitiontime", "datetime", "timestamp"}
	// the trigger's sample number counted from the first sample: without a stated
	// start, the record starts that many intervals before the trigger
	keyTrigPoint = []string{"triggerpoint", "triggersample", "triggerindex", "pretriggersamples"}
)

func normKey(k string) string {
	k = strings.ToLower(strings.TrimSpace(k))
	return strings.NewReplacer(" ", "", "_", "", "-", "", ".", "").Replace(k)
}

func hasKey(keys []string, k string) bool {
	for _, x := range keys {
		if x == k {
			return true
		}
	}
	return false
}

// isSettingKey reports whether a cell names a setting hvshot reads, so that a
// "key,value" line right above two columns of data is not taken for their names.
func isSettingKey(cell string) bool {
	k := normKey(cell)
	for _, keys := range [][]string{keyInterval, keyRate, keyStart, keyUnit, keyTimeUnit, keyRange, keyBits, keyScale, keyOffset, keyProbe, keyLength, keyStamp, keyTrigPoint} {
		if hasKey(keys, k) {
			return true
		}
	}
	return false
}

type preamble struct {
	meta map[string]string

	interval     float64
	intervalLine int
	intervalText string
	start        float64
	hasStart     bool
	startLine    int
	trigPoint    float64 // samples before the trigger, when stated; 0 otherwise
	trigLine     int
	unit         string
	factor       float64
	unitLine     int
	unitText     string
	timeFactor   float64 // 0 when the file states no horizontal unit
	timeUnitLine int
	rangeV       float64
	bits         int
	scale        float64 // volts per division, for screen codes
	scaleLine    int
	offset       float64
	offsetLine   int
	probe        float64
	probeLine    int
	length       int
	lengthLine   int
	source       string
	sourceLine   int
	trigger      time.Time
	date, clock  string
	warnings     []string
}

func newPreamble() preamble { return preamble{meta: map[string]string{}, factor: 1} }

// preambleKVs collects "key: value", "key = value", "key,value" and "key<TAB>value"
// lines before line upto.
func preambleKVs(lines []sniffLine, upto int) []kv {
	var out []kv
	for _, sl := range lines {
		if sl.no >= upto {
			break
		}
		l := strings.TrimSpace(string(sl.text))
		l = strings.TrimLeft(l, "#%/ \t")
		if l == "" {
			continue
		}
		j := strings.IndexAny(l, ":=\t,;")
		if j <= 0 {
			continue
		}
		key := strings.TrimSpace(l[:j])
		val := strings.Trim(strings.TrimSpace(l[j+1:]), ",;\t \"")
		if val == "" {
			continue
		}
		out = append(out, kv{key, val, sl.no, j + 2})
	}
	return out
}

// number reads the leading number of a setting such as "10X", "x10", "10:1" or
// "2.0E-01 V/div".
func leadingNumber(s string) (float64, bool) {
	s = strings.TrimSpace(strings.TrimLeft(strings.TrimSpace(s), "xX"))
	i := 0
	for i < len(s) && strings.IndexByte("+-0123456789.eE", s[i]) >= 0 {
		i++
	}
	v, err := strconv.ParseFloat(s[:i], 64)
	return v, err == nil
}

func (p *preamble) apply(e kv, file string) error {
	p.meta[e.key] = e.val
	k := normKey(e.key)
	bad := func(err error) error {
		return lineErr(file, e.line, e.col, ErrHeader, fmt.Sprintf("%s: %v", e.key, err))
	}
	switch {
	case hasKey(keyInterval, k):
		v, u, err := ParseQuantity(e.val)
		if err != nil {
			return bad(err)
		}
		if u == "S/s" {
			v = 1 / v
		} else if u != "s" && u != "" {
			return bad(fmt.Errorf("unit %q is not a time", u))
		}
		if !(v > 0) {
			return bad(fmt.Errorf("must be positive"))
		}
		p.interval, p.intervalLine, p.intervalText = v, e.line, e.key+" "+e.val
	case hasKey(keyRate, k):
		v, u, err := ParseQuantity(e.val)
		if err != nil {
			return bad(err)
		}
		if u == "Hz" || u == "S/s" || u == "" {
			if !(v > 0) {
				return bad(fmt.Errorf("must be positive"))
			}
			p.interval, p.intervalLine, p.intervalText = 1/v, e.line, e.key+" "+e.val
		}
	case hasKey(keyStart, k):
		v, u, err := ParseQuantity(e.val)
		if err != nil {
			return bad(err)
		}
		if u != "s" && u != "" {
			return bad(fmt.Errorf("unit %q is not a time", u))
		}
		p.start, p.hasStart, p.startLine = v, true, e.line
	case hasKey(keyTrigPoint, k):
		v, err := strconv.ParseFloat(strings.TrimSpace(e.val), 64)
		if err != nil || v < 0 || v > MaxSamples {
			return bad(fmt.Errorf("a sample number, not %q", e.val))
		}
		p.trigPoint, p.trigLine = v, e.line
	case hasKey(keyUnit, k):
		si, f, ok := headerUnit(e.val)
		if !ok || si == unitIndex {
			p.warnings = append(p.warnings, fmt.Sprintf("line %d: unit %q not known; values kept as written", e.line, e.val))
			return nil
		}
		p.unit, p.factor, p.unitLine, p.unitText = si, f, e.line, e.val
	case hasKey(keyTimeUnit, k):
		si, f, ok := headerUnit(e.val)
		if !ok || si != "s" {
			return bad(fmt.Errorf("%q is not a unit of time", e.val))
		}
		p.timeFactor, p.timeUnitLine = f, e.line
	case hasKey(keyRange, k):
		v, _, err := ParseQuantity(e.val)
		if err == nil && v > 0 {
			p.rangeV = v
		}
	case hasKey(keyBits, k):
		if n, err := strconv.Atoi(strings.Fields(e.val)[0]); err == nil && n > 0 && n <= 32 {
			p.bits = n
		}
	case hasKey(keyScale, k):
		if v, ok := leadingNumber(e.val); ok && v > 0 {
			p.scale, p.scaleLine = v, e.line
		}
	case hasKey(keyOffset, k):
		if v, ok := leadingNumber(e.val); ok {
			p.offset, p.offsetLine = v, e.line
		}
	case hasKey(keyProbe, k):
		if v, ok := leadingNumber(e.val); ok && v > 0 {
			p.probe, p.probeLine = v, e.line
		}
	case hasKey(keyLength, k):
		if n, err := strconv.Atoi(strings.TrimSpace(e.val)); err == nil && n > 0 {
			p.length, p.lengthLine = n, e.line
		}
	case hasKey(keySource, k):
		p.source, p.sourceLine = e.val, e.line
	case hasKey(keyStamp, k):
		if t, ok := parseStamp(e.val); ok {
			p.trigger = t
		}
	case k == "date":
		p.date = e.val
	case k == "time":
		p.clock = e.val
	}
	return nil
}

// finish combines settings that come in parts.
func (p *preamble) finish() {
	if p.trigger.IsZero() && p.date != "" && p.clock != "" {
		if t, ok := parseStamp(p.date + " " + p.clock); ok {
			p.trigger = t
		}
	}
}

var stampLayouts = []string{time.RFC3339Nano, "2006-01-02 15:04:05.999999999", "2006-01-02T15:04:05.999999999",
	"2006/01/02 15:04:05.999999999", "02-Jan-2006 15:04:05.999999999", "02.01.2006 15:04:05.999999999"}

// parseStamp reads an acquisition time; a time without a zone is taken as UTC, since
// the file does not say. Slashed dates other than year first are left alone: day and
// month cannot be told apart.
func parseStamp(s string) (time.Time, bool) {
	s = strings.TrimSpace(s)
	for _, l := range stampLayouts {
		if t, err := time.Parse(l, s); err == nil {
			return t, true
		}
	}
	return time.Time{}, false
}

func parsePreamble(lines []sniffLine, upto int, file string) (preamble, error) {
	p := newPreamble()
	for _, e := range preambleKVs(lines, upto) {
		if err := p.apply(e, file); err != nil {
			return p, err
		}
	}
	p.finish()
	return p, nil
}
