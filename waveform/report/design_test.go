package report

import (
	"bytes"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/circuit"
)

// A switching design has no rule of thumb beside it; the shape it gives is computed,
// and the other topology's design follows (values: testdata/reference/circuit_refs.json,
// "generator side 50 nF, 5 nF, 250/2500": Rf 13774.1 ohm, Rt 57247.8 ohm).
func TestDesignSwitching(t *testing.T) {
	var b bytes.Buffer
	g := circuit.Generator{C1_f: 50e-9, C2_f: 5e-9, Tail: circuit.TailGeneratorSide}
	require.NoError(t, Design(&b, g, circuit.Target{Front_s: 250e-6, Tail_s: 2500e-6, Switching: true}))
	out := b.String()
	for _, want := range []string{"resistors for 250/2500 us: C1 50 nF, C2 5 nF", "13774.1 ohm", "57247.8 ohm", "gives Tp            250.0 us",
		"gives T2            2500 us", "no rule of thumb", "with the tail resistor on the load side: Rf 19219.8 ohm, Rt 41027.5 ohm"} {
		assert.Contains(t, out, want)
	}
	assert.NotContains(t, out, "per stage", "no stage count, no values per stage")
}
