package atmos

import (
	"fmt"
	"math"
)

// The formulas below are IEC 60060-1:2010 clause 4.3 as issue 13 states them, from
// memory of the standard; they could not be read in its text here. Every number taken
// from the standard is a named constant or a Settings field so it can be checked
// against the text in one place.

// The standard reference atmosphere (IEC 60060-1:2010, 4.3; from memory).
const (
	StdPressure_pa          = 101.3e3
	StdTemperature_c        = 20.0
	StdAbsHumidity_g_per_m3 = 11.0
)

// KelvinOffset is the 273 the standard's formulas add to a Celsius temperature (from
// memory: 273, not 273.15). Using 273.15 would move delta by under 0.02 % in a lab's
// range, but the reference values and the standard's worked numbers are made with 273.
const KelvinOffset = 273.0

// RefGradient_v_per_m is the 500 kV/m of g = U_B / (500 L delta k), the gradient a
// discharge path of length L is compared with (from memory). Kept in V/m so U_B stays
// in volts.
const RefGradient_v_per_m = 500e3

// Saturation vapour pressure over water, the Magnus form of the humidity
// formula: e_s = MagnusE0_pa exp(MagnusA t / (MagnusB_c + t)) (from memory; within
// about 0.5 % of steam-table values from 0 to 40 C, see the tests).
const (
	MagnusE0_pa = 611.0 // 6.11 hPa
	MagnusA     = 17.6
	MagnusB_c   = 243.0
)

// VapourGasConstant_j_per_g_k is the specific gas constant of water vapour, 461.5
// J/(kg K), in grams so the absolute humidity e/(R_v T) comes out in g/m3 (the 0.4615
// of the formula).
const VapourGasConstant_j_per_g_k = 0.4615

// Breakpoints of the exponents m (air density) and w (humidity) as functions of g
// (IEC 60060-1:2010, 4.3; from memory). Both curves are continuous at each one.
const (
	GRise  = 0.2 // below: m = w = 0
	GTop   = 1.0 // from GRise: m = w = g (g - 0.2)/0.8, reaching 1 here
	GFall  = 1.2 // from GTop: m = w = 1; from here m = 1, w = (2.2 - g)(2.0 - g)/0.8
	GWZero = 2.0 // above: m = 1, w = 0
)

// Plausible readings (ours): outside them a value is almost surely in another unit or
// mistyped, so Check refuses it rather than correct with it.
const (
	PressureMin_pa      = 50e3
	PressureMax_pa      = 110e3
	TemperatureMin_c    = -30.0
	TemperatureMax_c    = 50.0
	RelHumidityMax_pct  = 100.0
	SaturationTolerance = 1.05 // an absolute humidity up to 5 % above saturation passes: hygrometers near 100 % read high
)

// Settings are the correction's values from the standard's text that a lab may need to
// change. DefaultSettings gives the ones hvshot uses.
type Settings struct {
	// HumidityCoef_m3_per_g is c in k = 1 + c (h/delta - 11): 0.010 m3/g for impulse
	// voltages (IEC 60060-1:2010, 4.3; from memory). Other kinds of test voltage use
	// other forms; this package is for impulses.
	HumidityCoef_m3_per_g float64
	// HumidityRatioMax_g_per_m3: the humidity correction rests on measurements up to
	// h/delta of about 15 g/m3 (from memory). Above it k is still computed, by the same
	// line, and the result carries the warning "humidity-extrapolated".
	HumidityRatioMax_g_per_m3 float64
	// HighRelHumidity_pct: above it disruptive discharges, especially over insulating
	// surfaces, can become erratic and the correction is in doubt (from memory: 80 %).
	// The result carries the warning "humidity-high"; nothing else changes.
	HighRelHumidity_pct float64
	// WithstandFactor: in a withstand test U_B, unknown, is taken as this times the
	// test voltage (1.1, as the issue states it).
	WithstandFactor float64
}

// DefaultSettings returns the settings documented in docs/method.md.
func DefaultSettings() Settings {
	return Settings{HumidityCoef_m3_per_g: 0.010, HumidityRatioMax_g_per_m3: 15, HighRelHumidity_pct: 80, WithstandFactor: 1.1}
}

