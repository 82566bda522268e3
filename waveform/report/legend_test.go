package report

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// A legend in the top corner stands above the data: after legendAbove, the highest data
// point maps below the legend's lower edge, for a legend of one line and of five.
func TestLegendStandsAboveTheData(t *testing.T) {
	for _, entries := range []int{1, 5} {
		p := newPanel("t", "y")
		xy := plotter.XYs{{X: 0, Y: 0}, {X: 1, Y: 150}, {X: 10, Y: 149}}
		l := line(xy, colTest, vg.Points(1))
		p.Add(l)
		for i := 0; i < entries; i++ {
			p.Legend.Add("an entry of the legend", l)
		}
		c := draw.New(vgsvg.New(12*vg.Centimeter, 8.5*vg.Centimeter))
		legendAbove(p, c)
		dc := p.DataCanvas(c)
		top := p.Y.Norm(150)*float64(dc.Max.Y-dc.Min.Y) + float64(dc.Min.Y)
		r := p.Legend.Rectangle(dc)
		assert.Less(t, top, float64(r.Min.Y), "%d entries: data top %.1f, legend from %.1f", entries, top, float64(r.Min.Y))
	}
}
