package shot

import (
	"fmt"
	"time"
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
