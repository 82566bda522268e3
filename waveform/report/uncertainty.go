package report

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/hvshot/hvshot/waveform/shot"
)

// ValueWithUncertainty is a parameter's value in its screen unit with its expanded
// uncertainty beside it when the row has one, "1.214 ± 0.012 µs"; the uncertainty to
// two significant digits (GUM 7.2.6).
func ValueWithUncertainty(r *shot.Row, c *shot.Column) string {
	v, ok := r.Value(c)
	if !ok {
		return ""
	}
	s := c.Format(v)
	if u := c.Companion(); u != nil {
		if uv, ok := r.Value(u); ok {
			s += " ± " + shot.FormatDigits(uv*c.Scale, 2, false)
		}
	}
	return strings.TrimSpace(s + " " + strings.ReplaceAll(c.Screen, "us", "µs"))
}

// UncertaintyNote says what the ± beside the parameters holds.
func UncertaintyNote(cfg *shot.Config) string {
	u := cfg.Uncertainty
	if u.Draws <= 0 {
		return "not evaluated ([uncertainty] draws = 0)"
	}
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }
	note := fmt.Sprintf("± beside a value is its expanded uncertainty, about 95 %%: the record's own noise (%d draws), the time base (±%s ppm), instants read to ±%s sample",
		u.Draws, g(u.Timebase_ppm), g(u.Reading_samples))
	own := ""
	for _, c := range cfg.Channels {
		if c.Uncertainty_pct != nil {
			own = ", a channel's own scale factor where the setup states it"
		}
	}
	if p := cfg.Record.Uncertainty_pct; p > 0 {
		return note + ", the divider's scale factor (" + g(p) + " %, k = 2)" + own
	}
	return note + own + "; the measuring system's scale factor is not stated, so voltages without a channel's own carry the record's part only"
}
