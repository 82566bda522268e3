package readers

import (
	"errors"
	"fmt"
	"runtime"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A cell that is not a number inside the data is an error at its line and column,
// wherever it stands: the rows above it are never taken for a preamble, which would
// cut the record without a word.
func TestBadCellInsideTheData(t *testing.T) {
	data := func(bad int, row string) string {
		var b strings.Builder
		b.WriteString("time_s,voltage_v\n")
		for i := 0; i < 3000; i++ {
			if i+2 == bad {
				b.WriteString(row + "\n")
				continue
			}
			fmt.Fprintf(&b, "%g,%g\n", float64(i)*1e-8, float64(i%97))
		}
		return b.String()
	}
	for _, line := range []int{3, 20, 502, 1500, 2999} {
		for _, c := range []struct {
			row      string
			col      int
			contains string
		}{
			{"5.0e-06,overload", 9, "overload"},
			{"time_s,voltage_v", 1, "time_s"},
		} {
			_, err := ReadText(strings.NewReader(data(line, c.row)), "x.csv", TextOptions{})
			if c.col == 1 && line < 20 {
				// a header repeated after fewer rows than a record: not told from a preamble
				continue
			}
			require.Error(t, err, "line %d: %s", line, c.row)
			var pe *ParseError
			require.True(t, errors.As(err, &pe))
			assert.True(t, errors.Is(err, ErrSyntax), "%v", err)
			assert.Equal(t, line, pe.Line, "%v", err)
			assert.Equal(t, c.col, pe.Column, "%v", err)
			assert.Contains(t, err.Error(), c.contains)
		}
	}
}

// A last row without its line end, as a cut copy leaves it, is left out with a warning:
// "9000" cut to "9" still reads as a number, a wrong one.
func TestUnendedLastLineLeftOut(t *testing.T) {
	body := "t,U\n0,1000\n1e-9,2000\n2e-9,3000\n3e-9,4000\n4e-9,5000\n5e-9,6000\n6e-9,7000\n7e-9,8000\n8e-9,9"
	rec, err := ReadText(strings.NewReader(body), "x.csv", TextOptions{})
	require.NoError(t, err)
	require.Len(t, rec.Warnings, 1)
	assert.Contains(t, rec.Warnings[0], "line 10, the last, has no line end and is left out")
	require.Len(t, rec.Channels[0].Samples, 8)
	assert.Equal(t, 8000.0, rec.Channels[0].Samples[7])
	rec, err = ReadText(strings.NewReader(body+"000\n"), "x.csv", TextOptions{})
	require.NoError(t, err)
	assert.Empty(t, rec.Warnings)
	require.Len(t, rec.Channels[0].Samples, 9)
	// cut inside the time field: the row does not scan and is left out the same way
	rec, err = ReadText(strings.NewReader(body[:len(body)-4]), "x.csv", TextOptions{})
	require.NoError(t, err)
	require.Len(t, rec.Channels[0].Samples, 8)
	assert.Contains(t, rec.Warnings[0], "left out")
}

// A file with a capture's header row and no rows yet is a capture (cut before its
// data), so that a folder scan gives it its error row rather than leaving it out.
func TestHeaderOnlyIsACapture(t *testing.T) {
	for _, head := range []string{"time_s,voltage_v\n", "t [s];U [V]\n", "Time,CH1\n", "x-axis,1,2\nsecond,Volt,Volt\n"} {
		ok, what := IsCapture([]byte(head))
		assert.True(t, ok, "%q: %s", head, what)
	}
	ok, _ := IsCapture([]byte("Bay 2, shots fired after lunch.\nShot 3: the earth switch was checked twice.\n"))
	assert.False(t, ok, "prose stays out")
}

// A stated trigger point sets the start of a record with no time column: the trigger
// sample is t = 0.
func TestTriggerPointSetsStart(t *testing.T) {
	var b strings.Builder
	b.WriteString("Sample Interval,1e-08\nTrigger Point,250\n\n")
	for i := 0; i < 1000; i++ {
		fmt.Fprintf(&b, "%d\n", i%7)
	}
	rec, err := ReadText(strings.NewReader(b.String()), "x.csv", TextOptions{})
	require.NoError(t, err)
	assert.InDelta(t, -2.5e-6, rec.Start_s, 1e-15)
	assert.InDelta(t, 0, rec.Time_s(250), 1e-15)
}

// Blank lines inside the data are counted, not remembered one by one: ten million of
// them cost what five million do (the head the dialect is read from is bounded), and a
// line after them is still named rightly.
func TestBlankLinesCostNoMemory(t *testing.T) {
	alloc := func(blanks int) uint64 {
		var b strings.Builder
		b.WriteString("t,U\n")
		for i := 0; i < 8; i++ {
			fmt.Fprintf(&b, "%g,%d\n", float64(i)*1e-9, i)
		}
		b.WriteString(strings.Repeat("\n", blanks))
		fmt.Fprintf(&b, "8e-9,NaN\n")
		data := b.String()
		var before, after runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&before)
		_, err := ReadText(strings.NewReader(data), "x.csv", TextOptions{})
		runtime.ReadMemStats(&after)
		require.Error(t, err)
		var pe *ParseError
		require.True(t, errors.As(err, &pe))
		assert.Equal(t, 1+8+blanks+1, pe.Line, "the line after the blanks")
		return after.TotalAlloc - before.TotalAlloc
	}
	five, ten := alloc(5_000_000), alloc(10_000_000)
	assert.Less(t, float64(ten), 1.1*float64(five)+(1<<20), "5 M blank lines: %d bytes, 10 M: %d", five, ten)
}

// A channel of NaN, as pandas' to_csv writes it (na_rep defaults to an empty string,
// pandas documentation), is named in a warning when it is left out, never dropped in
// silence.
func TestNamedEmptyColumnWarns(t *testing.T) {
	var b strings.Builder
	b.WriteString("time_s,voltage_v,current_a\n")
	for i := 0; i < 50; i++ {
		fmt.Fprintf(&b, "%g,,%g\n", float64(i)*5e-9, float64(i))
	}
	rec, err := ReadText(strings.NewReader(b.String()), "nan.csv", TextOptions{})
	require.NoError(t, err)
	require.Len(t, rec.Channels, 1)
	assert.Equal(t, "current", rec.Channels[0].Name) // its unit suffix read as the unit
	require.NotEmpty(t, rec.Warnings)
	assert.Contains(t, rec.Warnings[0], `column 2 ("voltage_v") empty on every row`)
}
