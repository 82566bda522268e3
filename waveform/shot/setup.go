package shot

import (
	"bufio"
	"bytes"
	"cmp"
	"errors"
	"fmt"
	"math"
	"path"
	"reflect"
	"regexp"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"github.com/hvshot/hvshot/readers"
	"github.com/hvshot/hvshot/waveform/impulse"
)

// SetupFileName is the setup file looked for beside the captures.
const SetupFileName = "hvshot.toml"

// Quantity is a number in SI, written in the setup file either as a bare number or as
// a string with a unit: 300e3, "300 kV", "2 ns", "1 Mohm". A string must carry its
// unit: "300" is refused, so that nobody's kilovolts become volts.
type Quantity struct {
	V    float64
	Set  bool
	Unit string // the SI unit the text gave; "" for a bare number
	bare bool   // text with no unit ("300"): refused where a unit is expected
}

// UnmarshalTOML reads a bare number or a string with a unit.
func (q *Quantity) UnmarshalTOML(v any) error {
	switch x := v.(type) {
	case int64:
		q.V = float64(x)
	case float64:
		q.V = x
	case string:
		f, u, err := readers.ParseQuantity(x)
		if err != nil {
			return err
		}
		if u == "" {
			q.V, q.bare = f, true // a dimensionless value (a ratio) may be written so; in says
		} else {
			q.V, q.Unit = f, u
		}
	default:
		return fmt.Errorf("want a number or a string with a unit, got %T", v)
	}
	if math.IsNaN(q.V) || math.IsInf(q.V, 0) {
		return fmt.Errorf("not a finite number")
	}
	q.Set = true
	return nil
}

// in checks that the quantity, if given with a unit, has the one expected.
func (q Quantity) in(key, unit string) error {
	if q.bare {
		return fmt.Errorf("%s: \"%g\" has no unit: write it with one (\"300 kV\"), or as a bare number in SI (300e3)", key, q.V)
	}
	if q.Set && q.Unit != "" && q.Unit != unit {
		return fmt.Errorf("%s: %s is not a unit of %s", key, q.Unit, map[string]string{"V": "voltage", "s": "time", "H": "inductance", "ohm": "resistance", "F": "capacitance", "m": "length", "Hz": "frequency"}[unit])
	}
	return nil
}

// Setup is a test series' setup file.
type Setup struct {
	Series     string           `toml:"series"`
	TestObject string           `toml:"test_object"`
	ObjectID   string           `toml:"object_id"`
	Laboratory string           `toml:"laboratory"`
	Operator   string           `toml:"operator"`
	Measuring  MeasuringSetup   `toml:"measuring_system"`
	Atmosphere *AtmosphereSetup `toml:"atmosphere"`
	Nominal    NominalSetup     `toml:"nominal"`
	Tolerance  ToleranceSetup   `toml:"tolerance"`
	Method     MethodSetup      `toml:"method"`
	Generator  GeneratorSetup   `toml:"generator"`
	Uncertain  *UncertSetup     `toml:"uncertainty"`
	Tests      []TestSetup      `toml:"test"`
	Comparison *ComparisonSetup `toml:"comparison"`
	Read       ReadSetup        `toml:"read"`
	Channels   []ChannelSetup   `toml:"channel"`
	Path       string           `toml:"-"` // where it was read from, for the report
	Text       string           `toml:"-"` // as written, for the report
}

// NominalSetup is the [nominal] table.
type NominalSetup struct {
	Shape       string   `toml:"shape"`
	TestVoltage Quantity `toml:"test_voltage"`
	Chopped     bool     `toml:"chopped"`
}

// ToleranceSetup is the [tolerance] table, in percent.
type ToleranceSetup struct {
	TestVoltage_pct   *float64 `toml:"test_voltage_pct"`
	FrontTime_pct     *float64 `toml:"front_time_pct"`
	TimeToHalf_pct    *float64 `toml:"time_to_half_pct"`
	OvershootMax_pct  *float64 `toml:"overshoot_max_pct"`
	TimeToPeak_pct    *float64 `toml:"time_to_peak_pct"`
	SwitchingHalf_pct *float64 `toml:"switching_time_to_half_pct"`
}

