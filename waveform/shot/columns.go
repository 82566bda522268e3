package shot

import (
	"encoding/csv"
	"encoding/json"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/hvshot/hvshot/waveform/circuit"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/probe"
)

// Kind is how a column's value is held and written.
type Kind int

const (
	Text   Kind = iota // a word or a sentence
	Number             // a float64 in the column's SI unit; NaN when absent
	Flag               // true or absent
	List               // failures (names) or warnings (codes with words)
)

// Column is one output key. Every output format derives from the table Columns: the
// JSON Lines keys and their order, the CSV header and cells, the console and report
// tables (Label, Screen, Scale, Digits, Console) and the series statistics (Stat).
type Column struct {
	Key  string // output key; a number's key ends in its SI unit (_v, _s, _a, _pct)
	Unit string // SI unit of a Number ("" for pure numbers and non-numbers)
	Doc  string // what it means, as docs/output.md says it
	Kind Kind

	Label   string  // short name on screens, e.g. "T1"
	Screen  string  // unit on screens, e.g. "us"
	Scale   float64 // multiplies the SI value into the Screen unit
	Digits  int     // significant digits on screens, or decimals when Fixed
	Fixed   bool    // Digits counts decimals, for values near zero such as overshoot
	Console int     // position in the per-shot tables on the console and in the report; 0: not there
	Stat    string  // the series statistic's name; empty when the summary leaves it out
	Param   string  // the measured parameter the value rests on, as failures and unmeasured name it
	Of      *Column // an expanded uncertainty's parameter (uncertainty.go); nil for the parameters themselves

	index  int
	value  func(*sources) float64 // Number
	text   func(*Row) string      // Text, Flag, List (the CSV cell)
	always bool                   // JSON: written even when empty
}

// sources are the evaluations a row's numbers are taken from.
type sources struct {
	imp        *impulse.Result
	cur        *probe.CurrentResult
	fld        *probe.FieldResult
	efficiency float64
	kt         float64 // the atmospheric correction factor the shot was judged with
	droop_s    float64 // a divider's droop constant from its description
	freq       *Frequency
	advice     *circuit.Advice
	u95        []float64 // expanded uncertainties by column index (uncertainty.go); nil when not evaluated
}

// newSources has nothing to give: every number absent.
func newSources() *sources {
	return &sources{efficiency: math.NaN(), droop_s: math.NaN(), kt: math.NaN()}
}

// from makes a column's getter: the value f takes from the result pick finds, NaN
// when the row has no such result.
func from[R any](pick func(*sources) *R, f func(*R) float64) func(*sources) float64 {
	return func(s *sources) float64 {
		if r := pick(s); r != nil {
			return f(r)
		}
		return math.NaN()
	}
}

func fromImpulse(f func(*impulse.Result) float64) func(*sources) float64 {
	return from(func(s *sources) *impulse.Result { return s.imp }, f)
}

// fromFit is fromImpulse for what needs the base curve's fit.
func fromFit(f func(*impulse.Result) float64) func(*sources) float64 {
	return fromImpulse(func(r *impulse.Result) float64 {
		if !r.FitOK {
			return math.NaN()
		}
		return f(r)
	})
}

func fromAdvice(f func(*circuit.Advice) float64) func(*sources) float64 {
	return from(func(s *sources) *circuit.Advice { return s.advice }, f)
}

func fromCurrent(f func(*probe.CurrentResult) float64) func(*sources) float64 {
	return from(func(s *sources) *probe.CurrentResult { return s.cur }, f)
}

func fromField(f func(*probe.FieldResult) float64) func(*sources) float64 {
	return from(func(s *sources) *probe.FieldResult { return s.fld }, f)
}

