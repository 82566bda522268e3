package report

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/hvshot/hvshot/fit"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/shot"
)

// PlotFormat is the file format of the plots.
type PlotFormat string

const (
	SVG    PlotFormat = "svg"
	PNG    PlotFormat = "png"
	NoPlot PlotFormat = "none"
)

// ParsePlotFormat reads a plot format name.
func ParsePlotFormat(s string) (PlotFormat, error) {
	switch f := PlotFormat(s); f {
	case SVG, PNG, NoPlot:
		return f, nil
	}
	return "", fmt.Errorf("svg, png or none, not %q", s)
}

// A panel is 13 cm wide: about 490 pixels at 96 per inch. Lines are drawn from the
// minimum and maximum of each of columns stretches of the record, about twice the
// panel's pixel width in points, so every pixel column holds the extremes of the samples
// it covers: the drawing looks as all the samples would (visually lossless), while a
// plot's size and cost stay bounded whatever the record's length. Smooth curves (the
// base curve, the tolerance limits) need fewer.
const (
	columns       = 500
	smoothColumns = 200
)

// decimate returns the points of y (times t0 + i dt) to draw in the given number of
// columns: each column's minimum and maximum, in time order; NaN samples (past a chop)
// are left out.
func decimate(t0, dt float64, y []float64, tScale, yScale float64, cols int) plotter.XYs {
	n := len(y)
	b := max(1, (n+cols-1)/cols)
	out := make(plotter.XYs, 0, 2*min(n, cols)+2)
	for i := 0; i < n; i += b {
		j := min(i+b, n)
		lo, hi := -1, -1
		for k := i; k < j; k++ {
			if math.IsNaN(y[k]) {
				continue
			}
			if lo < 0 || y[k] < y[lo] {
				lo = k
			}
			if hi < 0 || y[k] > y[hi] {
				hi = k
			}
		}
		if lo < 0 {
			continue
		}
		out = append(out, plotter.XY{X: (t0 + float64(min(lo, hi))*dt) * tScale, Y: y[min(lo, hi)] * yScale})
		if lo != hi {
			out = append(out, plotter.XY{X: (t0 + float64(max2(lo, hi))*dt) * tScale, Y: y[max2(lo, hi)] * yScale})
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

// saveGrid draws rows of panels (a nil panel leaves its tile empty) in the format and
// writes them to w. Two panels fill an A4 page's width, each row 8.5 cm high; PNG is
// drawn at twice a screen's resolution, for print.
func saveGrid(w io.Writer, format PlotFormat, grid [][]*plot.Plot) error {
	width, height := vg.Length(len(grid[0]))*12*vg.Centimeter, vg.Length(len(grid))*8.5*vg.Centimeter
	var c vg.CanvasWriterTo
	if format == PNG {
		c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(192))}
	} else {
		c = vgsvg.New(width, height)
	}
	// a margin on the right: the right column's last tick label and legend end there
	dc := draw.Crop(draw.New(c), 0, -5*vg.Millimeter, 0, 0)
	tiles := draw.Tiles{Rows: len(grid), Cols: len(grid[0]), PadX: vg.Millimeter * 6, PadY: vg.Millimeter * 6}
	canv := plot.Align(grid, tiles, dc)
	for j, row := range grid {
		for i, p := range row {
			if p == nil {
				continue
			}
			legendAbove(p, canv[j][i])
			p.Draw(canv[j][i])
		}
	}
	_, err := c.WriteTo(w)
	return err
}

// legendAbove raises the top of a panel's y range until its legend, drawn in the top
// corner, stands above the data instead of over the curves.
func legendAbove(p *plot.Plot, c draw.Canvas) {
	dc := p.DataCanvas(c)
	r := p.Legend.Rectangle(dc)
	h, area := float64(r.Max.Y-r.Min.Y), float64(dc.Max.Y-dc.Min.Y)
	if h <= 0 || area <= 0 || p.Y.Max <= p.Y.Min {
		return
	}
	frac := math.Min(0.6, (h+float64(vg.Points(4)))/area)
	p.Y.Max += (p.Y.Max - p.Y.Min) * frac / (1 - frac)
}

// sans is the plots' face, the report page's family (the report's stylesheet falls back
// to its metric twins, Arial and Helvetica).
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

// newPanel is a panel in the plots' style: sans-serif text legible at 100 % and in
// print, a grid, and tick labels with one number of decimals per axis.
func newPanel(title, ylabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = font.From(sans, 10)
	p.X.Label.Text, p.Y.Label.Text = "time (µs)", ylabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(sans, 9.5)
		a.Tick.Label.Font = font.From(sans, 9)
		a.Tick.Marker = tidyTicks{}
	}
	p.Legend.TextStyle.Font = font.From(sans, 9.5)
	p.Legend.Top = true
	p.Add(plotter.NewGrid())
	return p
}

