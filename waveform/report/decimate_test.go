package report

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Every column of the drawing holds the extremes of the samples it covers: the drawn
// minimum and maximum of each stretch, and so of the record, are the record's.
func TestDecimateKeepsEachColumnsExtremes(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{7, 999, 1000, 1001, 12345, 100000} {
		y := make([]float64, n)
		for i := range y {
			y[i] = math.Sin(float64(i)/50) + 0.3*r.NormFloat64()
		}
		if n > 10 {
			y[n/3] = 9 // a lone spike
			y[n/2] = math.NaN()
		}
		pts := decimate(0, 1, y, 1, 1, columns)
		require.LessOrEqual(t, len(pts), 2*columns+2, n)
		b := max(1, (n+columns-1)/columns)
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, v := range y {
			if !math.IsNaN(v) {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		dlo, dhi := math.Inf(1), math.Inf(-1)
		for k, p := range pts {
			dlo, dhi = math.Min(dlo, p.Y), math.Max(dhi, p.Y)
			i := int(p.X)
			assert.Equal(t, y[i], p.Y, "a drawn point is a sample")
			if k > 0 {
				assert.Less(t, pts[k-1].X, p.X, "in time order")
			}
			// the point is its stretch's minimum or maximum
			s := i / b * b
			smin, smax := math.Inf(1), math.Inf(-1)
			for _, v := range y[s:min(s+b, n)] {
				if !math.IsNaN(v) {
					smin, smax = math.Min(smin, v), math.Max(smax, v)
				}
			}
			assert.True(t, p.Y == smin || p.Y == smax, "n %d, point %d", n, k)
		}
		assert.Equal(t, lo, dlo, n)
		assert.Equal(t, hi, dhi, n)
	}
}