// The columns other code refers to by name.
var (
	ColFile = &Column{Key: "file", Kind: Text, always: true, Label: "shot",
		Doc: "the shot's identity: its path relative to the inputs' common folder (`#n` for segment n of a segmented capture)", text: func(r *Row) string { return r.File }}
	ColChannel = &Column{Key: "channel", Kind: Text, Label: "channel", Doc: "the channel's name", text: func(r *Row) string { return r.Channel }}
	ColShape   = &Column{Key: "shape", Kind: Text, Label: "shape", Doc: "`lightning-full`, `lightning-chopped`, `switching`, `none`",
		text: func(r *Row) string { return string(r.Shape) }}
	ColTestVoltage = &Column{Key: "test_voltage_v", Unit: "V", Kind: Number, Label: "Ut", Param: "test_voltage", Screen: "kV", Scale: 1e-3, Digits: 4, Console: 1,
		Stat: "test voltage Ut", Doc: "Ut, the test voltage curve's maximum", value: fromImpulse(func(r *impulse.Result) float64 { return r.TestVoltage_v })}
	ColOvershoot = &Column{Key: "overshoot_pct", Unit: "%", Kind: Number, Label: "beta'", Param: "overshoot", Screen: "%", Scale: 1, Digits: 1, Fixed: true, Console: 4,
		Stat: "overshoot beta'", Doc: "beta', the relative overshoot, in percent", value: fromFit(func(r *impulse.Result) float64 { return r.Overshoot_pct })}
	ColFrontTime = &Column{Key: "front_time_s", Unit: "s", Kind: Number, Label: "T1", Param: "front_time", Screen: "us", Scale: 1e6, Digits: 4, Console: 2,
		Stat: "front time T1", Doc: "T1, the front time", value: fromImpulse(func(r *impulse.Result) float64 { return r.FrontTime_s })}
	ColTimeToHalf = &Column{Key: "time_to_half_s", Unit: "s", Kind: Number, Label: "T2", Param: "time_to_half", Screen: "us", Scale: 1e6, Digits: 4, Console: 3,
		Stat: "time to half-value T2", Doc: "T2, the time to half-value (lightning: from O1; switching: from the true origin)",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.TimeToHalf_s })}
	ColChopTime = &Column{Key: "chop_time_s", Unit: "s", Kind: Number, Label: "Tc", Screen: "us", Scale: 1e6, Digits: 4, Console: 5,
		Doc: "Tc, the time to chopping, from O1", value: fromImpulse(func(r *impulse.Result) float64 { return r.ChopTime_s })}
	ColTimeToPeak = &Column{Key: "time_to_peak_s", Unit: "s", Kind: Number, Label: "Tp", Param: "time_to_peak", Screen: "us", Scale: 1e6, Digits: 4, Console: 6,
		Doc: "Tp, the switching impulse's time to peak", value: fromImpulse(func(r *impulse.Result) float64 { return r.TimeToPeak_s })}
	ColPeakCurrent = &Column{Key: "peak_current_a", Unit: "A", Kind: Number, Label: "I", Screen: "kA", Scale: 1e-3, Digits: 4, Console: 7,
		Stat: "peak current", Doc: "coil or current: the current's peak", value: fromCurrent(func(r *probe.CurrentResult) float64 { return r.Peak_a })}
	ColPeakField = &Column{Key: "peak_field_v_per_m", Unit: "V/m", Kind: Number, Label: "E", Screen: "kV/m", Scale: 1e-3, Digits: 4, Console: 8,
		Stat: "peak field", Doc: "antenna or field: the field's peak", value: fromField(func(r *probe.FieldResult) float64 { return r.Peak_v_per_m })}
	ColEfficiency = &Column{Key: "efficiency", Kind: Number, Label: "efficiency", Scale: 1, Digits: 3, Stat: "generator efficiency", Param: "test_voltage",
		Doc: "Ut / (stages x charging voltage)", value: func(s *sources) float64 { return s.efficiency }}
	ColVerdict = &Column{Key: "verdict", Kind: Text, always: true, Label: "verdict", Doc: "`pass`, `fail`, `incomplete` (a parameter the verdict needs could not be measured: compliance not shown), `error`, `measured` for a channel no tolerance applies to (coil, antenna, current, field), or `discharge` in a test when the test object discharged and the impulse was within tolerance as far as it went",
		text: func(r *Row) string { return string(r.Verdict) }}
	ColFailures = &Column{Key: "failures", Kind: List, always: true, Label: "failures",
		Doc:  "names of the parameters out of tolerance (`test_voltage`, `front_time`, `time_to_half`, `overshoot`, `time_to_peak`, `shape`); CSV: joined by `;`",
		text: func(r *Row) string { return strings.Join(r.FailureNames(), ";") }}
	ColUnmeasured = &Column{Key: "unmeasured", Kind: List, always: false, Label: "not measured",
		Doc:  "names of the parameters the verdict needs that could not be measured (verdict `incomplete`); CSV: joined by `;`",
		text: func(r *Row) string { return strings.Join(r.Unmeasured, ";") }}
	ColWarnings = &Column{Key: "warnings", Kind: List, always: true, Label: "warnings",
		Doc: "`{code, text}` objects; CSV: the codes joined by `;`", text: func(r *Row) string {
			c := make([]string, len(r.Warnings))
			for i, w := range r.Warnings {
				c[i] = w.Code
			}
			return strings.Join(c, ";")
		}}
	ColDischarge = &Column{Key: "discharge", Kind: Text, Label: "discharge",
		Doc:  "in a test (a setup's `[[test]]` table), a divider row's disruptive discharge: `front`, `crest` or `tail` where the voltage collapsed, `marked` when only the setup says so, `none`",
		text: func(r *Row) string { return r.Discharge }}
	ColApplication = &Column{Key: "application", Kind: Text, Label: "application",
		Doc:  "in a test: `counted` when the shot counts as an application of the test, else `not counted: ` and why (another level, polarity or shape, an incomplete record)",
		text: func(r *Row) string { return r.Application }}
	ColError = &Column{Key: "error", Kind: Text, Label: "error", Doc: "text naming the file and the line or byte, when `verdict` is `error`",
		text: func(r *Row) string { return r.Error }}
)

