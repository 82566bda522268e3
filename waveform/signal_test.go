package waveform

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A step through a first-order high-pass is a pure exponential, exp(-t/tau) (closed
// form of the C-R circuit); its exact inverse gives the step back.
func TestUndoDroopRestoresStep(t *testing.T) {
	dt, tau := 1e-8, 20e-6
	n := 10000
	v := make([]float64, n)
	for i := range v {
		if i >= 100 {
			v[i] = 5 * math.Exp(-float64(i-100)*dt/tau)
		}
	}
	UndoDroop(v, dt, tau)
	for i := 100; i < n; i++ {
		// The step falls between samples 99 and 100; the trapezoid across that jump
		// adds half a sample's integral, 5 dt/(2 tau), and is exact elsewhere to
		// (dt/tau)^2 over the record.
		require.InDelta(t, 5+5*dt/(2*tau), v[i], 5e-6, "sample %d", i)
	}
	assert.Equal(t, 0.0, v[50])
}

func TestCumTrapzAndDerivative(t *testing.T) {
	// integral of 2t from 0 is t^2; trapezoid is exact for linear integrands
	dt := 0.1
	x := make([]float64, 11)
	for i := range x {
		x[i] = 2 * float64(i) * dt
	}
	c := CumTrapz(x, dt, nil)
	assert.InDelta(t, 1.0, c[10], 1e-12)
	d := Derivative(c, dt, nil)
	assert.InDelta(t, 1.0, d[5], 1e-12) // d(t^2)/dt at t = 0.5
}

func TestCrossings(t *testing.T) {
	x := []float64{0, 1, 2, 3, 2, 1, 0}
	assert.InDelta(t, 1.5, CrossUp(x, 1.5, 0, len(x)), 1e-12)
	assert.InDelta(t, 4.5, CrossDown(x, 1.5, 3, len(x)), 1e-12)
	assert.Equal(t, -1.0, CrossUp(x, 5, 0, len(x)))
	assert.InDelta(t, 1.5, LastCrossUp(x, 1.5, 0, len(x)), 1e-12)
}

func TestClippingDetection(t *testing.T) {
	// A smooth peak quantised to 8 bits sits in its top code for many samples; it is
	// not clipping. The same curve cut at 90 % is.
	n := 4000
	smooth := make([]float64, n)
	for i := range smooth {
		u := float64(i-2000) / 400
		smooth[i] = math.Round(200*math.Exp(-u*u)) / 256 * 10
	}
	_, clipped := DetectClipping(&Channel{Samples: smooth})
	assert.False(t, clipped)
	cut := make([]float64, n)
	for i, v := range smooth {
		cut[i] = math.Min(v, 0.9*smooth[2000])
	}
	c, clipped := DetectClipping(&Channel{Samples: cut})
	assert.True(t, clipped)
	assert.Greater(t, c.Length, 50)
	// with a stated range, reaching the edge is clipping
	_, clipped = DetectClipping(&Channel{Samples: smooth, HasRange: true, RangeMin: -smooth[2000], RangeMax: smooth[2000], ADCBits: 8})
	assert.True(t, clipped)
}

func TestBaselineAndNoise(t *testing.T) {
	x := make([]float64, 2000)
	for i := range x {
		x[i] = 3 + 0.01*math.Sin(float64(i)*1.7) // a bounded, zero-mean wobble
		if i >= 1000 {
			x[i] += 100
		}
	}
	pre := PreTriggerLen(x)
	assert.InDelta(t, 800, pre, 1)
	b := EstimateBaseline(x, pre)
	assert.InDelta(t, 3, b.Level, 1e-3)
	assert.InDelta(t, 0.01/math.Sqrt2, b.NoiseRMS, 1e-3)
}

func TestSmoothLen(t *testing.T) {
	for _, c := range [][2]int{{1, 1}, {7, 8}, {97, 100}, {200001, 202500}} {
		assert.Equal(t, c[1], SmoothLen(c[0]), c[0])
	}
}

func TestNewRecordValidates(t *testing.T) {
	ok := make([]float64, 10)
	_, err := NewRecord("x", 1e-9, 0, []Channel{{Name: "a", Samples: ok}})
	require.NoError(t, err)
	_, err = NewRecord("x", 0, 0, []Channel{{Name: "a", Samples: ok}})
	assert.ErrorIs(t, err, ErrInvalid)
	_, err = NewRecord("x", 1e-9, 0, []Channel{{Name: "a", Samples: ok}, {Name: "b", Samples: ok[:9]}})
	assert.ErrorIs(t, err, ErrInvalid)
	bad := append([]float64(nil), ok...)
	bad[3] = math.NaN()
	_, err = NewRecord("x", 1e-9, 0, []Channel{{Name: "a", Samples: bad}})
	assert.ErrorIs(t, err, ErrInvalid)
	_, err = NewRecord("x", 1e-9, 0, []Channel{{Name: "a", Samples: ok[:3]}})
	assert.ErrorIs(t, err, ErrInvalid)
	// nanoseconds read as seconds: a 10 s interval, and the likely slip named
	_, err = NewRecord("x", 9.999999999999902, 0, []Channel{{Name: "a", Samples: ok}})
	assert.ErrorIs(t, err, ErrInvalid)
	assert.ErrorContains(t, err, "sample interval 10 s is outside")
	assert.ErrorContains(t, err, "ns or us read as seconds")
}

// The test voltage function of IEC 60060-1:2010 at 1 MHz passes 31.25 % of the power.
func ExampleTestVoltageGain() {
	fmt.Printf("%.4f %.3f\n", TestVoltageGain(1e6), TestVoltageGain(0.5e6))
	// Output: 0.3125 0.645
}

// Samples the instrument marked as over range are clipping, even where their values
// sit inside the stated range (a range the reader could only estimate).
func TestDetectClippingOverRange(t *testing.T) {
	x := make([]float64, 100)
	for i := range x {
		x[i] = math.Sin(float64(i) / 10)
	}
	c := Channel{Samples: x, HasRange: true, RangeMin: -2, RangeMax: 2}
	_, ok := DetectClipping(&c)
	require.False(t, ok)
	c.OverRange = 3
	cl, ok := DetectClipping(&c)
	require.True(t, ok)
	assert.Equal(t, 3, cl.Length)
}
