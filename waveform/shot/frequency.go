package shot

import (
	"fmt"
	"math"
	"path"
	"strings"

	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/compare"
	"github.com/hvshot/hvshot/waveform/spectrum"
)

// Frequency holds a row's frequency-domain figures: its spectrum's bandwidths and, in a
// comparison, its difference from the reference and its transfer function's deviation.
// NaN where they do not apply.
type Frequency struct {
	BW90_hz, BW99_hz                   float64
	DiffPeak_pct, DiffRMS_pct          float64
	DiffTime_s                         float64
	HDev_pct, HDevFreq_hz              float64
	spectrumNoise, compareWhy, missing string
}

func fromFreq(f func(*Frequency) float64) func(*sources) float64 {
	return from(func(s *sources) *Frequency { return s.freq }, f)
}

// SpectrumCurve is what a row's spectrum plot draws.
type SpectrumCurve struct {
	S                *spectrum.Spectrum
	Floor            []float64 // the pre-trigger noise's floor; nil when too short
	BW90_hz, BW99_hz float64
	Unit             string // the channel's unit: "V", "A", "V/m"
}

// CompareCurve is what a row's comparison plot draws: the reference, this record
// scaled and aligned onto its time base, their difference, and on the output row both
// transfer functions.
type CompareCurve struct {
	RefID               string
	Ref, Scaled         []float64
	Diff                compare.Difference
	Start_s, Interval_s float64
	Transfer            *compare.Transfer
	Settings            compare.Settings
	Exceeded            bool // a figure above its threshold
}

// ComparisonSetup is the [comparison] table: which shot the others are compared with,
// the channels of the transfer function, its band and the thresholds.
type ComparisonSetup struct {
	Reference       string     `toml:"reference"` // a shot's identity or file name
	Shots           []string   `toml:"shots"`     // the shots compared: patterns as [[test]] has them (absent: all)
	Input           string     `toml:"input"`     // channel names: H = output/input
	Output          string     `toml:"output"`
	Band            []Quantity `toml:"band"` // [low, high]
	Smooth          Quantity   `toml:"smooth"`
	MarginDB        *float64   `toml:"margin_db"`
	NoiseMax_pct    *float64   `toml:"noise_max_pct"`
	DiffPeakMax_pct *float64   `toml:"difference_peak_max_pct"`
	DiffRMSMax_pct  *float64   `toml:"difference_rms_max_pct"`
	TransferMax_pct *float64   `toml:"transfer_deviation_max_pct"`
}

// Comparison is a series' comparison with a reference shot.
type Comparison struct {
	Reference     string // as the setup or the command line names it
	Input, Output string // "": the first divider channel, the first current or coil channel
	Shots         []string
	Settings      compare.Settings
	// Ref is the reference shot, evaluated and prepared (SetReference) before the
	// series runs; RefID its identity.
	Ref   *compare.Reference
	RefID string
}

// check validates the table; at finds a key's line.
func (c *ComparisonSetup) check(at func(...string) int, file string) error {
	bad := func(key, format string, a ...any) error {
		return &SetupError{File: file, Line: at("comparison", key), Key: "comparison." + key, Msg: fmt.Sprintf(format, a...)}
	}
	for _, pat := range c.Shots {
		if _, err := path.Match(pat, ""); err != nil {
			return bad("shots", "bad pattern %q", pat)
		}
	}
	if len(c.Band) != 0 && len(c.Band) != 2 {
		return bad("band", "two frequencies, low and high, as in band = [\"10 kHz\", \"1 MHz\"]")
	}
	for _, q := range c.Band {
		if err := q.in("band", "Hz"); err != nil {
			return bad("band", "%v", strings.TrimPrefix(err.Error(), "band: "))
		}
		if q.V < 0 {
			return bad("band", "frequencies are not negative")
		}
	}
	if len(c.Band) == 2 && c.Band[1].V != 0 && c.Band[1].V <= c.Band[0].V {
		return bad("band", "the high frequency must be above the low one")
	}
	if err := c.Smooth.in("smooth", "Hz"); err != nil {
		return bad("smooth", "%v", strings.TrimPrefix(err.Error(), "smooth: "))
	}
	if c.Smooth.V < 0 {
		return bad("smooth", "must not be negative")
	}
	for _, p := range []struct {
		key string
		v   *float64
	}{{"margin_db", c.MarginDB}, {"noise_max_pct", c.NoiseMax_pct}, {"difference_peak_max_pct", c.DiffPeakMax_pct},
		{"difference_rms_max_pct", c.DiffRMSMax_pct}, {"transfer_deviation_max_pct", c.TransferMax_pct}} {
		if p.v != nil && !(*p.v >= 0) {
			return bad(p.key, "must not be negative")
		}
	}
	return nil
}