// Columns is the output table, in output order. docs/output.md lists the same keys.
var Columns = []*Column{
	ColFile, ColChannel,
	{Key: "role", Kind: Text, Label: "role", Doc: "`divider`, `coil`, `antenna`, `current` (a channel in A) or `field` (a channel in V/m)", text: func(r *Row) string { return string(r.Role) }},
	ColShape,
	{Key: "polarity", Kind: Text, Label: "polarity", Doc: "`positive` or `negative`; magnitudes are positive", text: func(r *Row) string { return string(r.Polarity) }},
	ColTestVoltage,
	{Key: "extreme_v", Unit: "V", Kind: Number, Label: "Ue", Screen: "kV", Scale: 1e-3, Digits: 4, Doc: "Ue, the recorded curve's extreme",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.Extreme_v })},
	{Key: "base_peak_v", Unit: "V", Kind: Number, Label: "Ub", Screen: "kV", Scale: 1e-3, Digits: 4, Doc: "Ub, the base curve's maximum",
		value: fromFit(func(r *impulse.Result) float64 { return r.BasePeak_v })},
	ColOvershoot, ColFrontTime, ColTimeToHalf,
	{Key: "virtual_origin_s", Unit: "s", Kind: Number, Label: "O1", Screen: "us", Scale: 1e6, Digits: 4, Doc: "O1, the virtual origin (switching: the true origin)",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.Origin_s })},
	ColChopTime,
	{Key: "chop_voltage_v", Unit: "V", Kind: Number, Label: "Uc", Screen: "kV", Scale: 1e-3, Digits: 4, Doc: "the voltage at the instant of chopping",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.ChopVoltage_v })},
	{Key: "collapse_time_s", Unit: "s", Kind: Number, Label: "collapse", Screen: "us", Scale: 1e6, Digits: 3, Doc: "the duration of the voltage collapse at a chop",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.Collapse_s })},
	{Key: "front_steepness_v_per_s", Unit: "V/s", Kind: Number, Label: "S", Screen: "kV/µs", Scale: 1e-9, Digits: 4,
		Doc:   "a front-chopped impulse: its virtual steepness, the voltage at chopping over the time to chopping (from memory); present only when the chop is on the front, which then is judged on shape and test voltage, not on T1 or overshoot",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.Steepness_v_per_s })},
	ColTimeToPeak,
	{Key: "time_above_90_s", Unit: "s", Kind: Number, Label: "Td", Screen: "us", Scale: 1e6, Digits: 4, Doc: "Td, the switching impulse's time above 90 %",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.TimeAbove90_s })},
	{Key: "time_to_zero_s", Unit: "s", Kind: Number, Label: "Tz", Screen: "us", Scale: 1e6, Digits: 4, Doc: "Tz, the switching impulse's time to zero, from the true origin",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.TimeToZero_s })},
	ColEfficiency,
	{Key: "kt", Kind: Number, Label: "Kt", Scale: 1, Digits: 4, Doc: "the atmospheric correction factor the shot's test voltage was judged with (U0 Kt applied; the reading in force when it was fired with an air log)",
		value: func(s *sources) float64 { return s.kt }},
	{Key: "base_tau1_s", Unit: "s", Kind: Number, Label: "tau1", Screen: "us", Scale: 1e6, Digits: 4, Doc: "the base curve's tail time constant",
		value: fromFit(func(r *impulse.Result) float64 { return r.Fit.Params.Tau1_s })},
	{Key: "base_tau2_s", Unit: "s", Kind: Number, Label: "tau2", Screen: "us", Scale: 1e6, Digits: 4, Doc: "the base curve's front time constant",
		value: fromFit(func(r *impulse.Result) float64 { return r.Fit.Params.Tau2_s })},
	{Key: "front_resistance_ohm", Unit: "ohm", Kind: Number, Label: "Rf", Screen: "ohm", Scale: 1, Digits: 4, Stat: "front resistance Rf (identified)",
		Doc:   "the generator's effective front resistance, all stages together, identified from the base curve's tau1 and tau2 and the `[generator]` circuit (docs/method.md); full impulses only, absent when no circuit of the kind fits",
		value: fromAdvice(func(a *circuit.Advice) float64 { return a.Rf_ohm })},
	{Key: "tail_resistance_ohm", Unit: "ohm", Kind: Number, Label: "Rt", Screen: "ohm", Scale: 1, Digits: 4, Stat: "tail resistance Rt (identified)",
		Doc:   "the generator's effective tail resistance, identified as `front_resistance_ohm` is",
		value: fromAdvice(func(a *circuit.Advice) float64 { return a.Rt_ohm })},
	{Key: "front_resistance_for_nominal_ohm", Unit: "ohm", Kind: Number, Label: "Rf for nominal", Screen: "ohm", Scale: 1, Digits: 4,
		Doc:   "the front resistance, all stages together, that gives the nominal shape with the `[generator]` circuit (the exact two-capacitor design); absent when none does",
		value: fromAdvice(func(a *circuit.Advice) float64 { return a.Design.Rf_ohm })},
	{Key: "tail_resistance_for_nominal_ohm", Unit: "ohm", Kind: Number, Label: "Rt for nominal", Screen: "ohm", Scale: 1, Digits: 4,
		Doc:   "the tail resistance that gives the nominal shape, as `front_resistance_for_nominal_ohm`",
		value: fromAdvice(func(a *circuit.Advice) float64 { return a.Design.Rt_ohm })},
	{Key: "fit_rms_v", Unit: "V", Kind: Number, Label: "fit RMS", Screen: "kV", Scale: 1e-3, Digits: 3, Doc: "the RMS of the recorded curve minus the base curve over the fit window",
		value: fromFit(func(r *impulse.Result) float64 { return r.Fit.ResidualRMS })},
	{Key: "residual_freq_hz", Unit: "Hz", Kind: Number, Label: "ringing", Screen: "MHz", Scale: 1e-6, Digits: 3, Doc: "the dominant frequency of the residual (an oscillation on the impulse)",
		value: fromImpulse(func(r *impulse.Result) float64 { return r.ResidualFreq_hz })},
	ColPeakCurrent,
	{Key: "max_didt_a_per_s", Unit: "A/s", Kind: Number, Label: "di/dt", Screen: "kA/us", Scale: 1e-9, Digits: 4, Doc: "coil: the current's steepest rise or fall",
		value: fromCurrent(func(r *probe.CurrentResult) float64 { return r.MaxDidt_a_per_s })},
	{Key: "rise_time_s", Unit: "s", Kind: Number, Label: "rise", Screen: "us", Scale: 1e6, Digits: 4, Doc: "coil: the current's 10-90 % rise time",
		value: fromCurrent(func(r *probe.CurrentResult) float64 { return r.Rise_s })},
	{Key: "current_front_time_s", Unit: "s", Kind: Number, Label: "T1 (I)", Screen: "us", Scale: 1e6, Digits: 4, Doc: "coil: the current's front time 1.25 (t90 - t10)",
		value: fromCurrent(func(r *probe.CurrentResult) float64 { return r.Front_s })},
	{Key: "current_time_to_half_s", Unit: "s", Kind: Number, Label: "T2 (I)", Screen: "us", Scale: 1e6, Digits: 4, Doc: "coil: the current's time to half-value, from its O1",
		value: fromCurrent(func(r *probe.CurrentResult) float64 { return r.TimeToHalf_s })},
	{Key: "charge_c", Unit: "C", Kind: Number, Label: "Q", Screen: "mC", Scale: 1e3, Digits: 4, Doc: "coil: the charge, integral of I dt",
		value: fromCurrent(func(r *probe.CurrentResult) float64 { return r.Charge_c })},
	{Key: "action_integral_a2s", Unit: "A^2 s", Kind: Number, Label: "action", Screen: "A²s", Scale: 1, Digits: 4, Doc: "coil: the action integral, integral of I^2 dt",
		value: fromCurrent(func(r *probe.CurrentResult) float64 { return r.Action_a2s })},
	ColPeakField,
	{Key: "field_change_v_per_m", Unit: "V/m", Kind: Number, Label: "E end", Screen: "kV/m", Scale: 1e-3, Digits: 4, Doc: "antenna: the field at the record's end against before the event",
		value: fromField(func(r *probe.FieldResult) float64 { return r.EndChange_v_per_m })},
	{Key: "droop_tau_s", Unit: "s", Kind: Number, Label: "droop tau", Screen: "us", Scale: 1e6, Digits: 4, Doc: "the droop time constant that was undone",
		value: func(s *sources) float64 {
			if s.fld != nil {
				return s.fld.Tau_s
			}
			return s.droop_s
		}},
	{Key: "droop_tau_estimated", Kind: Flag, Label: "droop estimated", Doc: "`true` when the droop time constant was estimated from the record",
		text: func(r *Row) string { return flag(r.DroopEstimated) }},
	{Key: "bw90_hz", Unit: "Hz", Kind: Number, Label: "BW90", Screen: "kHz", Scale: 1e-3, Digits: 4, Doc: "the frequency below which 90 % of the channel's energy lies (its signal's, the noise floor's share taken off)",
		value: fromFreq(func(f *Frequency) float64 { return f.BW90_hz })},
	{Key: "bw99_hz", Unit: "Hz", Kind: Number, Label: "BW99", Screen: "kHz", Scale: 1e-3, Digits: 4, Doc: "the same for 99 % of the energy",
		value: fromFreq(func(f *Frequency) float64 { return f.BW99_hz })},
	{Key: "compared_with", Kind: Text, Label: "compared with", Doc: "the reference shot of a comparison (`[comparison]`, `--reference`); on the reference's own rows its own identity, with no figures",
		text: func(r *Row) string { return r.ComparedWith }},
	{Key: "difference_peak_pct", Unit: "%", Kind: Number, Label: "diff peak", Screen: "%", Scale: 1, Digits: 2, Fixed: true, Doc: "comparison: the largest difference from the reference, scaled to its test voltage and aligned, in percent of the reference's peak",
		value: fromFreq(func(f *Frequency) float64 { return f.DiffPeak_pct })},
	{Key: "difference_rms_pct", Unit: "%", Kind: Number, Label: "diff RMS", Screen: "%", Scale: 1, Digits: 2, Fixed: true, Doc: "comparison: the difference's RMS over the reference's event (where it exceeds 5 % of its peak), in percent of its peak",
		value: fromFreq(func(f *Frequency) float64 { return f.DiffRMS_pct })},
	{Key: "difference_peak_time_s", Unit: "s", Kind: Number, Label: "diff at", Screen: "us", Scale: 1e6, Digits: 4, Doc: "comparison: when the largest difference occurs, on the reference's time base",
		value: fromFreq(func(f *Frequency) float64 { return f.DiffTime_s })},
	{Key: "transfer_deviation_pct", Unit: "%", Kind: Number, Label: "H dev", Screen: "%", Scale: 1, Digits: 2, Fixed: true, Doc: "comparison, the output channel's row: the largest deviation of the transfer function's magnitude |H| = |output/input| from the reference's in the band, in percent",
		value: fromFreq(func(f *Frequency) float64 { return f.HDev_pct })},
	{Key: "transfer_deviation_freq_hz", Unit: "Hz", Kind: Number, Label: "H dev at", Screen: "kHz", Scale: 1e-3, Digits: 4, Doc: "comparison: the frequency of that largest deviation",
		value: fromFreq(func(f *Frequency) float64 { return f.HDevFreq_hz })},
	{Key: "fired", Kind: Text, Label: "fired", Doc: "when the shot was fired: the trigger time the capture states, else the file's modification time (RFC 3339, UTC)",
		text: func(r *Row) string {
			if r.Fired.IsZero() {
				return ""
			}
			return r.Fired.UTC().Format(time.RFC3339Nano)
		}},
	{Key: "synthetic", Kind: Flag, Label: "synthetic", Doc: "`true` when the capture says it is synthetic (made by `hvshot synth` or the demo), not a measurement",
		text: func(r *Row) string { return flag(r.Synthetic) }},
	ColDischarge,
	{Key: "discharge_source", Kind: Text, Label: "discharge from", Doc: "in a test: `record` (found on the divider channel) or `setup` (marked by hand in `[[test]]`)",
		text: func(r *Row) string { return r.DischargeSource }},
	ColApplication,
	ColVerdict, ColFailures, ColUnmeasured, ColWarnings, ColError,
}