// tidyTicks are gonum's default ticks, labelled with the fewest decimals that write
// every labelled tick of the axis exactly, so one axis never mixes 0 and 0.50.
type tidyTicks struct{}

func (tidyTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	dec := 0
	for _, t := range ts {
		if t.Label == "" {
			continue
		}
		for dec < 6 {
			if v, _ := strconv.ParseFloat(strconv.FormatFloat(t.Value, 'f', dec, 64), 64); math.Abs(v-t.Value) <= 1e-9*math.Max(1, math.Abs(t.Value)) {
				break
			}
			dec++
		}
	}
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = shot.FormatDigits(ts[i].Value, dec, true)
		}
	}
	return ts
}

// addMarks draws points that define the parameters, in the legend when legend is set.
func addMarks(p *plot.Plot, pts plotter.XYs, legend string) {
	if len(pts) == 0 {
		return
	}
	sc, _ := plotter.NewScatter(pts)
	sc.GlyphStyle.Color = colMark
	sc.GlyphStyle.Radius = vg.Points(2.5)
	sc.GlyphStyle.Shape = draw.CircleGlyph{}
	p.Add(sc)
	if legend != "" {
		p.Legend.Add(legend, sc)
	}
}

var (
	colRecorded = color.RGBA{150, 150, 150, 255}
	colBase     = color.RGBA{31, 119, 180, 255}
	colTest     = color.RGBA{0, 0, 0, 255}
	colBand     = color.RGBA{44, 160, 44, 255}
	colMark     = color.RGBA{214, 39, 40, 255}
)

// quietLine is a line that reports no glyph boxes. gonum/plot asks every plotter for
// them to pad the axes, and a line reports one per point, empty (it draws no glyphs):
// that layout pass was most of a plot's time and memory, for the same picture.
type quietLine struct{ *plotter.Line }

func (quietLine) GlyphBoxes(*plot.Plot) []plot.GlyphBox { return nil }

func line(xy plotter.XYs, c color.Color, width vg.Length, dashes ...vg.Length) quietLine {
	l, _ := plotter.NewLine(xy)
	l.Color = c
	l.Width = width
	l.Dashes = dashes
	return quietLine{l}
}

// Plot draws a row's curves, titled with its shot and channel, and writes the plot in
// format to w: a divider's front and whole impulse side by side, or a sensor's event
// and whole record, the peak marked on each.
func Plot(w io.Writer, c *shot.Curves, title string, format PlotFormat) error {
	if c.Impulse != nil {
		return plotImpulse(w, c, title, format)
	}
	y := c.Signal
	n := len(y)
	ip := 0
	for i, v := range y {
		if math.Abs(v) > math.Abs(y[ip]) {
			ip = i
		}
	}
	peak := y[ip]
	// the event: from where the signal first passes 5 % of its peak to where it stays
	// below 5 %, with a margin of half that span on each side (ours)
	first, last := ip, ip
	for i, v := range y {
		if math.Abs(v) >= 0.05*math.Abs(peak) {
			if i < first {
				first = i
			}
			last = i
		}
	}
	if first > ip {
		first = ip
	}
	m := max(8, (last-first)/2)
	i0, i1 := max(0, first-m), min(n, last+m+1)
	scale, unit := 1e-3, "k"+c.Unit
	at := func(i int) float64 { return c.Start_s + float64(i)*c.Interval_s }
	panel := func(lo, hi int, heading string, legend bool) *plot.Plot {
		p := newPanel(heading, fmt.Sprintf("%s (%s)", c.Quantity, unit))
		l := line(decimate(at(lo), c.Interval_s, y[lo:hi], 1e6, scale, columns), colBase, vg.Points(1.1))
		p.Add(l)
		if legend {
			p.Legend.Add(c.Quantity, l)
		}
		legendPeak := ""
		if legend {
			legendPeak = "peak"
		}
		addMarks(p, plotter.XYs{{X: at(ip) * 1e6, Y: peak * scale}}, legendPeak)
		p.X.Min, p.X.Max = at(lo)*1e6, at(hi-1)*1e6
		return p
	}
	note := fmt.Sprintf("peak %s %s at %s µs", shot.FormatDigits(peak*scale, 4, false), unit, strconv.FormatFloat(at(ip)*1e6, 'g', 4, 64))
	return saveGrid(w, format, append([][]*plot.Plot{{panel(i0, i1, title+"\nthe event", false), panel(0, n, note+"\nwhole record", true)}}, extraPanels(c)...))
}