// comparison is the table's configuration.
func (c *ComparisonSetup) comparison() *Comparison {
	if c == nil {
		return nil
	}
	cmp := &Comparison{Reference: c.Reference, Input: c.Input, Output: c.Output, Shots: c.Shots, Settings: compare.DefaultSettings()}
	st := &cmp.Settings
	if len(c.Band) == 2 {
		st.Band.Lo_hz, st.Band.Hi_hz = c.Band[0].V, c.Band[1].V
	}
	st.Band.Smooth_hz = c.Smooth.V
	if c.TransferMax_pct != nil {
		// the noise allowed scales with the deviation sought (compare.Band)
		st.TransferMax_pct, st.Band.MaxNoise_pct = *c.TransferMax_pct, *c.TransferMax_pct/4
	}
	for _, p := range []struct{ src, dst *float64 }{{c.MarginDB, &st.Band.Margin_db}, {c.NoiseMax_pct, &st.Band.MaxNoise_pct},
		{c.DiffPeakMax_pct, &st.DiffPeakMax_pct}, {c.DiffRMSMax_pct, &st.DiffRMSMax_pct}} {
		if p.src != nil {
			*p.dst = *p.src
		}
	}
	return cmp
}

// FindReference is the index of the shot a comparison names: by its identity, else
// by its file name when exactly one shot has it; -1 when none does.
func FindReference(name string, ids []string) int {
	k := -1
	for i, id := range ids {
		if id == name {
			return i
		}
		if path.Base(id) == path.Base(name) {
			if k >= 0 {
				return -1
			}
			k = i
		}
	}
	return k
}

// PrepareReference finds the comparison's reference, named here or else by the setup's
// [comparison] table, among the captures (paths, identified as Identities does) and
// reads it with read; a name none of them has is read as a file of its own. Nothing
// named: nothing to do.
func (c *Config) PrepareReference(name string, paths []string, read func(path string) (*waveform.Record, error)) error {
	if name == "" && c.Comparison != nil {
		name = c.Comparison.Reference
	}
	if name == "" {
		return nil
	}
	ids := Identities(paths)
	file, id := name, name
	if i := FindReference(name, ids); i >= 0 {
		file, id = paths[i], ids[i]
	}
	rec, err := read(file)
	if err != nil {
		return fmt.Errorf("reference %s: %v", name, err)
	}
	return c.SetReference(rec, id)
}

// SetReference evaluates rec (shot id) under c and prepares it as the comparison's
// reference, which every later Evaluate compares with. The command calls it before the
// batch: the workers then share the reference read-only, and only its curves are held.
func (c *Config) SetReference(rec *waveform.Record, id string) error {
	if c.Comparison == nil {
		c.Comparison = &Comparison{Reference: id, Settings: compare.DefaultSettings()}
	}
	cmp := c.Comparison
	cmp.Ref, cmp.RefID = nil, ""
	s := Evaluate(rec, id, c)
	ref := shotChannels(s, cmp)
	if ref.Input == "" {
		return fmt.Errorf("reference %s: no divider channel to scale and align by; name one with input in [comparison]", id)
	}
	r, err := compare.NewReference(ref, c.spectrumSettings())
	if err != nil {
		return err
	}
	cmp.Ref, cmp.RefID = r, id
	return nil
}