func init() {
	for i, c := range Columns {
		c.index = i
	}
}

func flag(b bool) string {
	if b {
		return "true"
	}
	return ""
}

// Warning is a remark on the measurement: a stable short code and words.
type Warning struct {
	Code string `json:"code"`
	Text string `json:"text"`
}

// Row is one evaluated channel of one shot, or a shot that could not be evaluated.
// SI units; a number that does not apply or was not found is absent, never zero.
type Row struct {
	File           string // the shot's identity
	Channel        string
	Role           Role
	Shape          impulse.Shape
	Polarity       Polarity
	DroopEstimated bool
	Synthetic      bool // the capture says it is synthetic: a rehearsal, not a test record
	// In a test (Config.Test), a divider row's disruptive discharge: where it was seen
	// (front, crest, tail), "marked" by hand, or "none"; whether the record or the setup
	// says so; and whether the shot counts as an application of the test.
	Discharge, DischargeSource string
	Application                string // "counted", or "not counted: " and why
	Counted                    bool
	ComparedWith               string    // the reference shot's identity, in a comparison
	Fired                      time.Time // the trigger time the capture states, else the file's modification time; zero when unknown
	Verdict                    Verdict
	Failures                   []impulse.Failure
	Unmeasured                 []string // parameters the verdict needs that could not be measured
	Warnings                   []Warning
	Error                      string
	// Plot is the row's plot file relative to the output folder, set by whoever drew
	// it; not an output key.
	Plot string
	// Advice is the resistor advice in words for a divider row that failed on a time
	// parameter, when the generator's circuit is described; its numbers are columns,
	// the sentence is not an output key.
	Advice string

	values    []float64 // by column index; NaN when absent
	untrusted []string  // parameters measured but not to be trusted, for the statistics
	sys       []float64 // by column index: the relative standard uncertainty every shot shares (scale factor, time base)
}

