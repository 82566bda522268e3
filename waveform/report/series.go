package report

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"sort"
	"strings"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/shot"
)

// verdict marks on the series charts: a colour and a shape each, so they read in print
// in black and white too.
var verdictMarks = []struct {
	v     shot.Verdict
	c     color.Color
	shape draw.GlyphDrawer
	label string
}{
	{shot.Pass, color.RGBA{23, 97, 23, 255}, draw.CircleGlyph{}, "pass"},
	{shot.Fail, color.RGBA{160, 0, 0, 255}, draw.TriangleGlyph{}, "fail"},
	{shot.Incomplete, color.RGBA{138, 60, 0, 255}, draw.BoxGlyph{}, "incomplete"},
	{shot.Discharge, color.RGBA{91, 42, 134, 255}, draw.CrossGlyph{}, "discharge"},
}

// SeriesCharts draws the series at a glance and writes it as SVG: the test voltage, the
// front time (or a switching impulse's time to peak) and the time to half-value of each
// divider row against the firing order, with the nominal's tolerance band and each
// verdict marked; and every shot's test voltage curve over its Ut, aligned at O1. It
// writes nothing when no divider row has a test voltage.
func SeriesCharts(w io.Writer, rows []shot.Row, traces []shot.Trace, cfg *shot.Config) error {
	var div []*shot.Row
	for i := range rows {
		if _, ok := rows[i].Value(shot.ColTestVoltage); ok && rows[i].Role == shot.Divider {
			div = append(div, &rows[i])
		}
	}
	if len(div) == 0 {
		return nil
	}
	pos, n := FiringOrder(rows)
	switching := 0
	for _, r := range div {
		if r.Shape == impulse.Switching {
			switching++
		}
	}
	family := func(r *shot.Row) bool { return (r.Shape == impulse.Switching) == (2*switching > len(div)) }
	nom := cfg.Nominal.For(impulse.LightningFull)
	frontCol, frontNom, frontTol, tailTol := shot.ColFrontTime, nom.Front_s, cfg.Tolerances.Front_pct, cfg.Tolerances.Tail_pct
	if 2*switching > len(div) {
		nom = cfg.Nominal.For(impulse.Switching)
		frontCol, frontNom, frontTol, tailTol = shot.ColTimeToPeak, nom.Front_s, cfg.Tolerances.TimeToPeak_pct, cfg.Tolerances.SwitchingTail_pct
	}
	panel := func(c *shot.Column, nominal, pct float64, legend bool) *plot.Plot {
		unit := strings.ReplaceAll(c.Screen, "us", "µs")
		p := newPanel(fmt.Sprintf("%s (%s)", c.Stat, unit), fmt.Sprintf("%s (%s)", c.Label, unit))
		p.X.Label.Text = "shot no., in firing order"
		if nominal > 0 {
			for _, k := range []float64{1 - pct/100, 1 + pct/100} {
				band := line(plotter.XYs{{X: 0.5, Y: nominal * k * c.Scale}, {X: float64(n) + 0.5, Y: nominal * k * c.Scale}}, colBand, vg.Points(0.8), vg.Points(3), vg.Points(2))
				p.Add(band)
				if legend && k < 1 {
					p.Legend.Add("tolerance band", band)
				}
			}
		}
		for _, m := range verdictMarks {
			var pts plotter.XYs
			for _, r := range div {
				if v, ok := r.Value(c); ok && r.Verdict == m.v && family(r) {
					pts = append(pts, plotter.XY{X: float64(pos[r.File]), Y: v * c.Scale})
				}
			}
			if len(pts) == 0 {
				continue
			}
			sc, _ := plotter.NewScatter(pts)
			sc.GlyphStyle = draw.GlyphStyle{Color: m.c, Radius: vg.Points(2.6), Shape: m.shape}
			p.Add(sc)
			if legend {
				p.Legend.Add(m.label, sc)
			}
		}
		p.X.Min, p.X.Max = 0.5, float64(n)+0.5
		p.X.Tick.Marker = orderTicks(n)
		// room for the glyphs at the extremes, which would otherwise sit on the frame
		if pad := 0.06 * (p.Y.Max - p.Y.Min); pad > 0 {
			p.Y.Min, p.Y.Max = p.Y.Min-pad, p.Y.Max+pad
		}
		return p
	}
	ut := panel(shot.ColTestVoltage, nom.Peak_v, cfg.Tolerances.TestVoltage_pct, true)
	front := panel(frontCol, frontNom, frontTol, false)
	tail := panel(shot.ColTimeToHalf, nom.Tail_s, tailTol, false)
	over := newPanel("every shot's test voltage curve over its Ut", "voltage / Ut")
	over.X.Label.Text = "time from O1 (µs)"
	for _, m := range verdictMarks {
		for _, t := range traces {
			if t.Verdict != m.v {
				continue
			}
			xy := make(plotter.XYs, len(t.T_s))
			for i := range t.T_s {
				xy[i] = plotter.XY{X: float64(t.T_s[i]) * 1e6, Y: float64(t.Y[i])}
			}
			over.Add(line(xy, m.c, vg.Points(0.6)))
		}
	}
	over.Y.Min = math.Min(over.Y.Min, 0)
	c := vgsvg.New(24*vg.Centimeter, 15*vg.Centimeter)
	tiles := draw.Tiles{Rows: 2, Cols: 2, PadX: vg.Millimeter * 8, PadY: vg.Millimeter * 6}
	canv := plot.Align([][]*plot.Plot{{ut, front}, {tail, over}}, tiles, draw.New(c))
	for i, row := range [][]*plot.Plot{{ut, front}, {tail, over}} {
		for j, p := range row {
			legendAbove(p, canv[i][j])
			p.Draw(canv[i][j])
		}
	}
	_, err := c.WriteTo(w)
	return err
}

// FiringOrder numbers every shot of the series (each identity once, error rows too, so
// that a shot that could not be evaluated leaves its gap) in the order it was fired:
// by its firing time, a shot with none right after the one before it in input order.
// The report's table and the series charts share the numbers.
func FiringOrder(rows []shot.Row) (no map[string]int, n int) {
	type file struct {
		id  string
		key time.Time
	}
	var files []file
	no = map[string]int{}
	var last time.Time
	for i := range rows {
		r := &rows[i]
		if _, seen := no[r.File]; seen {
			continue
		}
		no[r.File] = 0
		if !r.Fired.IsZero() {
			last = r.Fired
		}
		files = append(files, file{r.File, last})
	}
	sort.SliceStable(files, func(a, b int) bool { return files[a].key.Before(files[b].key) })
	for i, f := range files {
		no[f.id] = i + 1
	}
	return no, len(files)
}

// orderTicks labels shot numbers: every one for a few shots, round steps for many.
func orderTicks(n int) plot.TickerFunc {
	return func(lo, hi float64) []plot.Tick {
		step := 1
		for n/step > 12 {
			step *= map[bool]int{true: 2, false: 5}[step%10 == 1 || step%10 == 5]
			if step%10 == 0 {
				step = step / 10 * 10
			}
		}
		var ts []plot.Tick
		for i := 1; i <= n; i++ {
			if i == 1 || i%step == 0 {
				ts = append(ts, plot.Tick{Value: float64(i), Label: fmt.Sprint(i)})
			}
		}
		return ts
	}
}