// Conditions are the laboratory's air at a test: pressure, temperature and exactly one
// of relative and absolute humidity. A humidity of zero means not given: no hygrometer
// in a laboratory reads exactly zero, and it lets a literal name only the one it has.
type Conditions struct {
	Pressure_pa          float64 `json:"pressure_pa"`
	Temperature_c        float64 `json:"temperature_c"`
	RelHumidity_pct      float64 `json:"relative_humidity_pct,omitempty"`
	AbsHumidity_g_per_m3 float64 `json:"absolute_humidity_g_per_m3,omitempty"`
}

// FieldError is a reading or argument that cannot be corrected with: Field is its Go
// name (Pressure_pa, ..., or the argument ub_v, path_m), Reason says what is wrong and
// what range is plausible.
type FieldError struct {
	Field  string
	Value  float64
	Reason string
}

func (e *FieldError) Error() string {
	return fmt.Sprintf("atmos: %s = %g: %s", e.Field, e.Value, e.Reason)
}

// Check returns a *FieldError for the first reading that is missing, not finite, or
// outside its plausible range, with a hint when the value looks like another unit.
func (c Conditions) Check() error {
	bad := func(field string, v float64, reason string) error {
		return &FieldError{Field: field, Value: v, Reason: reason}
	}
	p := c.Pressure_pa
	switch {
	case !finite(p):
		return bad("Pressure_pa", p, "not a number")
	case p >= PressureMin_pa && p <= PressureMax_pa:
	case p >= PressureMin_pa/1e3 && p <= PressureMax_pa/1e3:
		return bad("Pressure_pa", p, fmt.Sprintf("outside %g to %g kPa; a reading in kPa? give pascals", PressureMin_pa/1e3, PressureMax_pa/1e3))
	case p >= PressureMin_pa/1e2 && p <= PressureMax_pa/1e2:
		return bad("Pressure_pa", p, fmt.Sprintf("outside %g to %g kPa; a reading in hPa (mbar)? give pascals", PressureMin_pa/1e3, PressureMax_pa/1e3))
	default:
		return bad("Pressure_pa", p, fmt.Sprintf("outside %g to %g kPa", PressureMin_pa/1e3, PressureMax_pa/1e3))
	}
	t := c.Temperature_c
	switch {
	case !finite(t):
		return bad("Temperature_c", t, "not a number")
	case t >= TemperatureMin_c && t <= TemperatureMax_c:
	case t >= TemperatureMin_c+KelvinOffset && t <= TemperatureMax_c+KelvinOffset:
		return bad("Temperature_c", t, fmt.Sprintf("outside %g to %g C; a reading in kelvin? give degrees Celsius", TemperatureMin_c, TemperatureMax_c))
	default:
		return bad("Temperature_c", t, fmt.Sprintf("outside %g to %g C", TemperatureMin_c, TemperatureMax_c))
	}
	rh, h := c.RelHumidity_pct, c.AbsHumidity_g_per_m3
	switch {
	case rh == 0 && h == 0:
		return bad("RelHumidity_pct", rh, "no humidity given: give RelHumidity_pct or AbsHumidity_g_per_m3")
	case rh != 0 && h != 0:
		return bad("AbsHumidity_g_per_m3", h, fmt.Sprintf("RelHumidity_pct (%g) is given too: give one of them", rh))
	case rh != 0 && !finite(rh):
		return bad("RelHumidity_pct", rh, "not a number")
	case rh != 0 && (rh < 0 || rh > RelHumidityMax_pct):
		return bad("RelHumidity_pct", rh, fmt.Sprintf("outside 0 to %g %%", RelHumidityMax_pct))
	case h != 0 && !finite(h):
		return bad("AbsHumidity_g_per_m3", h, "not a number")
	case h < 0:
		return bad("AbsHumidity_g_per_m3", h, "negative")
	}
	if sat := AbsoluteHumidity(t, 100); h > SaturationTolerance*sat {
		return bad("AbsHumidity_g_per_m3", h, fmt.Sprintf("above saturation at %g C (%.1f g/m3); a relative humidity in %%? give it as RelHumidity_pct", t, sat))
	}
	return nil
}

