package synth

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/readers"
)

// The winding's current against scipy.signal.lsim of the same ladder
// (testdata/reference/spectrum_refs.py, its state space written there apart from this
// code), as built and with node 2's capacitance 2 % larger.
func TestWindingAgainstLsim(t *testing.T) {
	rec, err := readers.ReadFile("../../testdata/reference/ladder_lsim.npy", readers.Options{})
	require.NoError(t, err)
	require.Len(t, rec.Channels, 3)
	u := rec.Channels[0].Samples
	for _, c := range []struct {
		name    string
		altered int
		want    []float64
	}{{"as built", 0, rec.Channels[1].Samples}, {"node 2 at 102 %", 2, rec.Channels[2].Samples}} {
		t.Run(c.name, func(t *testing.T) {
			w := &Winding{Sections: 4, L_h: 10e-3, R_ohm: 550, Cg_f: 0.5e-9, Shunt_ohm: 10, Altered: c.altered, Factor: 1.02}
			got, err := w.Current(u, rec.Interval_s)
			require.NoError(t, err)
			var peak, worst float64
			for i := range got {
				peak = math.Max(peak, math.Abs(c.want[i]))
				worst = math.Max(worst, math.Abs(got[i]-c.want[i]))
			}
			assert.Less(t, worst/peak, 1e-9, "largest difference over the peak")
		})
	}
	_, err = (&Winding{}).Current(u, rec.Interval_s)
	assert.Error(t, err)
}
