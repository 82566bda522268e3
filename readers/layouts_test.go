package readers

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// layoutExpect is one entry of testdata/readers/layouts_expected.json, which
// make_layouts.py (NumPy and pandas) wrote from the very cells it wrote to each
// fixture: the reference is Python's float() of each cell times the unit's factor.
type layoutExpect struct {
	Interval float64 `json:"interval_s"`
	Start    float64 `json:"start_s"`
	Channels []struct {
		Name   string    `json:"name"`
		Unit   string    `json:"unit"`
		Values []float64 `json:"values"`
	} `json:"channels"`
	Notes []string `json:"notes"`
	Error string   `json:"error"`
	Words []string `json:"words"`
}

func loadLayoutExpect(t *testing.T) map[string]layoutExpect {
	b, err := os.ReadFile("../testdata/readers/layouts_expected.json")
	require.NoError(t, err)
	var m map[string]layoutExpect
	require.NoError(t, json.Unmarshal(b, &m))
	require.NotEmpty(t, m)
	return m
}

var errByName = map[string]error{"unsupported": ErrUnsupported, "time base": ErrTimeBase, "no interval": ErrNoInterval}

// Each layout of issue 19 and each pandas file of issue 11, read from its fixture and
// compared sample by sample with what the script that wrote it computed.
func TestLayoutFixtures(t *testing.T) {
	exp := loadLayoutExpect(t)
	names := make([]string, 0, len(exp))
	for k := range exp {
		names = append(names, k)
	}
	sort.Strings(names)
	for _, name := range names {
		e := exp[name]
		t.Run(name, func(t *testing.T) {
			rec, err := ReadFile(filepath.Join("../testdata/readers", name), Options{})
			if e.Error != "" {
				require.Error(t, err)
				assert.ErrorIs(t, err, errByName[e.Error])
				var pe *ParseError
				require.True(t, errors.As(err, &pe))
				assert.Positive(t, pe.Line, err.Error())
				for _, w := range e.Words {
					assert.Contains(t, err.Error(), w)
				}
				return
			}
			require.NoError(t, err)
			assert.NotEmpty(t, rec.Layout)
			assert.InEpsilon(t, e.Interval, rec.Interval_s, 1e-9, "interval")
			// The start to a thousandth of a sample.
			assert.InDelta(t, e.Start, rec.Start_s, 1e-3*e.Interval, "start")
			require.Len(t, rec.Channels, len(e.Channels))
			for k, ch := range rec.Channels {
				want := e.Channels[k]
				assert.Equal(t, want.Name, ch.Name)
				assert.Equal(t, want.Unit, ch.Unit)
				require.Len(t, ch.Samples, len(want.Values))
				peak := 0.0
				for _, v := range want.Values {
					peak = math.Max(peak, math.Abs(v))
				}
				require.Positive(t, peak, "an all-zero reference proves nothing")
				for i, v := range ch.Samples {
					// The same decimal cell through strconv and Python's float(), then
					// one multiplication by the same power of ten: equal to rounding.
					require.InDelta(t, want.Values[i], v, 1e-12*peak, "%s sample %d", ch.Name, i)
				}
			}
			notes := strings.Join(rec.Notes, "\n")
			for _, n := range e.Notes {
				assert.Contains(t, notes, n)
			}
			assert.Empty(t, rec.Warnings)
		})
	}
}
