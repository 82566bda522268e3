package shot_test

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/shot"
	"github.com/hvshot/hvshot/waveform/synth"
)

// record is a synthetic 1.2/50 shot (invented for the test) with a coil channel.
func record(t *testing.T, front_us float64, seed uint64) *waveform.Record {
	rec, err := synth.Generate(synth.Spec{Front_s: front_us * 1e-6, Tail_s: 50e-6, Peak_v: 300e3, Noise: 0.002, PreTrigger_s: 4e-6,
		Interval_s: 10e-9, Duration_s: 120e-6, Seed: seed,
		Coil: &synth.Coil{M_h: 1e-9, L_h: 50e-9, R_ohm: 50, Peak_a: 2e3, Tau1_s: 20e-6, Tau2_s: 1e-6}})
	require.NoError(t, err)
	return rec
}

// Evaluate works on a record in memory and writes nothing: it returns the rows and
// the curves a plot needs.
func TestEvaluateReturnsCurvesAndTouchesNoDisk(t *testing.T) {
	dir := t.TempDir()
	wd, _ := os.Getwd()
	require.NoError(t, os.Chdir(dir))
	defer os.Chdir(wd)
	cfg := shot.NewConfig()
	cs := shot.ChannelSetup{Match: "coil", Role: shot.Coil, Coil: &shot.CoilSetup{Mutual: shot.Quantity{V: 1e-9, Set: true},
		Inductance: shot.Quantity{V: 50e-9, Set: true}, LoadResistance: shot.Quantity{V: 50, Set: true}}}
	cfg.Roles = []shot.ChannelSetup{cs}
	s := shot.Evaluate(record(t, 1.2, 1), "day1/shot01.csv", cfg)
	require.Len(t, s.Rows, 2)
	require.Len(t, s.Curves, 2)
	div, coil := s.Rows[0], s.Rows[1]
	assert.Equal(t, shot.Divider, div.Role)
	assert.Equal(t, shot.Pass, div.Verdict, div.Error)
	require.NotNil(t, s.Curves[0].Impulse)
	assert.Len(t, s.Curves[0].Impulse.TestVoltage, 12001)
	assert.Equal(t, impulse.StandardLightning.Front_s, s.Curves[0].Nominal.Front_s, "judged against the standard shape")
	assert.Equal(t, shot.Coil, coil.Role)
	assert.Equal(t, shot.Measured, coil.Verdict, "no tolerance applies to a coil: measured, not pass")
	assert.True(t, div.Synthetic, "synth marks its records")
	v, ok := coil.Value(shot.ColPeakCurrent)
	require.True(t, ok)
	assert.InEpsilon(t, 2e3, v, 0.01, "the simulated current's peak")
	assert.Equal(t, "current", s.Curves[1].Quantity)
	entries, _ := os.ReadDir(dir)
	assert.Empty(t, entries, "nothing written")
}

