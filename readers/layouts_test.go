package readers

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
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

// rows writes n rows of "t,u" with t = t0 + i*dt printed by format tf.
func rows(n int, t0, dt float64, tf string) string {
	var b strings.Builder
	for i := 0; i < n; i++ {
		b.WriteString(fmtCell(tf, t0+float64(i)*dt))
		b.WriteString(",")
		b.WriteString(fmtCell("%.4f", math.Sin(float64(i)/5)))
		b.WriteString("\n")
	}
	return b.String()
}

func fmtCell(f string, v float64) string { return strings.TrimSpace(fmt.Sprintf(f, v)) }

// Rules of the time base and of refusals (issue 19, build items 2 and 4). Inputs are
// invented; each case states what the file says and what must come of it.
func TestTextTimeBaseRules(t *testing.T) {
	big := strings.Repeat("Setting,"+strings.Repeat("x", 60)+"\n", 15000) // 1 MB of preamble
	cases := []struct {
		name     string
		in       string
		opt      Options
		err      error
		line     int
		words    []string // in the error, or in the warnings and notes
		absent   []string // not in the error
		interval float64
		tol      float64 // relative, on the interval; 1e-9 when 0
		start    float64
		n        int
	}{
		{name: "stated interval contradicts the time column", in: "Sample Interval: 2 ns\nt,U\n" + rows(20, 0, 1e-9, "%.3e"),
			err: ErrTimeBase, line: 1, words: []string{"2e-09 s", "1e-09 s", "--interval"}},
		{name: "stated interval and a coarse time column that agrees", in: "Sample Interval: 2e-6\nt,U\n" + rows(50, -1e-3, 2e-6, "%.5f"),
			interval: 2e-6, start: -1e-3, n: 50, words: []string{"from line 1"}},
		{name: "--interval replaces a time column, with a warning", in: "t,U\n" + rows(20, 0, 1, "%g"), opt: Options{Interval_s: 1e-8},
			interval: 1e-8, n: 20, words: []string{"--interval 1e-08 s replaces the step of 1 s"}},
		{name: "--interval replaces a stated interval, with a warning", in: "Sample Interval: 2 ns\n" + rows(20, 0, 1, "%g")[:0] + strings.Repeat("1.5\n", 20), opt: Options{Interval_s: 1e-8},
			interval: 1e-8, n: 20, words: []string{"replaces the interval of 2e-09 s that line 1 states"}},
		{name: "a default interval does not replace a time column", in: "t,U\n" + rows(20, 0, 2e-9, "%.3e"), opt: Options{DefaultInterval_s: 1e-8},
			interval: 2e-9, n: 20},
		{name: "a default interval for a file that states none", in: "U\n" + strings.Repeat("1.5\n", 20), opt: Options{DefaultInterval_s: 1e-8},
			interval: 1e-8, n: 20, words: []string{"the default of 1e-08 s applies"}},
		{name: "a stated interval wins over a default", in: "Sample Interval: 2 ns\n" + strings.Repeat("1.5\n", 20), opt: Options{DefaultInterval_s: 1e-8},
			interval: 2e-9, n: 20},
		{name: "a lone letter over one column is its name", in: "V\n" + strings.Repeat("1.5\n", 20), opt: Options{Interval_s: 1e-9},
			interval: 1e-9, n: 20, words: []string{"line 1 gave the names"}},
		{name: "--interval on a sample index", in: rows(20, 0, 1, "%.0f"), opt: Options{Interval_s: 1e-8},
			interval: 1e-8, n: 20, words: []string{"counts samples"}},
		{name: "a sample index and no interval", in: rows(20, 0, 1, "%.0f"),
			err: ErrNoInterval, words: []string{"counts samples", "first data line 1", "--interval"}, absent: []string{"--time-column"}},
		{name: "one column and no interval", in: "U\n" + strings.Repeat("1.5\n", 20),
			err: ErrNoInterval, words: []string{"header line 1 \"U\"", "first data line 2 \"1.5\"", "--interval"}, absent: []string{"--time-column"}},
		{name: "an unknown time name suggests --time-column", in: "Zeitachse,U\n" + rows(20, 0, 1e-9, "%.3e"),
			err: ErrNoInterval, words: []string{"--time-column first", "--interval"}},
		{name: "--time-column first takes the unit from the header", in: "t_us,u_kv\n" + rows(20, 0, 0.5, "%g"), opt: Options{TimeColumn: "first"},
			interval: 0.5e-6, n: 20},
		{name: "empty cells between rows of values", in: "t,U\n" + rows(10, 0, 1e-9, "%.3e") + "1.0e-8,\n" + rows(10, 1.1e-8, 1e-9, "%.3e"),
			err: ErrEmptyCell, line: 12, words: []string{"only the first and last rows"}},
		{name: "fewer rows than stated", in: "Record Length: 30\nSample Interval: 1 ns\n" + strings.Repeat("1.5\n", 20),
			err: ErrTruncated, line: 22, words: []string{"states 30 points"}},
		{name: "a unit stated twice, differently", in: "Vertical Units: mV\nt,U [V]\n" + rows(20, 0, 1e-9, "%.3e"),
			err: ErrHeader, line: 2, words: []string{"\"V\"", "\"mV\""}},
		{name: "time unit stated twice, differently", in: "Horizontal Units: us\nTime (s),U\n" + rows(20, 0, 1e-9, "%.3e"),
			err: ErrTimeBase, line: 2},
		{name: "a value past the head in a column empty in it", in: "t,,U\n" + strings.ReplaceAll(rows(14000, 0, 1e-9, "%.5e"), ",", ",,") + "1.4e-5,7,1\n",
			err: ErrRagged, line: 14002},
		{name: "an index unit over a column that does not count", in: "X,CH1\nSequence,Volt\n" + rows(20, 0, 2, "%.0f"),
			err: ErrHeader, line: 2, words: []string{"should count samples"}},
		{name: "data after 1 MB of preamble", in: big + "Sample Interval: 1 ns\n" + strings.Repeat("2.5\n", 20),
			interval: 1e-9, n: 20, words: []string{"searched for data only"}},
		{name: "a time column with jitter within its printed digits", in: "t,U\n" + rows(50, 1.5, 703.125e-6, "%+.7E"),
			// the span of 49 steps, its ends printed to 1e-7 s: within 3e-9 s of the step
			interval: 703.125e-6, tol: 5e-6, start: 1.5, n: 50, words: []string{"printed to about"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec, err := Read(strings.NewReader(c.in), "rule.csv", c.opt)
			if c.err != nil {
				require.Error(t, err)
				assert.ErrorIs(t, err, c.err)
				var pe *ParseError
				require.True(t, errors.As(err, &pe), "%T", err)
				assert.Equal(t, "rule.csv", pe.File)
				if c.line > 0 {
					assert.Equal(t, c.line, pe.Line, err.Error())
				}
				for _, w := range c.words {
					assert.Contains(t, err.Error(), w)
				}
				for _, w := range c.absent {
					assert.NotContains(t, err.Error(), w)
				}
				return
			}
			require.NoError(t, err)
			assert.InEpsilon(t, c.interval, rec.Interval_s, max(c.tol, 1e-9))
			assert.InDelta(t, c.start, rec.Start_s, 1e-3*c.interval)
			assert.Equal(t, c.n, rec.Len())
			said := strings.Join(append(append([]string{}, rec.Notes...), rec.Warnings...), "\n")
			for _, w := range c.words {
				assert.Contains(t, said, w)
			}
		})
	}
}