// Value returns a Number column's value and whether it is present.
func (r *Row) Value(c *Column) (float64, bool) {
	if c.Kind != Number || c.index >= len(r.values) {
		return math.NaN(), false
	}
	v := r.values[c.index]
	return v, !math.IsNaN(v)
}

// Cell returns a non-number column's words as the CSV writes them.
func (r *Row) Cell(c *Column) string {
	if c.text == nil {
		return ""
	}
	return c.text(r)
}

// FailureNames are the names of the parameters out of tolerance.
func (r *Row) FailureNames() []string {
	out := make([]string, len(r.Failures))
	for i, f := range r.Failures {
		out[i] = f.Parameter
	}
	return out
}

func (r *Row) fill(s *sources) {
	r.values = make([]float64, len(Columns))
	for i, c := range Columns {
		r.values[i] = math.NaN()
		if c.value != nil {
			if v := c.value(s); !math.IsInf(v, 0) {
				r.values[i] = v
			}
		}
	}
}

// CSVHeader is the CSV header row: every key, in order.
func CSVHeader() []string {
	h := make([]string, len(Columns))
	for i, c := range Columns {
		h[i] = c.Key
	}
	return h
}

// CSVRecord is the row's CSV cells, numbers with ten significant digits.
func (r *Row) CSVRecord() []string {
	out := make([]string, len(Columns))
	for i, c := range Columns {
		if c.Kind == Number {
			if v, ok := r.Value(c); ok {
				out[i] = strconv.FormatFloat(v, 'g', 10, 64)
			}
			continue
		}
		out[i] = r.Cell(c)
	}
	return out
}