// A channel whose name says it is a sensor is not judged as a divider when nothing
// describes it; a role that picks no channel is a warning on the file's rows.
func TestPlanningWithoutSetup(t *testing.T) {
	cfg := shot.NewConfig()
	s := shot.Evaluate(record(t, 1.2, 2), "a.csv", cfg)
	require.Len(t, s.Rows, 1, "the coil channel is left out, and said so")
	assert.Equal(t, shot.Pass, s.Rows[0].Verdict)
	require.NotEmpty(t, s.Rows[0].Warnings)
	assert.Equal(t, "sensor-undescribed", s.Rows[0].Warnings[0].Code)
	assert.Contains(t, s.Rows[0].Warnings[0].Text, "coil (a coil?)")
	// alone in its file, such a channel is an error row that says what to do
	rec := record(t, 1.2, 2)
	rec.Channels = rec.Channels[1:]
	rec.Channels = append(rec.Channels, waveform.Channel{Name: "antenna", Samples: rec.Channels[0].Samples})
	s = shot.Evaluate(rec, "b.csv", cfg)
	require.Len(t, s.Rows, 2)
	assert.Equal(t, shot.Error, s.Rows[0].Verdict)
	assert.Contains(t, s.Rows[0].Error, "its name says coil")
	assert.Contains(t, s.Rows[0].Error, "--role coil=coil")

	require.NoError(t, cfg.AddRole("CH9=coil", "mutual=1nH,inductance=50nH,load_resistance=50", ""))
	s = shot.Evaluate(record(t, 1.2, 2), "a.csv", cfg)
	codes := func(r shot.Row) string {
		var c []string
		for _, w := range r.Warnings {
			c = append(c, w.Code+": "+w.Text)
		}
		return strings.Join(c, "; ")
	}
	assert.Contains(t, codes(s.Rows[0]), "role-unmatched")
	assert.Contains(t, codes(s.Rows[0]), "divider, coil", "lists the channels the file has")

	// CHn picks the n-th channel when no channel has that name
	cfg = shot.NewConfig()
	require.NoError(t, cfg.AddRole("CH2=coil", "mutual=1nH,inductance=50nH,load_resistance=50", ""))
	s = shot.Evaluate(record(t, 1.2, 2), "a.csv", cfg)
	require.Len(t, s.Rows, 2)
	assert.Equal(t, shot.Coil, s.Rows[1].Role)
	assert.Equal(t, shot.Measured, s.Rows[1].Verdict, s.Rows[1].Error)
}

// A divider ratio from the configuration scales a low-side capture; without one, a
// nominal test voltage far above the measurement gets a hint on the row.
func TestRatioAndLowSideHint(t *testing.T) {
	rec := record(t, 1.2, 3)
	synth.Scale(&rec.Channels[0], 1.0/1000)
	cfg := shot.NewConfig()
	cfg.Nominal.Peak_v = 300e3
	s := shot.Evaluate(rec, "a.csv", cfg)
	assert.Equal(t, shot.Fail, s.Rows[0].Verdict)
	assert.Equal(t, "ratio-missing", s.Rows[0].Warnings[0].Code)
	require.NoError(t, cfg.AddRatio("1000"))
	s = shot.Evaluate(rec, "a.csv", cfg)
	assert.Equal(t, shot.Pass, s.Rows[0].Verdict)
	v, _ := s.Rows[0].Value(shot.ColTestVoltage)
	assert.InEpsilon(t, 300e3, v, 0.01)
	cfg.Ratio = 0
	require.NoError(t, cfg.AddRatio("CH1=1000"))
	s = shot.Evaluate(rec, "a.csv", cfg)
	assert.Equal(t, shot.Pass, s.Rows[0].Verdict)
	assert.Error(t, cfg.AddRatio("CH1=-2"))
	assert.Error(t, cfg.AddRatio("x"))
}

// Every key a JSON object has is a CSV column; the flag that JSON writes as true the
// CSV writes as "true".
func TestRowEncodingsAgree(t *testing.T) {
	r := shot.Evaluate(record(t, 1.2, 4), "a.csv", shot.NewConfig()).Rows[0]
	r.DroopEstimated = true
	b, err := json.Marshal(&r)
	require.NoError(t, err)
	var m map[string]any
	require.NoError(t, json.Unmarshal(b, &m))
	header, cells := shot.CSVHeader(), r.CSVRecord()
	require.Len(t, cells, len(header))
	for i, k := range header {
		v, ok := m[k]
		if !ok {
			assert.Empty(t, cells[i], "%s absent from JSON, empty in CSV", k)
			continue
		}
		switch x := v.(type) {
		case float64:
			assert.InEpsilon(t, x, must(t, cells[i]), 1e-9, k)
		case bool:
			assert.Equal(t, "true", cells[i], k)
		case string:
			assert.Equal(t, x, cells[i], k)
		}
	}
	assert.Equal(t, true, m["droop_tau_estimated"])
}

func must(t *testing.T, s string) float64 {
	var v float64
	require.NoError(t, json.Unmarshal([]byte(s), &v), s)
	return v
}

