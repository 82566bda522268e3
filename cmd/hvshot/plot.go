package main

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"regexp"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/hvshot/hvshot/fit"
	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/impulse"
)

var unsafeName = regexp.MustCompile(`[^A-Za-z0-9._-]+`)

// decimate keeps at most about max points, the minimum and maximum of each bucket, so
// spikes and the peak survive on the plot.
func decimate(t0, dt float64, y []float64, tScale, yScale float64, max int) plotter.XYs {
	n := len(y)
	b := 1
	if n > max {
		b = (n + max/2 - 1) / (max / 2)
	}
	var out plotter.XYs
	for i := 0; i < n; i += b {
		j := min(i+b, n)
		lo, hi := i, i
		for k := i; k < j; k++ {
			if math.IsNaN(y[k]) {
				continue
			}
			if y[k] < y[lo] || math.IsNaN(y[lo]) {
				lo = k
			}
			if y[k] > y[hi] || math.IsNaN(y[hi]) {
				hi = k
			}
		}
		for _, k := range []int{min(lo, hi), max2(lo, hi)} {
			if !math.IsNaN(y[k]) {
				out = append(out, plotter.XY{X: (t0 + float64(k)*dt) * tScale, Y: y[k] * yScale})
			}
		}
	}
	return out
}

func max2(a, b int) int {
	if a > b {
		return a
	}
	return b
}

// savePlot draws the plots side by side into one file of the configured format.
func savePlot(cfg *Config, file, label string, ps ...*plot.Plot) string {
	if cfg.Plots == "none" || cfg.OutDir == "" {
		return ""
	}
	ext := cfg.Plots
	rel := filepath.Join("plots", unsafeName.ReplaceAllString(shotName(file)+"_"+label, "_")+"."+ext)
	width, height := vg.Length(len(ps))*13*vg.Centimeter, 10*vg.Centimeter
	var c vg.CanvasWriterTo
	if ext == "png" {
		c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(110))}
	} else {
		c = vgsvg.New(width, height)
	}
	dc := draw.New(c)
	tiles := draw.Tiles{Rows: 1, Cols: len(ps), PadX: vg.Millimeter * 4}
	canv := plot.Align([][]*plot.Plot{ps}, tiles, dc)
	for i, p := range ps {
		p.Draw(canv[0][i])
	}
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return ""
	}
	if err := os.MkdirAll(filepath.Join(cfg.OutDir, "plots"), 0o755); err != nil {
		return ""
	}
	if err := writeAtomic(filepath.Join(cfg.OutDir, rel), buf.Bytes()); err != nil {
		return ""
	}
	return rel
}

var (
	colRecorded = color.RGBA{150, 150, 150, 255}
	colBase     = color.RGBA{31, 119, 180, 255}
	colTest     = color.RGBA{0, 0, 0, 255}
	colBand     = color.RGBA{44, 160, 44, 255}
	colMark     = color.RGBA{214, 39, 40, 255}
)

func line(xy plotter.XYs, c color.Color, width vg.Length, dashes ...vg.Length) *plotter.Line {
	l, _ := plotter.NewLine(xy)
	l.Color = c
	l.Width = width
	l.Dashes = dashes
	return l
}