// An acquisition time stated in the preamble becomes Record.Trigger.
func TestTextTriggerTime(t *testing.T) {
	in := "Trigger Time: 2024-05-06 07:08:09.5\nSample Interval: 1 ns\n" + strings.Repeat("2.5\n", 10)
	rec, err := Read(strings.NewReader(in), "stamp.csv", Options{})
	require.NoError(t, err)
	assert.Equal(t, "2024-05-06T07:08:09.5Z", rec.Trigger.Format("2006-01-02T15:04:05.999Z07:00"))

	in = "Date,2024-05-06\nTime,07:08:09\nSample Interval: 1 ns\n" + strings.Repeat("2.5\n", 10)
	rec, err = Read(strings.NewReader(in), "stamp.csv", Options{})
	require.NoError(t, err)
	assert.Equal(t, 2024, rec.Trigger.Year())
	assert.Equal(t, 8, rec.Trigger.Minute())
}

// What hvshot writes it reads back the same, settings included: the written preamble
// states the interval (and the settings the layout carried), which must agree with
// the written time column.
func TestLayoutsRoundTrip(t *testing.T) {
	for _, name := range []string{"layout_settings_beside.csv", "layout_index_start_increment.csv", "layout_screen_codes.csv", "layout_time_few_digits.csv"} {
		t.Run(name, func(t *testing.T) {
			rec, err := ReadFile(filepath.Join("../testdata/readers", name), Options{})
			require.NoError(t, err)
			for _, digits := range []int{-1, 9} {
				var b bytes.Buffer
				require.NoError(t, WriteTextDigits(&b, rec, digits))
				back, err := Read(&b, "back.csv", Options{})
				require.NoError(t, err, "digits %d", digits)
				assert.Empty(t, back.Warnings)
				assert.InEpsilon(t, rec.Interval_s, back.Interval_s, 1e-12)
				assert.InDelta(t, rec.Start_s, back.Start_s, 1e-6*rec.Interval_s)
				require.Len(t, back.Channels, len(rec.Channels))
				for k, ch := range back.Channels {
					assert.Equal(t, rec.Channels[k].Name, ch.Name)
					assert.Equal(t, rec.Channels[k].Unit, ch.Unit)
					require.Len(t, ch.Samples, rec.Len())
					for i, v := range ch.Samples {
						require.InDelta(t, rec.Channels[k].Samples[i], v, 1e-8*math.Abs(rec.Channels[k].Samples[i])+1e-300, "sample %d", i)
					}
				}
			}
		})
	}
}

// A small table of numbers inside a long preamble is not the data (issue 19, item 12).
func TestDataAfterTableInLongPreamble(t *testing.T) {
	pre := strings.Repeat("Setting,"+strings.Repeat("y", 60)+"\n", 3000) + "1,2\n3,4\n5,6\n" + strings.Repeat("Other,"+strings.Repeat("z", 60)+"\n", 3000)
	in := pre + "Sample Interval: 2 ns\n" + strings.Repeat("0.5\n", 30)
	rec, err := Read(strings.NewReader(in), "table.csv", Options{})
	require.NoError(t, err)
	assert.Equal(t, 30, rec.Len())
	assert.InEpsilon(t, 2e-9, rec.Interval_s, 1e-12)
}

// Header rows are not settings: a header "t_us,u_kv" once came back as the setting
// t_us = u_kv.
func TestHeaderIsNotMeta(t *testing.T) {
	rec, err := ReadFile("../testdata/readers/pandas_t_us_u_kv.csv", Options{})
	require.NoError(t, err)
	assert.Empty(t, rec.Meta)
	assert.NotContains(t, rec.Layout, "preamble")
	rec, err = ReadFile("../testdata/readers/layout_names_units_source.csv", Options{})
	require.NoError(t, err)
	assert.Empty(t, rec.Meta)
}
