package report_test

import (
	"bytes"
	"testing"

	"github.com/stretchr/testify/assert"

	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/report"
)

// Lines of each kind print with their own units and words: an outcome line shows the
// expected and the found outcome, a known miss is named so and not counted as missed.
func TestSelfCheckListing(t *testing.T) {
	lines := []impulse.Check{
		{Case: "a", Param: impulse.ParamVerdict, Expect: "incomplete", Found: "pass"},
		{Case: "b", Param: impulse.ParamPeakCurrent, Ref: 50e3, Got: 50.6e3, Err_pct: 1.2, Limit_pct: 0.7, Known: true},
		{Case: "c", Param: impulse.ParamSteepness, Ref: 2.87e11, Got: 2.87e11, Limit_pct: 0.6, OK: true},
		{Case: "d", Param: impulse.ParamEndField, Ref: 11.8e3, Got: 11.8e3, Limit_pct: 0.5, OK: true},
	}
	var b bytes.Buffer
	report.SelfCheck(&b, "test", lines)
	out := b.String()
	for _, want := range []string{
		"incomplete", "pass", "MISS",
		"50 kA", "50.6 kA", "known miss",
		"287 kV/us",
		"11.8 kV/m",
		"4 checks, 2 within limits, 1 missed, 1 known misses",
	} {
		assert.Contains(t, out, want)
	}
}
