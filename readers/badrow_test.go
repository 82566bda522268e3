package readers

import (
	"errors"
	"fmt"
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