func TestIdentities(t *testing.T) {
	cases := []struct {
		in, want []string
	}{
		{[]string{"/x/day1/shot01.csv", "/x/day2/shot01.csv", "/x/day1/shot01.npy"}, []string{"day1/shot01.csv", "day2/shot01.csv", "day1/shot01.npy"}},
		{[]string{"/x/shots/a.csv", "/x/shots/b.csv"}, []string{"a.csv", "b.csv"}},
		{[]string{"/x/shots/a.csv"}, []string{"a.csv"}},
		{[]string{"/x/a/b/c.csv", "/x/a/d.csv"}, []string{"b/c.csv", "d.csv"}},
		{[]string{"/a.csv", "/y/a.csv"}, []string{"a.csv", "y/a.csv"}},
	}
	for _, c := range cases {
		got := shot.Identities(c.in)
		assert.Equal(t, c.want, got, c.in)
		plots := map[string]bool{}
		for _, id := range got {
			plots[shot.PlotPath(id, 0, "divider", "svg")] = true
		}
		assert.Len(t, plots, len(c.in), "plot files unique")
	}
	assert.Equal(t, "plots/day1/shot01.csv.2-CH_2_.svg", shot.PlotPath("day1/shot01.csv", 1, "CH 2?", "svg"))
	assert.NotEqual(t, shot.Anchor("a b.csv", 0), shot.Anchor("a_b.csv", 0))
	wd, _ := os.Getwd()
	got := shot.Identities([]string{"x.csv", filepath.Join(wd, "y", "z.csv")})
	assert.Equal(t, []string{"x.csv", "y/z.csv"}, got, "relative paths count from the working folder")
}

// The series statistics: mean and sample standard deviation (n - 1), checked against
// values computed by hand for 1, 2, 3, 4 (mean 2.5, sd sqrt(5/3) = 1.2909944...).
func TestSeriesStatistics(t *testing.T) {
	cfg := shot.NewConfig()
	series := shot.NewSeries("s")
	var uts []float64
	fired := []time.Time{time.Date(2026, 11, 30, 10, 5, 0, 0, time.UTC), time.Date(2026, 11, 30, 9, 58, 0, 0, time.UTC), {}, time.Date(2026, 11, 30, 11, 15, 0, 0, time.UTC)}
	for i := 1; i <= 4; i++ {
		rec := record(t, 1.2, uint64(10+i))
		rec.Trigger = fired[i-1] // in no order, one unknown
		synth.Scale(&rec.Channels[0], float64(i))
		sh := shot.Evaluate(rec, "a.csv", cfg)
		v, _ := sh.Rows[0].Value(shot.ColTestVoltage)
		uts = append(uts, v)
		series.Add(sh)
	}
	sum := series.Summary()
	assert.Equal(t, 4, sum.Files)
	assert.Equal(t, 4, sum.Rows, "a divider row each; the undescribed coil channels left out")
	require.NotNil(t, sum.FirstFired)
	assert.Equal(t, fired[1], *sum.FirstFired, "the earliest firing time, the unknown one left out")
	assert.Equal(t, fired[3], *sum.LastFired)
	var st shot.Stat
	for _, s := range sum.Stats {
		if s.Key == "test_voltage_v" {
			st = s
		}
	}
	require.Equal(t, 4, st.N)
	mean := (uts[0] + uts[1] + uts[2] + uts[3]) / 4
	var ss float64
	for _, u := range uts {
		ss += (u - mean) * (u - mean)
	}
	assert.InEpsilon(t, mean, st.Mean, 1e-12)
	assert.InEpsilon(t, math.Sqrt(ss/3), st.SD, 1e-9)
	assert.InEpsilon(t, math.Sqrt(5.0/3)*300e3, st.SD, 0.02, "the hand-computed spread of 1, 2, 3, 4 x 300 kV")
}