// plotImpulse draws the recorded, base and test voltage curves with the points that
// define T1 and T2, and the slowest and fastest shapes the nominal's tolerances allow.
func plotImpulse(cfg *Config, file, label string, r *impulse.Result, nom impulse.Nominal) string {
	if cfg.Plots == "none" || cfg.OutDir == "" {
		return ""
	}
	const ts, vs = 1e6, 1e-3
	n := len(r.Recorded)
	end := r.Start_s + float64(n-1)*r.Interval_s
	// Left: the front, from a little before O1 to a few front times after it. Right:
	// the whole impulse, up to a little past T2 (or the chop, or the record's end).
	o1 := r.Origin_s
	if math.IsNaN(o1) {
		o1 = r.T30_s
	}
	span := 6 * r.FrontTime_s
	if math.IsNaN(span) || span <= 0 {
		span = 6 * (r.T90_s - r.T30_s)
	}
	frontLo, frontHi := math.Max(r.Start_s, o1-0.3*span), math.Min(end, o1+span)
	if r.Shape == impulse.LightningChopped && !math.IsNaN(r.ChopInstant_s) {
		frontHi = math.Min(end, math.Max(frontHi, r.ChopInstant_s+0.3*(r.ChopInstant_s-o1)))
	}
	fullHi := end
	if !math.IsNaN(r.T50_s) {
		fullHi = math.Min(end, r.T50_s+0.6*(r.T50_s-o1))
	}
	build := func(lo, hi float64, legend bool, title string) *plot.Plot {
		p := plot.New()
		p.Title.Text = title
		p.X.Label.Text = "time (us)"
		p.Y.Label.Text = "voltage (kV, polarity made positive)"
		p.Add(plotter.NewGrid())
		i0 := max2(0, int((lo-r.Start_s)/r.Interval_s))
		i1 := min(n, int((hi-r.Start_s)/r.Interval_s)+2)
		t0 := r.Start_s + float64(i0)*r.Interval_s
		seg := func(y []float64) plotter.XYs { return decimate(t0, r.Interval_s, y[i0:i1], ts, vs, 2500) }
		rec := line(seg(r.Recorded), colRecorded, vg.Points(1))
		p.Add(rec)
		if legend {
			p.Legend.Add("recorded", rec)
		}
		if r.FitOK {
			b := line(seg(r.Base), colBase, vg.Points(1), vg.Points(4), vg.Points(2))
			p.Add(b)
			if legend {
				p.Legend.Add("base curve", b)
			}
		}
		tv := line(seg(r.TestVoltage), colTest, vg.Points(1.2))
		p.Add(tv)
		if legend {
			p.Legend.Add("test voltage curve", tv)
		}
		// tolerance limits: the nominal's fastest and slowest shapes, at O1, scaled to Ut
		if !math.IsNaN(r.Origin_s) && r.Shape != impulse.Switching && nom.Front_s > 0 {
			for i, k := range [][2]float64{{1 - cfg.Tol.FrontPct/100, 1 - cfg.Tol.TailPct/100}, {1 + cfg.Tol.FrontPct/100, 1 + cfg.Tol.TailPct/100}} {
				sh, err := fit.ForLightning(nom.Front_s*k[0], nom.Tail_s*k[1])
				if err != nil {
					continue
				}
				a30, a90 := sh.LevelDelay_s(0.3, true), sh.LevelDelay_s(0.9, true)
				sh.Td_s = r.Origin_s - (a30 - 0.3*1.67*(a90-a30))
				sh.U = r.TestVoltageV / sh.PeakFactor()
				y := make([]float64, i1-i0)
				sh.Eval(t0, r.Interval_s, y)
				l := line(decimate(t0, r.Interval_s, y, ts, vs, 1500), colBand, vg.Points(0.8), vg.Points(2), vg.Points(2))
				p.Add(l)
				if legend && i == 0 {
					p.Legend.Add(fmt.Sprintf("tolerance limits of %s", nom), l)
				}
			}
		}
		var pts plotter.XYs
		marks := []struct{ t, v float64 }{{r.T30_s, 0.3 * r.TestVoltageV}, {r.T90_s, 0.9 * r.TestVoltageV},
			{r.T50_s, 0.5 * r.TestVoltageV}, {r.Origin_s, 0}, {r.ChopInstant_s, r.ChopVoltageV}}
		for _, m := range marks {
			if !math.IsNaN(m.t) && !math.IsNaN(m.v) && m.t >= lo && m.t <= hi {
				pts = append(pts, plotter.XY{X: m.t * ts, Y: m.v * vs})
			}
		}
		if len(pts) > 0 {
			sc, _ := plotter.NewScatter(pts)
			sc.GlyphStyle.Color = colMark
			sc.GlyphStyle.Radius = vg.Points(3)
			sc.GlyphStyle.Shape = draw.CircleGlyph{}
			p.Add(sc)
			if legend {
				p.Legend.Add("30/90/50 % points, O1, chop", sc)
			}
		}
		p.X.Min, p.X.Max = lo*ts, hi*ts
		p.Legend.Top = true
		p.Legend.TextStyle.Font.Size = vg.Points(7)
		return p
	}
	var note string
	switch r.Shape {
	case impulse.Switching:
		note = fmt.Sprintf("Ut %.1f kV  Tp %.0f us  T2 %.0f us", r.TestVoltageV*vs, r.TimeToPeak_s*ts, r.TimeToHalf_s*ts)
	case impulse.LightningChopped:
		note = fmt.Sprintf("Ut %.1f kV  T1 %.3f us  Tc %.3f us", r.TestVoltageV*vs, r.FrontTime_s*ts, r.ChopTime_s*ts)
	default:
		note = fmt.Sprintf("Ut %.1f kV  T1 %.3f us  T2 %.2f us  overshoot %.1f %%", r.TestVoltageV*vs, r.FrontTime_s*ts, r.TimeToHalf_s*ts, r.OvershootPct)
	}
	name := fmt.Sprintf("%s  %s  (%s)", shotName(file), label, r.Shape)
	left := build(frontLo, frontHi, false, name+"\nfront")
	right := build(r.Start_s, fullHi, true, note+"\nwhole impulse")
	return savePlot(cfg, file, label, left, right)
}

func plotSensor(cfg *Config, file, label string, rec *waveform.Record, y []float64, ylabel string, scale float64) string {
	if cfg.Plots == "none" || cfg.OutDir == "" {
		return ""
	}
	p := plot.New()
	p.Title.Text = fmt.Sprintf("%s  %s", shotName(file), label)
	p.X.Label.Text = "time (us)"
	p.Y.Label.Text = ylabel
	p.Add(plotter.NewGrid())
	p.Add(line(decimate(rec.Start_s, rec.Interval_s, y, 1e6, scale, 3000), colBase, vg.Points(1.2)))
	return savePlot(cfg, file, label, p)
}
