package shot

import (
	"errors"
	"fmt"
	"io"
	"time"

	"github.com/hvshot/hvshot/waveform/atmos"
)

// TestRecord is what a filed test record names besides the shots: the test object, the
// laboratory, the operator and the measuring system (the setup file's top-level keys and
// its [measuring_system] table). hvshot shows it; it judges nothing by it.
type TestRecord struct {
	Object     string `json:"test_object,omitempty"`
	ObjectID   string `json:"object_id,omitempty"`
	Laboratory string `json:"laboratory,omitempty"`
	Operator   string `json:"operator,omitempty"`
	// The measuring system: its name, its expanded uncertainty of the test voltage (as
	// its calibration certificate states it) and the date of that calibration.
	MeasuringSystem string  `json:"measuring_system,omitempty"`
	Uncertainty_pct float64 `json:"expanded_uncertainty_pct,omitempty"`
	Calibrated      string  `json:"calibrated,omitempty"` // a date, 2006-01-02
}

// Empty reports whether nothing of the record is described.
func (r TestRecord) Empty() bool { return r == TestRecord{} }

// MeasuringSetup is the [measuring_system] table.
type MeasuringSetup struct {
	Name            string   `toml:"name"`
	Uncertainty_pct *float64 `toml:"expanded_uncertainty_pct"`
	Calibrated      string   `toml:"calibrated"`
}

// record checks the record's values and returns the record; at(key...) finds a key's
// line for a message.
func (s *Setup) record(at func(k ...string) int) (TestRecord, error) {
	m := s.Measuring
	r := TestRecord{Object: s.TestObject, ObjectID: s.ObjectID, Laboratory: s.Laboratory, Operator: s.Operator,
		MeasuringSystem: m.Name, Calibrated: m.Calibrated}
	if u := m.Uncertainty_pct; u != nil {
		// a divider system's expanded uncertainty is a few percent at most (IEC 60060-2
		// asks 3 % for test voltages, from memory); 20 % is a slip, not a system
		if !(*u > 0 && *u < 20) {
			return r, &SetupError{File: s.Path, Line: at("measuring_system", "expanded_uncertainty_pct"), Key: "measuring_system.expanded_uncertainty_pct",
				Msg: fmt.Sprintf("%g: a percentage above 0 and below 20", *u)}
		}
		r.Uncertainty_pct = *u
	}
	if m.Calibrated != "" {
		if _, err := time.Parse("2006-01-02", m.Calibrated); err != nil {
			return r, &SetupError{File: s.Path, Line: at("measuring_system", "calibrated"), Key: "measuring_system.calibrated",
				Msg: fmt.Sprintf("%q: a date written 2026-03-14", m.Calibrated)}
		}
	}
	return r, nil
}

// AtmosphereSetup is the [atmosphere] table: the laboratory's air during the series and
// the test object's minimum discharge path, for the atmospheric correction (package
// atmos). Units are in the key names: the trade reads these off its instruments as kPa,
// degrees Celsius and percent.
type AtmosphereSetup struct {
	Pressure_kpa         *float64 `toml:"pressure_kpa"`
	Temperature_c        *float64 `toml:"temperature_c"`
	RelHumidity_pct      *float64 `toml:"relative_humidity_pct"`
	AbsHumidity_g_per_m3 *float64 `toml:"absolute_humidity_g_per_m3"`
	Path_m               *float64 `toml:"discharge_path_m"`
	// Log names a CSV log of readings by time (atmos.ReadLog), relative to the setup
	// file: each shot takes the reading in force when it was fired, in place of the
	// fixed readings (which may then be left out).
	Log string `toml:"log"`
}

// pathPlausible is a minimum discharge path a test object can have (ours: above 0 and
// below 100 m), and pathWords says so in a message.
func pathPlausible(l_m float64) bool { return l_m > 0 && l_m < 100 }

const pathWords = "the minimum discharge path in metres, above 0 and below 100"

// atmosKeys are the table's keys by the atmos field they fill, for messages.
var atmosKeys = map[string]string{"Pressure_pa": "pressure_kpa", "Temperature_c": "temperature_c",
	"RelHumidity_pct": "relative_humidity_pct", "AbsHumidity_g_per_m3": "absolute_humidity_g_per_m3", "path_m": "discharge_path_m"}