// RunOrdered hands results back in order, whatever order the workers finish in.
func TestRunOrdered(t *testing.T) {
	var got []int
	stopped := shot.RunOrdered(context.Background(), 50, 4, func(i int) int { return i * i }, func(i, v int) {
		assert.Equal(t, i*i, v)
		got = append(got, i)
	})
	assert.False(t, stopped)
	require.Len(t, got, 50)
	for i, v := range got {
		assert.Equal(t, i, v)
	}
}

// A shot that could not be read has a row with its error and no numbers at all.
func TestFailedShotHasNoNumbers(t *testing.T) {
	s := shot.Failed("day1/x.csv", errors.New("day1/x.csv:3: not a number"))
	require.Len(t, s.Rows, 1)
	b, err := json.Marshal(&s.Rows[0])
	require.NoError(t, err)
	assert.JSONEq(t, `{"file":"day1/x.csv","verdict":"error","failures":[],"warnings":[],"error":"day1/x.csv:3: not a number"}`, string(b))
	series := shot.NewSeries("")
	series.Add(s)
	sum := series.Summary()
	assert.Equal(t, 1, sum.Errors)
	assert.Empty(t, sum.Stats, "an error row adds to no statistic")
}

// A time base a million times too long (microseconds read as seconds) is never a
// silent pass: one warning names the likely slip, the times are not trusted (the row is
// incomplete, not judged on them) and they stay out of the statistics.
func TestImplausibleTimeBaseWarns(t *testing.T) {
	rec := record(t, 1.2, 5)
	rec.Interval_s *= 1e6
	rec.Start_s *= 1e6
	s := shot.Evaluate(rec, "a.csv", shot.NewConfig())
	r := s.Rows[0]
	var texts []string
	for _, w := range r.Warnings {
		if w.Code == "time-implausible" {
			texts = append(texts, w.Text)
		}
	}
	require.Len(t, texts, 1, "one warning")
	assert.Contains(t, texts[0], "microseconds read as seconds")
	assert.Equal(t, shot.Incomplete, r.Verdict)
	assert.Contains(t, r.Unmeasured, "time_to_half")
	series := shot.NewSeries("")
	series.Add(s)
	for _, st := range series.Summary().Stats {
		assert.NotContains(t, []string{"front_time_s", "time_to_half_s", "time_to_peak_s"}, st.Key, "a misread time in the statistics")
	}
	// an ordinary record has no such warning
	r = shot.Evaluate(record(t, 1.2, 5), "a.csv", shot.NewConfig()).Rows[0]
	for _, w := range r.Warnings {
		assert.NotEqual(t, "time-implausible", w.Code)
	}
	// with a nominal 1.2/50 given: microseconds or milliseconds read as seconds are
	// incomplete, never a fail on the shape the misread times classify
	cfg := shot.NewConfig()
	require.NoError(t, cfg.Set("nominal", "1.2/50"))
	for _, k := range []float64{1e3, 1e6} {
		rec := record(t, 1.2, 5)
		rec.Interval_s *= k
		rec.Start_s *= k
		r := shot.Evaluate(rec, "a.csv", cfg).Rows[0]
		assert.Equal(t, shot.Incomplete, r.Verdict, "x%g: %v %v", k, r.FailureNames(), r.Warnings)
		assert.True(t, slices.ContainsFunc(r.Warnings, func(w shot.Warning) bool { return w.Code == "time-implausible" }), "x%g", k)
	}
}