// MethodSetup is the [method] table.
type MethodSetup struct {
	FitFrom       *float64 `toml:"fit_from"`
	FitTo         *float64 `toml:"fit_to"`
	OvershootOver string   `toml:"overshoot_over"`
	Shape         string   `toml:"force_shape"`
}

// GeneratorSetup is the [generator] table.
type GeneratorSetup struct {
	Stages          int      `toml:"stages"`
	ChargingVoltage Quantity `toml:"charging_voltage"`
	// The discharge circuit, for the resistor columns and advice (generator.go).
	StageCapacitance Quantity `toml:"stage_capacitance"`
	Capacitance      Quantity `toml:"capacitance"` // C1 as a whole, in place of stage_capacitance
	LoadCapacitance  Quantity `toml:"load_capacitance"`
	TailResistor     string   `toml:"tail_resistor"` // generator_side or load_side
	FrontPerStage    Quantity `toml:"front_resistor_per_stage"`
	TailPerStage     Quantity `toml:"tail_resistor_per_stage"`
}

// ReadSetup is the [read] table: what files may not say about themselves.
type ReadSetup struct {
	Interval   Quantity `toml:"interval"`
	TimeColumn string   `toml:"time_column"`
}

// ChannelSetup is one [[channel]] table, or one --role given on the command line.
type ChannelSetup struct {
	Name     string        `toml:"name"`  // the name this channel gets in the results
	Match    string        `toml:"match"` // file channel name or pattern (path.Match)
	Index    int           `toml:"index"` // 1-based column or channel number
	Role     Role          `toml:"role"`
	Ratio    Quantity      `toml:"ratio"` // multiply the recorded values (divider ratio x probe attenuation)
	DroopTau Quantity      `toml:"droop_tau"`
	Optional bool          `toml:"optional"` // files without this channel are not an error
	Coil     *CoilSetup    `toml:"coil"`
	Antenna  *AntennaSetup `toml:"antenna"`
	line     int

	// Uncertainty_pct is the channel's expanded uncertainty of its scale factor (k = 2),
	// for a divider in place of the measuring system's.
	Uncertainty_pct *float64 `toml:"expanded_uncertainty_pct"`
}

var reBareWord = regexp.MustCompile(`^expected value but found (".*") instead$`)

// keyElsewhere says where a key put in the wrong table belongs, from the tables' toml
// tags, or nothing.
func keyElsewhere(k toml.Key) string {
	name := k[len(k)-1]
	var where, tags []string
	var walk func(t reflect.Type, at string)
	walk = func(t reflect.Type, at string) {
		for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice {
			t = t.Elem()
		}
		if t.Kind() != reflect.Struct || t == reflect.TypeOf(Quantity{}) {
			return
		}
		for i := 0; i < t.NumField(); i++ {
			tag := strings.Split(t.Field(i).Tag.Get("toml"), ",")[0]
			if tag == "" || tag == "-" {
				continue
			}
			tags = append(tags, tag)
			if tag == name {
				where = append(where, "["+strings.TrimPrefix(at+"."+tag, ".")+"]")
			}
			walk(t.Field(i).Type, strings.TrimPrefix(at+"."+tag, "."))
		}
	}
	walk(reflect.TypeOf(Setup{}), "")
	if len(where) == 0 {
		if near := Nearest(name, tags); near != "" {
			return fmt.Sprintf(" (did you mean %s?)", near)
		}
		return " (docs/setup.md lists the keys)"
	}
	for i, w := range where {
		if j := strings.LastIndex(w, "."); j > 0 {
			where[i] = "[" + w[1:j] + "]"
		}
	}
	return fmt.Sprintf(": %s is a key of %s", name, strings.Join(where, " or "))
}

var reDecodeErr = regexp.MustCompile(`line (\d+) \(last key "([^"]*)"\): (.*)`)

// SetupError names the setup file, line and key.
type SetupError struct {
	File string
	Line int
	Key  string
	Msg  string
}