func (c *Config) spectrumSettings() spectrum.Settings {
	if c.Spectrum.Pad == 0 {
		return spectrum.DefaultSettings()
	}
	return c.Spectrum
}

// curveOf is a row's signal, signed, on its time base: a divider's recorded curve
// (baseline removed) with its polarity restored, a sensor's current or field.
func curveOf(c *Curves) (compare.Curve, string, bool) {
	switch {
	case c == nil:
		return compare.Curve{}, "", false
	case c.Impulse != nil:
		r := c.Impulse
		y := make([]float64, len(r.Recorded))
		for i, v := range r.Recorded {
			y[i] = float64(r.Polarity) * v
		}
		return compare.Curve{Y: y, Start_s: r.Start_s, Interval_s: r.Interval_s}, "V", true
	case c.Signal != nil:
		return compare.Curve{Y: c.Signal, Start_s: c.Start_s, Interval_s: c.Interval_s}, c.Unit, true
	}
	return compare.Curve{}, "", false
}

// shotChannels gathers a shot's curves for a comparison by channel name, with its
// level: the input's signed test voltage (a divider's Ut), or its peak.
func shotChannels(s *Shot, cmp *Comparison) compare.Shot {
	out := compare.Shot{ID: s.ID, Channels: map[string]compare.Curve{}, Input: cmp.Input, Output: cmp.Output}
	for i, c := range s.Curves {
		cv, _, ok := curveOf(c)
		if !ok {
			continue
		}
		r := &s.Rows[i]
		out.Channels[r.Channel] = cv
		if cmp.Input == "" && out.Input == "" && r.Role == Divider {
			out.Input = r.Channel
		}
		if cmp.Output == "" && out.Output == "" && (r.Role == Current || r.Role == Coil) {
			out.Output = r.Channel
		}
	}
	if in, ok := out.Channels[out.Input]; ok {
		out.Level = signedPeak(in.Y)
		for i, r := range s.Rows {
			if r.Channel == out.Input && s.Curves[i] != nil && s.Curves[i].Impulse != nil {
				imp := s.Curves[i].Impulse
				if imp.TestVoltage_v > 0 {
					out.Level = float64(imp.Polarity) * imp.TestVoltage_v
				}
			}
		}
	}
	return out
}

func signedPeak(y []float64) float64 {
	var p float64
	for _, v := range y {
		if math.Abs(v) > math.Abs(p) {
			p = v
		}
	}
	return p
}

