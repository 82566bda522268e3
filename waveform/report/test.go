package report

import (
	"fmt"
	"strings"

	"github.com/hvshot/hvshot/waveform/outcome"
	"github.com/hvshot/hvshot/waveform/shot"
)

// TestLines is a test's outcome in words, a headline and a line per polarity, as the
// console and the report's header show it; nil when the series is not a test.
func TestLines(t *shot.TestOutcome) []string {
	if t == nil {
		return nil
	}
	kind := "withstand test, procedure " + string(t.Procedure)
	if !t.Procedure.Withstand() {
		kind = "50 % disruptive-discharge voltage, " + string(t.Procedure) + " method"
	}
	head := "test: " + kind
	if t.Name != "" {
		head = t.Name + ": " + kind
	}
	if t.Specified_v > 0 && t.Procedure.Withstand() {
		head += fmt.Sprintf(", %s specified", kv(t.Specified_v))
		if c := t.Correction; c != nil {
			head += fmt.Sprintf(", %s applied (U0 Kt; Kt %.4f: delta %.4f, k %.4f, g %.3f, m %.3f, w %.3f, L %.2f m)", kv(t.Applied_v), c.Kt, c.Delta, c.K, c.G, c.M, c.W, c.Path_m)
		}
		head += fmt.Sprintf(", counted within %g %%", t.LevelTol_pct)
	}
	if t.Polarity != "" {
		head += ", " + string(t.Polarity)
	}
	lines := []string{head}
	for _, r := range t.Results {
		l := fmt.Sprintf("%s: %s", r.Polarity, strings.ToUpper(string(r.Verdict)))
		if r.Verdict == outcome.Determined {
			l += ": U50 " + kv(r.U50_v)
			if r.U50Standard_v > 0 {
				l += fmt.Sprintf(" (%s at the standard atmosphere, Kt %.3f)", kv(r.U50Standard_v), r.Correction.Kt)
			}
			if r.ZMeasured {
				l += fmt.Sprintf(", sigma %s, z %.1f %%", kv(r.Sigma_v), r.Z_pct)
			} else {
				l += fmt.Sprintf(", z %.0f %% (conventional)", r.Z_pct)
			}
			l += ", U10 " + kv(r.U10_v)
		}
		lines = append(lines, l+"; "+r.Reason)
	}
	if t.NotCounted > 0 {
		lines = append(lines, fmt.Sprintf("%s listed, not counted (another level, polarity or shape: the application column says why)", plural(t.NotCounted, "divider row")))
	}
	if len(t.Unmatched) > 0 {
		lines = append(lines, "marked in the setup, not among the shots: "+strings.Join(t.Unmatched, ", "))
	}
	return lines
}

func kv(v float64) string { return fmt.Sprintf("%.1f kV", v/1e3) }