// A shot whose compliance cannot be shown is incomplete: never a pass on a number that
// could not be measured, never a fail on one that could not be trusted; a measured
// parameter out of tolerance still fails it. Its values stay out of the statistics.
func TestIncompleteVerdict(t *testing.T) {
	gen := func(s synth.Spec) *waveform.Record {
		rec, err := synth.Generate(s)
		require.NoError(t, err)
		return rec
	}
	base := synth.Spec{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 300e3, Noise: 0.002, PreTrigger_s: 4e-6, Interval_s: 10e-9, Duration_s: 120e-6, Seed: 3}
	cfg := shot.NewConfig()
	cfg.Nominal.Peak_v = 300e3
	cut := base
	cut.Duration_s = 20e-6 // the tail ends before 50 %
	r := shot.Evaluate(gen(cut), "cut.csv", cfg).Rows[0]
	assert.Equal(t, shot.Incomplete, r.Verdict)
	assert.Equal(t, []string{"time_to_half"}, r.Unmeasured)
	slowCut := cut
	slowCut.Front_s = 2.5e-6
	r = shot.Evaluate(gen(slowCut), "slow.csv", cfg).Rows[0]
	assert.Equal(t, shot.Fail, r.Verdict, "a measured front out of tolerance fails")
	assert.Equal(t, []string{"front_time"}, r.FailureNames())
	clipped := base
	clipped.Range_v, clipped.Bits = 250e3, 12
	s := shot.Evaluate(gen(clipped), "clip.csv", cfg)
	r = s.Rows[0]
	assert.Equal(t, shot.Incomplete, r.Verdict, "%v", r.FailureNames())
	assert.Contains(t, r.Unmeasured, "test_voltage")
	assert.Empty(t, r.Failures, "no failure on a clipped extreme")
	series := shot.NewSeries("")
	series.Add(s)
	// and without a nominal test voltage to judge, the clipped Ut, and the efficiency
	// resting on it, stay out of the statistics all the same
	noPeak := shot.NewConfig()
	noPeak.Stages, noPeak.Charging_v = 8, 40e3
	series.Add(shot.Evaluate(gen(clipped), "clip2.csv", noPeak))
	for _, st := range series.Summary().Stats {
		assert.NotEqual(t, "test_voltage_v", st.Key, "a clipped Ut is no statistic")
		assert.NotEqual(t, "efficiency", st.Key, "nor the efficiency from it")
	}
}

// A channel in amperes records a current, one in V/m a field: measured directly, never
// judged as a divider.
func TestChannelsInAmperesAndVoltsPerMetre(t *testing.T) {
	rec := record(t, 1.2, 7)
	rec.Channels[1].Name, rec.Channels[1].Unit = "current", "A"
	rec.Channels = append(rec.Channels, waveform.Channel{Name: "E", Unit: "V/m", Samples: append([]float64(nil), rec.Channels[0].Samples...)})
	s := shot.Evaluate(rec, "a.csv", shot.NewConfig())
	require.Len(t, s.Rows, 3)
	assert.Equal(t, shot.Divider, s.Rows[0].Role)
	assert.Equal(t, shot.Current, s.Rows[1].Role)
	assert.Equal(t, shot.Measured, s.Rows[1].Verdict, s.Rows[1].Error)
	assert.Equal(t, shot.Field, s.Rows[2].Role)
	v, ok := s.Rows[2].Value(shot.ColPeakField)
	require.True(t, ok)
	assert.InEpsilon(t, 300e3, v, 0.02)
	_, ok = s.Rows[2].Value(shot.ColTestVoltage)
	assert.False(t, ok)
}

// A ratio for a channel the file does not have is a warning naming the channels.
func TestRatioForNoChannelWarns(t *testing.T) {
	cfg := shot.NewConfig()
	require.NoError(t, cfg.AddRatio("volts=1000"))
	s := shot.Evaluate(record(t, 1.2, 8), "a.csv", cfg)
	var texts []string
	for _, w := range s.Rows[0].Warnings {
		if w.Code == "ratio-unmatched" {
			texts = append(texts, w.Text)
		}
	}
	require.Len(t, texts, 1)
	assert.Contains(t, texts[0], `"volts"`)
	assert.Contains(t, texts[0], "divider, coil")
	require.NoError(t, cfg.AddRatio("ch1=2"))
	v, _ := shot.Evaluate(record(t, 1.2, 8), "a.csv", cfg).Rows[0].Value(shot.ColTestVoltage)
	assert.InEpsilon(t, 600e3, v, 0.01, "CHn in either case")
}