// frequencyDomain adds each row's spectrum and, when the series has a reference, its
// comparison with it: figures on the rows, curves for the plots.
func frequencyDomain(s *Shot, cfg *Config) {
	figs := make([]*Frequency, len(s.Rows))
	for i, c := range s.Curves {
		cv, unit, ok := curveOf(c)
		if !ok || len(cv.Y) < 2 {
			continue
		}
		f := &Frequency{BW90_hz: math.NaN(), BW99_hz: math.NaN(), DiffPeak_pct: math.NaN(), DiffRMS_pct: math.NaN(),
			DiffTime_s: math.NaN(), HDev_pct: math.NaN(), HDevFreq_hz: math.NaN()}
		figs[i] = f
		sp, err := spectrum.Transform(cv.Y, cv.Interval_s, cfg.spectrumSettings())
		if err != nil {
			continue
		}
		sc := &SpectrumCurve{S: sp, Unit: unit}
		if p, err := spectrum.Welch(cv.Y[:waveform.PreTriggerLen(cv.Y)], cv.Interval_s); err == nil {
			sc.Floor = spectrum.NoiseFloor(sp, p)
		}
		// A bandwidth the noise could move is left out: the noise's energy above a
		// tenth of the share outside it (ours).
		e, en := sp.Energy(), 0.0
		if sc.Floor != nil {
			en = sp.NoiseEnergy(sc.Floor)
		}
		var noisy []string
		for _, b := range []struct {
			p    float64
			dst  *float64
			name string
		}{{0.9, &f.BW90_hz, "90 %"}, {0.99, &f.BW99_hz, "99 %"}} {
			if en > 0.1*(1-b.p)*e {
				noisy = append(noisy, b.name)
				continue
			}
			*b.dst = sp.Bandwidth(b.p, sc.Floor)
		}
		if len(noisy) > 0 {
			f.spectrumNoise = fmt.Sprintf("the noise carries %.2g %% of the record's energy: the %s bandwidth is not given", 100*en/e, strings.Join(noisy, " and "))
		}
		sc.BW90_hz, sc.BW99_hz = f.BW90_hz, f.BW99_hz
		c.Spectrum = sc
	}
	if cmp := cfg.Comparison; cmp != nil && cmp.Ref != nil {
		compareShot(s, cmp, figs)
	}
	for i, f := range figs {
		if f == nil {
			continue
		}
		r := &s.Rows[i]
		if f.spectrumNoise != "" {
			r.Warnings = append(r.Warnings, Warning{"spectrum-noisy", f.spectrumNoise})
		}
		if f.compareWhy != "" {
			r.Warnings = append(r.Warnings, Warning{"comparison-deviation", f.compareWhy})
		}
		if f.missing != "" {
			r.Warnings = append(r.Warnings, Warning{"comparison-not-made", f.missing})
		}
		// only the figures' own columns: a sources holding nothing else gives NaN for
		// every other column, and fill has set those already
		src := newSources()
		src.freq = f
		for _, col := range Columns {
			if col.value != nil && r.values != nil {
				if v := col.value(src); !math.IsNaN(v) {
					r.values[col.index] = v
				}
			}
		}
	}
}

// compareShot sets the shot beside the reference.
func compareShot(s *Shot, cmp *Comparison, figs []*Frequency) {
	if !matchShots(cmp.Shots, s.ID) && s.ID != cmp.RefID {
		return
	}
	for i := range s.Rows {
		if s.Rows[i].Verdict != Error {
			s.Rows[i].ComparedWith = cmp.RefID
		}
	}
	if s.ID == cmp.RefID {
		return
	}
	res, err := cmp.Ref.Compare(shotChannels(s, cmp), cmp.Settings)
	for i, c := range s.Curves {
		f := figs[i]
		if f == nil || c == nil {
			continue
		}
		if err != nil {
			f.missing = "not compared with " + cmp.RefID + ": " + err.Error()
			continue
		}
		name := s.Rows[i].Channel
		d, ok := res.Diffs[name]
		if !ok {
			f.missing = fmt.Sprintf("the reference %s has no channel %s", cmp.RefID, name)
			continue
		}
		ref := cmp.Ref.Channels[name]
		f.DiffPeak_pct, f.DiffRMS_pct, f.DiffTime_s = d.Peak_pct, d.RMS_pct, d.PeakTime_s
		why := d.Exceeds(cmp.Settings)
		cc := &CompareCurve{RefID: cmp.RefID, Ref: ref.Y, Scaled: res.Scaled[name], Diff: d, Start_s: ref.Start_s, Interval_s: ref.Interval_s, Settings: cmp.Settings}
		if name == cmp.Ref.Output && res.Transfer != nil {
			f.HDev_pct, f.HDevFreq_hz = res.Transfer.MaxDev_pct, res.Transfer.Freq_hz
			cc.Transfer = res.Transfer
			why = append(why, res.Transfer.Exceeds(cmp.Settings)...)
		}
		if len(why) > 0 {
			f.compareWhy = "against " + cmp.RefID + " scaled by " + fmt.Sprintf("%.4g", res.Scale) + ": " + strings.Join(why, "; ")
			cc.Exceeded = true
		}
		c.Compare = cc
	}
	if err == nil && len(res.Missing) > 0 {
		for _, f := range figs {
			if f != nil {
				f.missing = strings.TrimPrefix(f.missing+"; ", "; ") + "the reference's channels " + strings.Join(res.Missing, ", ") + " are not in this shot"
				break
			}
		}
	}
}
