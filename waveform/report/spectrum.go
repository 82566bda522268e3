package report

import (
	"fmt"
	"image/color"
	"math"
	"math/cmplx"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/hvshot/hvshot/waveform/shot"
	"github.com/hvshot/hvshot/waveform/spectrum"
)

// logColumns is how many stretches of a log frequency axis a spectrum is drawn from,
// each by its largest value, as decimate does for time: every peak shows.
const logColumns = 400

var (
	colFloor = color.RGBA{150, 150, 150, 255}
	colRef   = color.RGBA{120, 120, 120, 255}
)

// kiloTicks are log ticks at the decades, labelled as plain numbers.
type kiloTicks struct{}

func (kiloTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.LogTicks{}.Ticks(lo, hi)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = strconv.FormatFloat(ts[i].Value, 'f', -1, 64)
		}
	}
	return ts
}

// logPoints draws y(k) for bins 1.. on a log axis of frequency k df (in kHz): the
// largest value of each of logColumns stretches; bins where keep is false or y is NaN
// break the line, so each run comes back as its own points.
func logPoints(n int, df float64, y func(k int) float64, keep func(k int) bool) []plotter.XYs {
	if n < 2 {
		return nil
	}
	lo, hi := math.Log(df), math.Log(float64(n-1)*df)
	step := (hi - lo) / logColumns
	var runs []plotter.XYs
	var cur plotter.XYs
	flush := func() {
		if len(cur) > 1 {
			runs = append(runs, cur)
		}
		cur = nil
	}
	k := 1
	for c := 0; c < logColumns && k < n; c++ {
		end := math.Exp(lo + float64(c+1)*step)
		best, at := math.Inf(-1), -1
		for ; k < n && (float64(k)*df <= end || at < 0); k++ {
			if keep != nil && !keep(k) {
				if at >= 0 {
					cur = append(cur, plotter.XY{X: float64(at) * df / 1e3, Y: best})
				}
				flush()
				best, at = math.Inf(-1), -1
				continue
			}
			if v := y(k); !math.IsNaN(v) && !math.IsInf(v, 0) && v > best {
				best, at = v, k
			}
		}
		if at >= 0 {
			cur = append(cur, plotter.XY{X: float64(at) * df / 1e3, Y: best})
		}
	}
	flush()
	return runs
}

func newLogPanel(title, ylabel string) *plot.Plot {
	p := newPanel(title, ylabel)
	p.X.Label.Text = "frequency (kHz)"
	p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, kiloTicks{}
	return p
}

// extraPanels are a row's frequency-domain panels: its spectrum with the noise floor
// and, in a comparison, the difference from the reference and both transfer
// functions. Rows of two; nil when there is nothing to draw.
func extraPanels(c *shot.Curves) [][]*plot.Plot {
	var out [][]*plot.Plot
	row := []*plot.Plot{spectrumPanel(c.Spectrum), nil}
	if c.Compare != nil {
		row[1] = diffPanel(c.Compare)
	}
	if row[0] != nil || row[1] != nil {
		out = append(out, row)
	}
	if c.Compare != nil && c.Compare.Transfer != nil {
		out = append(out, transferPanels(c.Compare))
	}
	return out
}

// spectrumPanel draws the amplitude spectrum in dB re 1 micro-unit per MHz on a log
// frequency axis, the pre-trigger's noise floor beside it, and the 90 % and 99 %
// bandwidths; its title states the window and the zero padding.
func spectrumPanel(sc *shot.SpectrumCurve) *plot.Plot {
	if sc == nil || len(sc.S.X) < 3 {
		return nil
	}
	s := sc.S
	db := func(a float64) float64 { return spectrum.DB(a, spectrum.DBRef) }
	title := fmt.Sprintf("amplitude spectrum\n%s window, %d samples zero-padded to %d", s.Window, s.N, s.NFFT)
	p := newLogPanel(title, fmt.Sprintf("|X(f)| (dB re 1 µ%s/MHz)", sc.Unit))
	amp := logPoints(len(s.X), s.Df_hz, func(k int) float64 { return db(s.Amplitude(k)) }, nil)
	top := math.Inf(-1)
	for i, run := range amp {
		l := line(run, colBase, vg.Points(1))
		p.Add(l)
		if i == 0 {
			p.Legend.Add("spectrum", l)
		}
		for _, xy := range run {
			top = math.Max(top, xy.Y)
		}
	}
	bottom := top - 120
	if sc.Floor != nil {
		for i, run := range logPoints(len(s.X), s.Df_hz, func(k int) float64 { return db(sc.Floor[k]) }, nil) {
			l := line(run, colFloor, vg.Points(0.8), vg.Points(3), vg.Points(2))
			p.Add(l)
			if i == 0 {
				p.Legend.Add("noise floor (pre-trigger)", l)
			}
			for _, xy := range run {
				bottom = math.Min(bottom, xy.Y-10)
			}
		}
	}
	bottom = math.Max(bottom, top-160)
	for i, bw := range []float64{sc.BW90_hz, sc.BW99_hz} {
		if math.IsNaN(bw) || bw <= s.Df_hz {
			continue
		}
		l := line(plotter.XYs{{X: bw / 1e3, Y: bottom}, {X: bw / 1e3, Y: top}}, colMark, vg.Points(0.8), vg.Points(2), vg.Points(2))
		p.Add(l)
		p.Legend.Add(fmt.Sprintf("%s %% of the energy below %s kHz", []string{"90", "99"}[i], shot.FormatDigits(bw/1e3, 4, false)), l)
	}
	p.X.Min, p.X.Max = s.Df_hz/1e3, float64(len(s.X)-1)*s.Df_hz/1e3
	p.Y.Min, p.Y.Max = bottom, top+5
	return p
}

