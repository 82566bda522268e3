package readers

import (
	"bytes"
	"errors"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Implausible values in a raw description are refused naming the key and line, never
// turned into infinite or meaningless times and values.
func TestSidecarBounds(t *testing.T) {
	base := "format = hvraw 1\nsample = int16\n"
	cases := []struct {
		name, line, want string
	}{
		{"interval too long", "interval = 1e308", "interval: 1e+308 s is outside"},
		{"interval below a picosecond", "interval = 1e-320", "interval: 1e-320 s is outside"},
		{"start far away", "interval = 1ns\nstart = 1e308", "start: 1e+308 s is more than an hour"},
		{"gain huge", "interval = 1ns\ngain = 1e308", "gain: 1e+308 is not a plausible gain"},
		{"gain zero", "interval = 1ns\ngain = 0", "gain: 0 is not a plausible gain"},
		{"offset huge", "interval = 1ns\noffset = -1e300", "offset"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := ParseSidecar(strings.NewReader(base+c.line+"\n"), "x.hvraw")
			require.Error(t, err)
			var pe *ParseError
			require.True(t, errors.As(err, &pe))
			assert.Contains(t, err.Error(), c.want)
			assert.Greater(t, pe.Line, 2, "names the line")
		})
	}
	// a record whose span passes an hour is refused, even with a plausible interval
	data := make([]byte, 2*8000)
	_, err := ReadRaw(bytes.NewReader(data), "x.bin", RawSpec{Sample: "int16", Channels: 1, Interval_s: 1})
	require.Error(t, err)
	assert.Contains(t, err.Error(), "more than an hour")
}