// air checks the [atmosphere] table and returns its conditions and path; nil when the
// setup has none.
func (s *Setup) air(at func(k ...string) int) (*atmos.Conditions, float64, error) {
	a := s.Atmosphere
	if a == nil {
		return nil, 0, nil
	}
	bad := func(key, format string, v ...any) error {
		return &SetupError{File: s.Path, Line: at("atmosphere", key), Key: "atmosphere." + key, Msg: fmt.Sprintf(format, v...)}
	}
	if a.Log != "" && a.Pressure_kpa == nil && a.Temperature_c == nil && a.RelHumidity_pct == nil && a.AbsHumidity_g_per_m3 == nil {
		// the log's readings only: the path is all the table must give
		if a.Path_m == nil || !pathPlausible(*a.Path_m) {
			return nil, 0, bad("discharge_path_m", "%s, is needed with the log", pathWords)
		}
		return nil, *a.Path_m, nil
	}
	for _, k := range []struct {
		v   *float64
		key string
	}{{a.Pressure_kpa, "pressure_kpa"}, {a.Temperature_c, "temperature_c"}, {a.Path_m, "discharge_path_m"}} {
		if k.v == nil {
			return nil, 0, bad(k.key, "missing: the correction needs the pressure, the temperature, a humidity and the discharge path")
		}
	}
	if (a.RelHumidity_pct == nil) == (a.AbsHumidity_g_per_m3 == nil) {
		return nil, 0, bad("relative_humidity_pct", "give one humidity: relative_humidity_pct or absolute_humidity_g_per_m3")
	}
	c := atmos.Conditions{Pressure_pa: *a.Pressure_kpa * 1e3, Temperature_c: *a.Temperature_c}
	if a.RelHumidity_pct != nil {
		c.RelHumidity_pct = *a.RelHumidity_pct
	} else {
		c.AbsHumidity_g_per_m3 = *a.AbsHumidity_g_per_m3
	}
	if err := c.Check(); err != nil {
		var fe *atmos.FieldError
		if errors.As(err, &fe) {
			v := fe.Value
			if fe.Field == "Pressure_pa" {
				v /= 1e3
			}
			return nil, 0, bad(atmosKeys[fe.Field], "%g: %s", v, fe.Reason)
		}
		return nil, 0, bad("pressure_kpa", "%v", err)
	}
	if !pathPlausible(*a.Path_m) {
		return nil, 0, bad("discharge_path_m", "%g: %s", *a.Path_m, pathWords)
	}
	if !s.Nominal.TestVoltage.Set && len(s.Tests) == 0 {
		return nil, 0, bad("pressure_kpa", "the correction is computed for a withstand test at the nominal test voltage: give [nominal] test_voltage")
	}
	return &c, *a.Path_m, nil
}

// ReadAirLog reads the air log of the setup's [atmosphere] table (atmos.ReadLog) into
// AirLog; name is the file's, for the messages.
func (c *Config) ReadAirLog(r io.Reader, name string) error {
	log, err := atmos.ReadLog(r)
	var le *atmos.LogError
	if errors.As(err, &le) {
		le.File = name
		return le
	}
	if err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	c.AirLog, c.AirLogFile = log, name
	return nil
}

// AirAt is the air when a shot was fired: the logged reading in force then (and the
// reading's line, for a message), else the fixed readings; nil when neither is known.
func (c *Config) AirAt(fired time.Time) (air *atmos.Conditions, logLine int) {
	if len(c.AirLog) > 0 && !fired.IsZero() {
		if r, ok := c.AirLog.LastBefore(fired); ok {
			return &r.Conditions, r.Line
		}
	}
	return c.Air, 0
}

// Atmosphere is the atmospheric correction of the series' withstand test at the
// nominal test voltage (atmos.CorrectWithstand); nil when the setup describes no air.
func (c *Config) Atmosphere() (*atmos.Correction, error) {
	return c.atmosphere(c.Air)
}

func (c *Config) atmosphere(air *atmos.Conditions) (*atmos.Correction, error) {
	if air == nil {
		return nil, nil
	}
	if !(c.Nominal.Peak_v > 0) {
		return nil, fmt.Errorf("the atmospheric correction needs the nominal test voltage")
	}
	corr, err := atmos.CorrectWithstand(*air, c.Nominal.Peak_v, c.AirPath_m)
	if err != nil {
		return nil, err
	}
	return &corr, nil
}
