package readers

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// npyBytes writes an array in NumPy's .npy version 1.0 layout (NEP 1): magic, version,
// header length, a Python dict literal padded to 64 bytes, the data.
func npyBytes(descr string, fortran bool, shape string, data []byte) []byte {
	h := fmt.Sprintf("{'descr': '%s', 'fortran_order': %s, 'shape': %s, }", descr, map[bool]string{true: "True", false: "False"}[fortran], shape)
	h += strings.Repeat(" ", (64-(10+len(h)+1)%64)%64) + "\n"
	var b bytes.Buffer
	b.Write(npyMagic)
	b.Write([]byte{1, 0})
	binary.Write(&b, binary.LittleEndian, uint16(len(h)))
	b.WriteString(h)
	b.Write(data)
	return b.Bytes()
}

func f8(v ...float64) []byte {
	b := make([]byte, 8*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(x))
	}
	return b
}

// The same 10 x 3 array in C and in Fortran order reads into the same columns; a NaN
// and a truncation are named at their byte.
func TestNPYOrders(t *testing.T) {
	rows := 10
	var cOrder, fOrder []float64
	for i := 0; i < rows; i++ {
		cOrder = append(cOrder, float64(i)*1e-9, float64(i*i), -float64(i))
	}
	for c := 0; c < 3; c++ {
		for i := 0; i < rows; i++ {
			fOrder = append(fOrder, cOrder[3*i+c])
		}
	}
	for _, fortran := range []bool{false, true} {
		data := cOrder
		if fortran {
			data = fOrder
		}
		rec, err := ReadNPY(bytes.NewReader(npyBytes("<f8", fortran, "(10, 3)", f8(data...))), "x.npy", NPYOptions{})
		require.NoError(t, err, "fortran %v", fortran)
		require.Len(t, rec.Channels, 2, "a time column and two channels")
		assert.InDelta(t, 1e-9, rec.Interval_s, 1e-21)
		for i := 0; i < rows; i++ {
			assert.Equal(t, float64(i*i), rec.Channels[0].Samples[i])
			assert.Equal(t, -float64(i), rec.Channels[1].Samples[i])
		}
	}
	bad := append([]float64(nil), cOrder...)
	bad[3*4+2] = math.NaN() // row 4, column 2
	_, err := ReadNPY(bytes.NewReader(npyBytes("<f8", false, "(10, 3)", f8(bad...))), "x.npy", NPYOptions{})
	require.True(t, errors.Is(err, ErrNotFinite), "%v", err)
	assert.Contains(t, err.Error(), "row 4, column 2")
	assert.Contains(t, err.Error(), fmt.Sprintf("byte %d", 128+8*(3*4+2)))
	// a header that claims fifty million rows over 30 values: an error at the end of the data
	_, err = ReadNPY(bytes.NewReader(npyBytes("<f8", false, "(50000000, 3)", f8(cOrder...))), "x.npy", NPYOptions{SizeHint: 128 + 240})
	require.True(t, errors.Is(err, ErrTruncated))
	assert.Contains(t, err.Error(), "30 of 150000000 samples present")
}

// np.save(f, np.vstack([t, u])) writes channels in rows: a few rows of many samples read
// as the columns they stand for, with a warning; a (3, 10) array is left as rows.
func TestNPYChannelsInRows(t *testing.T) {
	n := 200
	var data []float64
	for i := 0; i < n; i++ {
		data = append(data, float64(i)*1e-8) // row 0: time
	}
	for i := 0; i < n; i++ {
		data = append(data, float64(i%7)) // row 1: the channel
	}
	rec, err := ReadNPY(bytes.NewReader(npyBytes("<f8", false, fmt.Sprintf("(2, %d)", n), f8(data...))), "x.npy", NPYOptions{})
	require.NoError(t, err)
	require.Len(t, rec.Channels, 1)
	assert.InDelta(t, 1e-8, rec.Interval_s, 1e-20)
	assert.Equal(t, float64(5), rec.Channels[0].Samples[12])
	require.Len(t, rec.Warnings, 1)
	assert.Contains(t, rec.Warnings[0], "read as 2 channels of 200 samples")
	_, err = ReadNPY(bytes.NewReader(npyBytes("<f8", false, "(3, 10)", f8(make([]float64, 30)...))), "x.npy", NPYOptions{Interval_s: 1e-9})
	require.Error(t, err, "a 3 x 10 array is left as 3 rows: too short to transpose on a guess")
	assert.Contains(t, err.Error(), "3 samples")
}