// absHumidity is h in g/m3 from whichever humidity was given; c must pass Check.
func (c Conditions) absHumidity() float64 {
	if c.AbsHumidity_g_per_m3 != 0 {
		return c.AbsHumidity_g_per_m3
	}
	return AbsoluteHumidity(c.Temperature_c, c.RelHumidity_pct)
}

// Warning is a remark on the correction, with a stable short code.
type Warning struct {
	Code string `json:"code"`
	Text string `json:"text"`
}

// Correction is the atmospheric correction for one set of conditions and one discharge
// voltage and path, with every factor a report shows.
type Correction struct {
	Conditions Conditions `json:"conditions"`
	Ub_v       float64    `json:"ub_v"`   // the U_B g was computed with, a magnitude
	Path_m     float64    `json:"path_m"` // the minimum discharge path L

	Delta           float64   `json:"delta"`                 // relative air density
	H_g_per_m3      float64   `json:"h_g_per_m3"`            // absolute humidity, given or from the relative humidity
	RelHumidity_pct float64   `json:"relative_humidity_pct"` // relative humidity, given or from the absolute humidity
	K               float64   `json:"k"`                     // k = 1 + c (h/delta - 11)
	G               float64   `json:"g"`                     // g = U_B / (500 kV/m L delta k)
	M               float64   `json:"m"`                     // the exponent of k1
	W               float64   `json:"w"`                     // the exponent of k2
	K1              float64   `json:"k1"`                    // air density correction factor delta^m
	K2              float64   `json:"k2"`                    // humidity correction factor k^w
	Kt              float64   `json:"kt"`                    // atmospheric correction factor k1 k2
	Warnings        []Warning `json:"warnings,omitempty"`
}

// Correct computes the correction for the conditions, the disruptive-discharge voltage
// ub_v (U_B: the 50 % discharge voltage, measured or estimated at the actual
// atmosphere; its sign is ignored) and the minimum discharge path path_m, with the
// default settings.
func Correct(c Conditions, ub_v, path_m float64) (Correction, error) {
	return DefaultSettings().Correct(c, ub_v, path_m)
}

// CorrectWithstand is Correct for a withstand test at test_v, the specified test
// voltage at the standard atmosphere, with U_B = WithstandFactor x test_v. Apply
// ToApply(test_v, corr).
func CorrectWithstand(c Conditions, test_v, path_m float64) (Correction, error) {
	return DefaultSettings().CorrectWithstand(c, test_v, path_m)
}

// CorrectWithstand is the package's CorrectWithstand under s.
func (s Settings) CorrectWithstand(c Conditions, test_v, path_m float64) (Correction, error) {
	if !finite(test_v) || test_v == 0 {
		return Correction{}, &FieldError{Field: "test_v", Value: test_v, Reason: "the test voltage must be finite and non-zero"}
	}
	return s.Correct(c, s.WithstandFactor*test_v, path_m)
}

// Correct is the package's Correct under s. Readings inside Check's ranges but beyond
// where the formulas were established are still corrected; the result's Warnings say
// so and the caller decides what to show.
func (s Settings) Correct(c Conditions, ub_v, path_m float64) (Correction, error) {
	if err := c.Check(); err != nil {
		return Correction{}, err
	}
	if !finite(ub_v) || ub_v == 0 {
		return Correction{}, &FieldError{Field: "ub_v", Value: ub_v, Reason: "U_B must be finite and non-zero"}
	}
	if !finite(path_m) || path_m <= 0 {
		return Correction{}, &FieldError{Field: "path_m", Value: path_m, Reason: "the minimum discharge path must be finite and above 0 m"}
	}
	r := Correction{Conditions: c, Ub_v: math.Abs(ub_v), Path_m: path_m}
	r.Delta = RelativeDensity(c.Pressure_pa, c.Temperature_c)
	r.H_g_per_m3 = c.absHumidity()
	r.RelHumidity_pct = c.RelHumidity_pct
	if r.RelHumidity_pct == 0 {
		r.RelHumidity_pct = RelativeHumidity(c.Temperature_c, r.H_g_per_m3)
	}
	r.K = s.HumidityFactor(r.H_g_per_m3, r.Delta)
	r.G = r.Ub_v / (RefGradient_v_per_m * path_m * r.Delta * r.K)
	r.M, r.W = Exponents(r.G)
	r.K1 = math.Pow(r.Delta, r.M)
	r.K2 = math.Pow(r.K, r.W)
	r.Kt = r.K1 * r.K2

	if ratio := r.H_g_per_m3 / r.Delta; ratio > s.HumidityRatioMax_g_per_m3 {
		r.Warnings = append(r.Warnings, Warning{"humidity-extrapolated", fmt.Sprintf(
			"h/delta is %.1f g/m3, above the %g g/m3 the humidity correction rests on (from memory): k = %.4f is extrapolated", ratio, s.HumidityRatioMax_g_per_m3, r.K)})
	}
	if r.RelHumidity_pct > s.HighRelHumidity_pct {
		r.Warnings = append(r.Warnings, Warning{"humidity-high", fmt.Sprintf(
			"relative humidity %.0f %% is above %g %%: discharges, especially over insulating surfaces, may be erratic and the correction in doubt (from memory)", r.RelHumidity_pct, s.HighRelHumidity_pct)})
	}
	return r, nil
}