// plotImpulse draws the recorded, base and test voltage curves with the points that
// define T1 and T2, and the slowest and fastest shapes the nominal's tolerances allow.
func plotImpulse(w io.Writer, c *shot.Curves, title string, format PlotFormat) error {
	r, nom, tol := c.Impulse, c.Nominal, c.Tolerances
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
		p := newPanel(title, "voltage (kV, polarity made positive)")
		i0 := max2(0, int((lo-r.Start_s)/r.Interval_s))
		i1 := min(n, int((hi-r.Start_s)/r.Interval_s)+2)
		t0 := r.Start_s + float64(i0)*r.Interval_s
		seg := func(y []float64, cols int) plotter.XYs { return decimate(t0, r.Interval_s, y[i0:i1], ts, vs, cols) }
		rec := line(seg(r.Recorded, columns), colRecorded, vg.Points(1))
		p.Add(rec)
		if legend {
			p.Legend.Add("recorded", rec)
		}
		if r.FitOK {
			b := line(seg(r.Base, smoothColumns), colBase, vg.Points(1), vg.Points(4), vg.Points(2))
			p.Add(b)
			if legend {
				p.Legend.Add("base curve", b)
			}
		}
		tv := line(seg(r.TestVoltage, columns), colTest, vg.Points(1.2))
		p.Add(tv)
		if legend {
			p.Legend.Add("test voltage curve", tv)
		}
		// tolerance limits: the nominal's fastest and slowest shapes, at O1, scaled to Ut
		if !math.IsNaN(r.Origin_s) && r.Shape != impulse.Switching && nom.Front_s > 0 {
			for i, k := range [][2]float64{{1 - tol.Front_pct/100, 1 - tol.Tail_pct/100}, {1 + tol.Front_pct/100, 1 + tol.Tail_pct/100}} {
				sh, err := fit.ForLightning(nom.Front_s*k[0], nom.Tail_s*k[1])
				if err != nil {
					continue
				}
				a30, a90 := sh.LevelDelay_s(0.3, true), sh.LevelDelay_s(0.9, true)
				sh.Td_s = r.Origin_s - (a30 - 0.3*fit.FrontTimeFactor*(a90-a30))
				sh.U = r.TestVoltage_v / sh.PeakFactor()
				y := make([]float64, i1-i0)
				sh.Eval(t0, r.Interval_s, y)
				l := line(decimate(t0, r.Interval_s, y, ts, vs, smoothColumns), colBand, vg.Points(0.8), vg.Points(2), vg.Points(2))
				p.Add(l)
				if legend && i == 0 {
					p.Legend.Add(fmt.Sprintf("tolerance limits of %s", nom), l)
				}
			}
		}
		var pts plotter.XYs
		marks := []struct{ t, v float64 }{{r.T30_s, 0.3 * r.TestVoltage_v}, {r.T90_s, 0.9 * r.TestVoltage_v},
			{r.T50_s, 0.5 * r.TestVoltage_v}, {r.Origin_s, 0}, {r.ChopInstant_s, r.ChopVoltage_v}}
		for _, m := range marks {
			if !math.IsNaN(m.t) && !math.IsNaN(m.v) && m.t >= lo && m.t <= hi {
				pts = append(pts, plotter.XY{X: m.t * ts, Y: m.v * vs})
			}
		}
		legendMarks := ""
		if legend {
			legendMarks = "30/90/50 % points, O1, chop"
		}
		addMarks(p, pts, legendMarks)
		p.X.Min, p.X.Max = lo*ts, hi*ts
		return p
	}
	// a value that could not be measured is said so, never printed as NaN
	f := func(label string, v, scale float64, digits int, fixed bool, unit string) string {
		if math.IsNaN(v) {
			return label + " not measured"
		}
		return label + " " + shot.FormatDigits(v*scale, digits, fixed) + " " + unit
	}
	var parts []string
	switch r.Shape {
	case impulse.Switching:
		parts = []string{f("Ut", r.TestVoltage_v, vs, 4, false, "kV"), f("Tp", r.TimeToPeak_s, ts, 4, false, "µs"), f("T2", r.TimeToHalf_s, ts, 4, false, "µs")}
	case impulse.LightningChopped:
		parts = []string{f("Ut", r.TestVoltage_v, vs, 4, false, "kV"), f("T1", r.FrontTime_s, ts, 4, false, "µs"), f("Tc", r.ChopTime_s, ts, 4, false, "µs")}
	default:
		parts = []string{f("Ut", r.TestVoltage_v, vs, 4, false, "kV"), f("T1", r.FrontTime_s, ts, 4, false, "µs"), f("T2", r.TimeToHalf_s, ts, 4, false, "µs"), f("β'", r.Overshoot_pct, 1, 1, true, "%")}
	}
	note := strings.Join(parts, "  ")
	left := build(frontLo, frontHi, false, fmt.Sprintf("%s  (%s)\nfront", title, r.Shape))
	right := build(r.Start_s, fullHi, true, note+"\nwhole impulse")
	return saveGrid(w, format, append([][]*plot.Plot{{left, right}}, extraPanels(c)...))
}