// diffPanel draws the difference from the reference in percent of its peak, with the
// threshold and the largest difference marked.
func diffPanel(cc *shot.CompareCurve) *plot.Plot {
	d := cc.Diff
	peak := 0.0
	for _, v := range cc.Ref {
		peak = math.Max(peak, math.Abs(v))
	}
	if !(peak > 0) || len(d.D) == 0 {
		return nil
	}
	title := fmt.Sprintf("against %s, scaled and aligned\nlargest difference %s %%, RMS %s %%", cc.RefID,
		shot.FormatDigits(d.Peak_pct, 2, true), shot.FormatDigits(d.RMS_pct, 2, true))
	p := newPanel(title, "difference (% of the reference's peak)")
	pct := make([]float64, len(d.D))
	for i, v := range d.D {
		pct[i] = 100 * v / peak
	}
	l := line(decimate(cc.Start_s, cc.Interval_s, pct, 1e6, 1, columns), colBase, vg.Points(0.8))
	p.Add(l)
	p.Legend.Add("this shot less the reference", l)
	t0, t1 := cc.Start_s*1e6, (cc.Start_s+float64(len(pct)-1)*cc.Interval_s)*1e6
	th := cc.Settings.DiffPeakMax_pct
	for i, s := range []float64{th, -th} {
		b := line(plotter.XYs{{X: t0, Y: s}, {X: t1, Y: s}}, colBand, vg.Points(0.8), vg.Points(2), vg.Points(2))
		p.Add(b)
		if i == 0 {
			p.Legend.Add(fmt.Sprintf("threshold ±%s %%", shot.FormatDigits(th, 3, false)), b)
		}
	}
	if !math.IsNaN(d.PeakTime_s) {
		k := int(math.Round((d.PeakTime_s - cc.Start_s) / cc.Interval_s))
		legend := "largest difference"
		if d.Peak_pct > th {
			legend += ", above the threshold"
		}
		addMarks(p, plotter.XYs{{X: d.PeakTime_s * 1e6, Y: pct[k]}}, legend)
	}
	p.X.Min, p.X.Max = t0, t1
	return p
}

// transferPanels draw |H| and the phase of H, the reference's and this shot's, over
// the bins compared, with the largest deviation marked.
func transferPanels(cc *shot.CompareCurve) []*plot.Plot {
	t := cc.Transfer
	title := fmt.Sprintf("transfer function |H|\nlargest deviation %s %% at %s kHz (threshold %s %%)",
		shot.FormatDigits(t.MaxDev_pct, 2, true), shot.FormatDigits(t.Freq_hz/1e3, 4, false), shot.FormatDigits(cc.Settings.TransferMax_pct, 3, false))
	if math.IsNaN(t.MaxDev_pct) {
		title = "transfer function: no bin stands clear of the noise"
	}
	mag := newLogPanel(title, "|H| (dB re 1 output unit per input unit)")
	ph := newLogPanel(fmt.Sprintf("phase of H\nover the %d bins compared", t.Bins), "phase (degrees)")
	in := func(k int) bool { return t.In[k] }
	for _, h := range []struct {
		name string
		v    []complex128
		col  color.Color
	}{{"reference " + cc.RefID, t.Ref, colRef}, {"this shot", t.Test, colTest}} {
		for i, run := range logPoints(len(h.v), t.Df_hz, func(k int) float64 { return 20 * math.Log10(cmplx.Abs(h.v[k])) }, in) {
			l := line(run, h.col, vg.Points(1))
			mag.Add(l)
			if i == 0 {
				mag.Legend.Add(h.name, l)
			}
		}
		for i, run := range logPoints(len(h.v), t.Df_hz, func(k int) float64 { return cmplx.Phase(h.v[k]) * 180 / math.Pi }, in) {
			l := line(run, h.col, vg.Points(1))
			ph.Add(l)
			if i == 0 {
				ph.Legend.Add(h.name, l)
			}
		}
	}
	if !math.IsNaN(t.Freq_hz) {
		k := int(math.Round(t.Freq_hz / t.Df_hz))
		legend := "largest deviation"
		if t.MaxDev_pct > cc.Settings.TransferMax_pct {
			legend += ", above the threshold"
		}
		addMarks(mag, plotter.XYs{{X: t.Freq_hz / 1e3, Y: 20 * math.Log10(cmplx.Abs(t.Test[k]))}}, legend)
	}
	last := 1
	for k, in := range t.In {
		if in {
			last = k
		}
	}
	for _, p := range []*plot.Plot{mag, ph} {
		p.X.Min, p.X.Max = t.Df_hz/1e3, math.Min(3*float64(last), float64(len(t.Ref)-1))*t.Df_hz/1e3
	}
	if t.Bins == 0 {
		mag.Y.Min, mag.Y.Max = -1, 1
		return []*plot.Plot{mag, nil}
	}
	return []*plot.Plot{mag, ph}
}