// Positive and negative impulses, and lightning and switching ones, are never pooled in
// one statistic.
func TestStatisticsPerFamilyAndPolarity(t *testing.T) {
	series := shot.NewSeries("")
	for i, s := range []synth.Spec{
		{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 300e3, PreTrigger_s: 4e-6, Interval_s: 10e-9, Duration_s: 120e-6},
		{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 300e3, PreTrigger_s: 4e-6, Interval_s: 10e-9, Duration_s: 120e-6, Negative: true},
		{Switching: true, Front_s: 250e-6, Tail_s: 2500e-6, Peak_v: 300e3, PreTrigger_s: 100e-6, Interval_s: 0.5e-6, Duration_s: 7e-3},
	} {
		rec, err := synth.Generate(s)
		require.NoError(t, err)
		series.Add(shot.Evaluate(rec, fmt.Sprint(i), shot.NewConfig()))
	}
	groups := map[string]int{}
	for _, st := range series.Summary().Stats {
		if st.Key == "time_to_half_s" {
			groups[st.Group] = st.N
		}
	}
	assert.Equal(t, map[string]int{"lightning, positive": 1, "lightning, negative": 1, "switching, positive": 1}, groups)
}

// Scale slips get a hint: a measurement a hundred times above the nominal (a ratio applied
// twice, volts under a kV header, a nominal without its unit) or beyond any generator
// leaves Ut untrusted, never a pass; with no nominal, a test voltage under a kilovolt is
// only a hint.
func TestScaleSlipHints(t *testing.T) {
	codes := func(r shot.Row) string {
		var c []string
		for _, w := range r.Warnings {
			c = append(c, w.Code)
		}
		return strings.Join(c, " ")
	}
	cfg := shot.NewConfig()
	cfg.Nominal.Peak_v = 300 // "300" taken as volts
	row := shot.Evaluate(record(t, 1.2, 9), "a.csv", cfg).Rows[0]
	assert.Contains(t, codes(row), "scale-implausible")
	assert.Equal(t, shot.Incomplete, row.Verdict)
	assert.Contains(t, row.Unmeasured, "test_voltage")
	big := record(t, 1.2, 9)
	synth.Scale(&big.Channels[0], 1000) // 300 MV: a ratio applied twice
	row = shot.Evaluate(big, "a.csv", shot.NewConfig()).Rows[0]
	assert.Contains(t, codes(row), "scale-implausible")
	assert.Equal(t, shot.Incomplete, row.Verdict, "no nominal voltage, still no pass on a slipped scale")
	rec := record(t, 1.2, 9)
	synth.Scale(&rec.Channels[0], 1.0/1000)
	assert.Contains(t, codes(shot.Evaluate(rec, "a.csv", shot.NewConfig()).Rows[0]), "ratio-missing")
	assert.NotContains(t, codes(shot.Evaluate(record(t, 1.2, 9), "a.csv", shot.NewConfig()).Rows[0]), "ratio-missing")
	assert.Equal(t, shot.Pass, shot.Evaluate(record(t, 1.2, 9), "a.csv", shot.NewConfig()).Rows[0].Verdict, "a right scale passes")
}

// A record cut off mid-impulse has no impulse to evaluate; its error row also says what
// the reader warned (the cut last line), which is why.
func TestErrorRowCarriesReaderWarnings(t *testing.T) {
	rec := record(t, 1.2, 3)
	n := int((4e-6 + 5e-6) / rec.Interval_s) // cut 5 us after the start of the impulse, on the crest
	rec.Channels = rec.Channels[:1]
	rec.Channels[0].Samples = rec.Channels[0].Samples[:n]
	rec.Warnings = append(rec.Warnings, "line 902, the last, has no line end and is left out")
	r := shot.Evaluate(rec, "cut.csv", shot.NewConfig()).Rows[0]
	require.Equal(t, shot.Error, r.Verdict)
	assert.Contains(t, r.Error, "no impulse found")
	assert.Contains(t, r.Error, "the reader warned: line 902, the last, has no line end")
}