func (e *SetupError) Error() string {
	if e.Line > 0 && e.Key == "" {
		return fmt.Sprintf("%s:%d: %s", e.File, e.Line, e.Msg)
	}
	if e.Line > 0 {
		return fmt.Sprintf("%s:%d: %s: %s", e.File, e.Line, e.Key, e.Msg)
	}
	if e.Key != "" {
		return fmt.Sprintf("%s: %s: %s", e.File, e.Key, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

// keyLine finds the line of a dotted key in TOML text: the table header, then the key.
func keyLine(text string, key toml.Key) int {
	sc := bufio.NewScanner(strings.NewReader(text))
	table := ""
	want := key[len(key)-1]
	parent := strings.Join(key[:len(key)-1], ".")
	no := 0
	for sc.Scan() {
		no++
		l := strings.TrimSpace(sc.Text())
		if strings.HasPrefix(l, "[") {
			table = strings.Trim(l, "[] ")
			if table == strings.Join(key, ".") {
				return no // the key is a table's own name
			}
			continue
		}
		if i := strings.IndexByte(l, '='); i > 0 && strings.TrimSpace(l[:i]) == want && (table == parent || parent == "" && table == "") {
			return no
		}
	}
	return 0
}

// ParseSetup decodes setup text; file names it in messages. Unknown keys, wrong types
// and missing or inconsistent values are errors naming the key and the line.
func ParseSetup(b []byte, file string) (*Setup, error) {
	var s Setup
	md, err := toml.NewDecoder(bytes.NewReader(b)).Decode(&s)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			msg := pe.Message
			if strings.HasPrefix(msg, "expected a top-level item to end with") {
				msg += `: a value with a slash or a space in it is text and needs quotes, as in shape = "1.2/50"`
			}
			if m := reBareWord.FindStringSubmatch(msg); m != nil {
				word, key := strings.Trim(m[1], `"`), pe.LastKey[strings.LastIndex(pe.LastKey, ".")+1:]
				msg = fmt.Sprintf("%s is not a value: text needs quotes, as in %s = \"%s\"", word, key, word)
			}
			return nil, &SetupError{File: file, Line: pe.Position.Line, Key: pe.LastKey, Msg: msg}
		}
		// decode errors read "toml: line N (last key "k"): message"
		if m := reDecodeErr.FindStringSubmatch(err.Error()); m != nil {
			line, _ := strconv.Atoi(m[1])
			if (m[2] == "channel" || m[2] == "test") && strings.Contains(m[3], "destination has type slice") {
				m[3] = fmt.Sprintf("write [[%s]], with two brackets: each %s is one table of a list", m[2], m[2])
			}
			return nil, &SetupError{File: file, Line: line, Key: m[2], Msg: m[3]}
		}
		return nil, &SetupError{File: file, Msg: strings.TrimPrefix(err.Error(), "toml: ")}
	}
	text := string(b)
	if len(md.Keys()) == 0 {
		// an empty file beside captures is a setup left unwritten, not one that asks for nothing
		return nil, &SetupError{File: file, Msg: "holds no settings: fill it in (docs/setup.md) or remove it"}
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0]
		return nil, &SetupError{File: file, Line: keyLine(text, k), Key: k.String(), Msg: "unknown key" + keyElsewhere(k)}
	}
	s.Path, s.Text = file, text
	// channel table lines, for later messages
	no, ch := 0, 0
	sc := bufio.NewScanner(strings.NewReader(text))
	for sc.Scan() {
		no++
		if strings.TrimSpace(sc.Text()) == "[[channel]]" && ch < len(s.Channels) {
			s.Channels[ch].line = no
			ch++
		}
	}
	bad := func(line int, key, format string, a ...any) error {
		return &SetupError{File: file, Line: line, Key: key, Msg: fmt.Sprintf(format, a...)}
	}
	at := func(k ...string) int { return keyLine(text, toml.Key(k)) }
	if s.Nominal.Shape != "" {
		if _, err := impulse.ParseNominal(s.Nominal.Shape); err != nil {
			return nil, bad(at("nominal", "shape"), "nominal.shape", "%v", err)
		}
	}
	switch s.Method.OvershootOver {
	case "", "extreme", "base":
	default:
		return nil, bad(at("method", "overshoot_over"), "method.overshoot_over", "\"extreme\" or \"base\", not %q", s.Method.OvershootOver)
	}
	switch impulse.Shape(s.Method.Shape) {
	case "", impulse.LightningFull, impulse.LightningChopped, impulse.Switching:
	default:
		return nil, bad(at("method", "force_shape"), "method.force_shape", "lightning-full, lightning-chopped or switching, not %q", s.Method.Shape)
	}
	for _, q := range []struct {
		key, unit string
		q         Quantity
	}{{"nominal.test_voltage", "V", s.Nominal.TestVoltage}, {"generator.charging_voltage", "V", s.Generator.ChargingVoltage}, {"read.interval", "s", s.Read.Interval}} {
		if err := q.q.in(q.key, q.unit); err != nil {
			k := strings.Split(q.key, ".")
			return nil, bad(at(k...), q.key, "%v", strings.TrimPrefix(err.Error(), q.key+": "))
		}
	}
	if _, err := s.record(at); err != nil {
		return nil, err
	}
	if _, _, err := s.air(at); err != nil {
		return nil, err
	}
	if _, err := s.Uncertain.settings(file, at); err != nil {
		return nil, err
	}
	if s.Comparison != nil {
		if err := s.Comparison.check(at, file); err != nil {
			return nil, err
		}
	}
	if _, err := s.tests(text); err != nil {
		return nil, err
	}
	if s.Generator.Stages < 0 {
		return nil, bad(at("generator", "stages"), "generator.stages", "must be positive")
	}
	if _, err := s.Generator.circuitOf(func(key, format string, a ...any) error {
		return bad(cmp.Or(at("generator", key), at("generator")), "generator."+key, format, a...)
	}); err != nil {
		return nil, err
	}
	switch s.Read.TimeColumn {
	case "", "auto", "first", "none":
	default:
		return nil, bad(at("read", "time_column"), "read.time_column", "auto, first or none, not %q", s.Read.TimeColumn)
	}
	for i := range s.Channels {
		c := &s.Channels[i]
		where := fmt.Sprintf("channel %d", i+1)
		if c.Match == "" && c.Index == 0 {
			return nil, bad(c.line, where, "needs match (a name or pattern) or index")
		}
		if c.Role == "" {
			return nil, bad(c.line, where+".role", "missing: divider, coil, antenna, current or field")
		}
		if err := c.Check(); err != nil {
			return nil, bad(c.line, where, "%v", err)
		}
	}
	return &s, nil
}

