package synth

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform"
)

func TestGenerateMarksAndShapes(t *testing.T) {
	s := Spec{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 100e3, Negative: true, PreTrigger_s: 2e-6, Interval_s: 10e-9, Duration_s: 100e-6, Seed: 4}
	rec, err := Generate(s)
	require.NoError(t, err)
	assert.Contains(t, rec.Meta["synthetic"], "not a measurement")
	_, ext := waveform.Extreme(rec.Channels[0].Samples)
	assert.InEpsilon(t, -100e3, ext, 1e-3)
	// deterministic for a seed
	s.Noise = 0.01
	a, _ := Generate(s)
	b, _ := Generate(s)
	assert.Equal(t, a.Channels[0].Samples, b.Channels[0].Samples)
	// quantised to 8 bits over +-80 kV and clipped there
	s.Range_v, s.Bits = 80e3, 8
	c, err := Generate(s)
	require.NoError(t, err)
	q := 160e3 / 256
	for _, v := range c.Channels[0].Samples {
		require.LessOrEqual(t, math.Abs(v), 80e3)
		require.InDelta(t, 0, math.Remainder(v, q), 1e-6)
	}
	_, clipped := waveform.DetectClipping(&c.Channels[0])
	assert.True(t, clipped)
}

func TestCoilChannelFollowsCircuit(t *testing.T) {
	// With L = 0 the coil gives exactly R M/(R + Rc) dI/dt (the circuit's closed form).
	c := &Coil{M_h: 1e-9, R_ohm: 50, Rc_ohm: 1, Peak_a: 1e3, Tau1_s: 20e-6, Tau2_s: 1e-6}
	rec, err := Generate(Spec{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 1e3, Interval_s: 10e-9, Duration_s: 50e-6, Coil: c})
	require.NoError(t, err)
	v := rec.Channels[1].Samples
	_, d := c.current(10e-6)
	assert.InEpsilon(t, 50*1e-9/51*d, v[1000], 1e-9)
}