// MarshalJSON writes the row's keys in table order, leaving out what is absent.
func (r *Row) MarshalJSON() ([]byte, error) {
	b := []byte{'{'}
	put := func(key string, v any) error {
		if len(b) > 1 {
			b = append(b, ',')
		}
		b = strconv.AppendQuote(b, key)
		b = append(b, ':')
		j, err := json.Marshal(v)
		b = append(b, j...)
		return err
	}
	for _, c := range Columns {
		var err error
		switch {
		case c == ColFailures:
			err = put(c.Key, r.FailureNames())
		case c == ColUnmeasured:
			if len(r.Unmeasured) > 0 {
				err = put(c.Key, r.Unmeasured)
			}
		case c == ColWarnings:
			w := r.Warnings
			if w == nil {
				w = []Warning{}
			}
			err = put(c.Key, w)
		case c.Kind == Number:
			if v, ok := r.Value(c); ok {
				err = put(c.Key, v)
			}
		case c.Kind == Flag:
			if r.Cell(c) != "" {
				err = put(c.Key, true)
			}
		default:
			if s := r.Cell(c); s != "" || c.always {
				err = put(c.Key, s)
			}
		}
		if err != nil {
			return nil, err
		}
	}
	return append(b, '}'), nil
}

// Format writes v (SI) in the column's screen unit and digits.
func (c *Column) Format(v float64) string {
	return FormatDigits(v*c.Scale, c.Digits, c.Fixed)
}

// FormatDigits writes v with the given significant digits (or decimals when fixed),
// without exponents for everyday magnitudes and never as "-0".
func FormatDigits(v float64, digits int, fixed bool) string {
	if math.IsNaN(v) {
		return "-"
	}
	dec := digits
	if !fixed {
		if v == 0 {
			dec = digits - 1
		} else {
			e := int(math.Floor(math.Log10(math.Abs(v))))
			if e < -4 || e >= 9 {
				return strconv.FormatFloat(v, 'g', digits, 64)
			}
			dec = digits - 1 - e
		}
		dec = max(dec, 0)
	}
	s := strconv.FormatFloat(v, 'f', dec, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

// WriteCSV writes the header and the rows as CSV.
func WriteCSV(w io.Writer, rows []Row) error {
	c := csv.NewWriter(w)
	c.Write(CSVHeader())
	for i := range rows {
		c.Write(rows[i].CSVRecord())
	}
	c.Flush()
	return c.Error()
}

// WriteJSONL writes the rows as JSON Lines, one object a row.
func WriteJSONL(w io.Writer, rows []Row) error {
	enc := json.NewEncoder(w)
	for i := range rows {
		if err := enc.Encode(&rows[i]); err != nil {
			return err
		}
	}
	return nil
}