// Check validates a channel's pattern and sensor description.
func (c *ChannelSetup) Check() error {
	if c.Match != "" {
		if _, err := path.Match(c.Match, ""); err != nil {
			return fmt.Errorf("match: bad pattern %q", c.Match)
		}
	}
	if c.Ratio.Set && !(c.Ratio.V != 0) {
		return fmt.Errorf("ratio: must not be zero")
	}
	if c.Ratio.Unit != "" {
		return fmt.Errorf("ratio: a plain number (1000), not %s", c.Ratio.Unit)
	}
	if err := c.DroopTau.in("droop_tau", "s"); err != nil {
		return err
	}
	if err := c.checkUncertainty(); err != nil {
		return err
	}
	switch c.Role {
	case Coil:
		if c.Coil == nil {
			return fmt.Errorf("role coil needs a coil description ([channel.coil] or --coil)")
		}
		if _, err := c.Coil.Model(); err != nil {
			return fmt.Errorf("coil: %v", err)
		}
	case Antenna:
		if c.Antenna == nil {
			return fmt.Errorf("role antenna needs an antenna description ([channel.antenna] or --antenna)")
		}
		if _, err := c.Antenna.Model(); err != nil {
			return fmt.Errorf("antenna: %v", err)
		}
	}
	return nil
}