// ToStandard is a disruptive-discharge voltage measured at the actual atmosphere
// expressed at the standard atmosphere: u_v / Kt. NaN for a Correction Correct did not
// make.
func ToStandard(u_v float64, corr Correction) float64 {
	if !(corr.Kt > 0) {
		return math.NaN()
	}
	return u_v / corr.Kt
}

// ToApply is the voltage to apply at the actual atmosphere for a withstand test voltage
// u0_v specified at the standard atmosphere: u0_v Kt. NaN for a Correction Correct did
// not make.
func ToApply(u0_v float64, corr Correction) float64 {
	if !(corr.Kt > 0) {
		return math.NaN()
	}
	return u0_v * corr.Kt
}

// RelativeDensity is delta = (p/p0) (273 + t0)/(273 + t) against the standard
// reference atmosphere.
func RelativeDensity(p_pa, t_c float64) float64 {
	return p_pa / StdPressure_pa * (KelvinOffset + StdTemperature_c) / (KelvinOffset + t_c)
}

// SaturationPressure_pa is the saturation vapour pressure over water at t_c, the
// Magnus form inside the humidity formula.
func SaturationPressure_pa(t_c float64) float64 {
	return MagnusE0_pa * math.Exp(MagnusA*t_c/(MagnusB_c+t_c))
}

// AbsoluteHumidity is h in g/m3 at t_c and relative humidity rh_pct:
// 6.11 R exp(17.6 t/(243 + t)) / (0.4615 (273 + t)), the vapour's partial pressure over
// its gas constant and temperature.
func AbsoluteHumidity(t_c, rh_pct float64) float64 {
	return rh_pct / 100 * SaturationPressure_pa(t_c) / (VapourGasConstant_j_per_g_k * (KelvinOffset + t_c))
}

// RelativeHumidity inverts AbsoluteHumidity: the relative humidity in % of h_g_per_m3
// at t_c.
func RelativeHumidity(t_c, h_g_per_m3 float64) float64 {
	return 100 * h_g_per_m3 / AbsoluteHumidity(t_c, 100)
}

// HumidityFactor is k = 1 + c (h/delta - 11) with c = s.HumidityCoef_m3_per_g.
func (s Settings) HumidityFactor(h_g_per_m3, delta float64) float64 {
	return 1 + s.HumidityCoef_m3_per_g*(h_g_per_m3/delta-StdAbsHumidity_g_per_m3)
}

// Exponents are m and w of k1 = delta^m and k2 = k^w for a value of g. Short gaps
// (g below 0.2) get no correction; long ones get the full air density correction and,
// above g = 2, none for humidity. The expressions are written as the issue states them
// so they can be read against the standard.
func Exponents(g float64) (m, w float64) {
	switch {
	case g < GRise:
		return 0, 0
	case g <= GTop:
		m = g * (g - 0.2) / 0.8
		return m, m
	case g <= GFall:
		return 1, 1
	case g <= GWZero:
		return 1, (2.2 - g) * (2.0 - g) / 0.8
	default:
		return 1, 0
	}
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
