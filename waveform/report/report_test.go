package report_test

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform/report"
	"github.com/hvshot/hvshot/waveform/shot"
	"github.com/hvshot/hvshot/waveform/synth"
)

func TestFormatDigits(t *testing.T) {
	cases := []struct {
		v      float64
		digits int
		fixed  bool
		want   string
	}{
		{150.4, 4, false, "150.4"}, {1500.4, 4, false, "1500"}, {1.2191, 4, false, "1.219"}, {18, 4, false, "18.00"},
		{0, 4, false, "0.000"}, {0.6234, 1, true, "0.6"}, {-0.04, 1, true, "0.0"}, {-5.13, 1, true, "-5.1"},
		{6.14e-5, 3, false, "6.14e-05"}, {math.NaN(), 4, false, "-"}, {2.5e9, 4, false, "2.5e+09"},
	}
	for _, c := range cases {
		assert.Equal(t, c.want, shot.FormatDigits(c.v, c.digits, c.fixed), "%g", c.v)
	}
}

// shots evaluates two invented captures: one within tolerance, one with a slow front.
func shots(t *testing.T) []*shot.Shot {
	var out []*shot.Shot
	for i, front := range []float64{1.2, 1.9} {
		rec, err := synth.Generate(synth.Spec{Front_s: front * 1e-6, Tail_s: 50e-6, Peak_v: 300e3, PreTrigger_s: 4e-6, Interval_s: 10e-9, Duration_s: 120e-6, Seed: uint64(i)})
		require.NoError(t, err)
		out = append(out, shot.Evaluate(rec, []string{"day1/a.csv", "day2/a.csv"}[i], shot.NewConfig()))
	}
	return out
}

// The report holds every row with its anchor and its own plot, failing shots first,
// and the safety cautions; a plot that cannot be read is said so, not left out silently.
func TestHTML(t *testing.T) {
	ss := shots(t)
	var rows []shot.Row
	series := shot.NewSeries("invented series")
	plots := map[string]string{}
	for _, s := range ss {
		var b bytes.Buffer
		require.NoError(t, report.Plot(&b, s.Curves[0], s.ID, report.SVG))
		s.Rows[0].Plot = shot.PlotPath(s.ID, 0, s.Rows[0].Channel, "svg")
		plots[s.Rows[0].Plot] = b.String()
		rows = append(rows, s.Rows...)
		series.Add(s)
	}
	rows = append(rows, shot.Failed("day3/broken.csv", errors.New("day3/broken.csv:7: not a number")).Rows...)
	rows[len(rows)-1].Plot = "plots/missing.svg"
	var b bytes.Buffer
	err := report.HTML(&b, report.Page{Summary: series.Summary(), Rows: rows, Version: "test", Made: time.Unix(0, 0),
		Plot: func(rel string) ([]byte, error) {
			if p, ok := plots[rel]; ok {
				return []byte(p), nil
			}
			return nil, errors.New("no such plot")
		}})
	require.NoError(t, err)
	html := b.String()
	assert.True(t, strings.HasSuffix(strings.TrimSpace(html), "</html>"))
	assert.Contains(t, html, report.Safety[:40])
	for _, id := range []string{"day1/a.csv", "day2/a.csv", "day3/broken.csv"} {
		assert.Contains(t, html, `id="`+shot.Anchor(id, 0)+`"`)
	}
	// failing and unreadable shots first: the error, the slow front, then the good one
	i3, i2, i1 := strings.Index(html, `id="`+shot.Anchor("day3/broken.csv", 0)), strings.Index(html, `id="`+shot.Anchor("day2/a.csv", 0)), strings.Index(html, `id="`+shot.Anchor("day1/a.csv", 0))
	assert.True(t, i3 < i2 && i2 < i1, "order %d %d %d", i3, i2, i1)
	// each section holds its own plot
	sec := html[i2:i1]
	assert.Contains(t, sec, "<svg")
	assert.Contains(t, sec, "day2/a.csv")
	assert.Contains(t, html[i3:i2], "could not be read")
	assert.Contains(t, html, "front_time 1.9")
	// in the shots table each shot's rows, its reasons included, are one group, which
	// print keeps on one page: three shots, three groups, the reason inside its own
	table := html[strings.Index(html, `id="shots-table"`):]
	table = table[:strings.Index(table, "</table>")]
	groups := strings.Split(table, `<tbody class="first">`)[1:]
	require.Len(t, groups, 3)
	assert.Contains(t, groups[1], "day2/a.csv")
	assert.Contains(t, groups[1], "front_time 1.9", "the reason in its shot's group")
	for _, g := range groups {
		assert.Equal(t, 1, strings.Count(g, "</tbody>"), "each group closed once")
	}
	// without a described test record the header says where it goes
	assert.Contains(t, html, "<dt>Test record</dt><dd>not described")
	// a tolerance other than the standard's says so; a described record heads the page
	cfg := shot.NewConfig()
	cfg.Tolerances.Front_pct = 300
	cfg.Record = shot.TestRecord{Object: "post insulator (invented)", ObjectID: "PI-1", Operator: "A. Example", Uncertainty_pct: 1.5, Calibrated: "2026-03-14"}
	b.Reset()
	require.NoError(t, report.HTML(&b, report.Page{Summary: series.Summary(), Rows: rows, Config: cfg}))
	assert.Contains(t, b.String(), "T1 ±300 % (IEC 60060-1:2010: 30 %)")
	for _, want := range []string{"<dt>Test object</dt><dd>post insulator (invented), PI-1</dd>", "<dt>Laboratory</dt><dd>not stated</dd>",
		"<dt>Operator</dt><dd>A. Example</dd>", "not named, expanded uncertainty 1.5 %, calibrated 2026-03-14"} {
		assert.Contains(t, b.String(), want)
	}
}

func TestTableAndSummary(t *testing.T) {
	ss := shots(t)
	series := shot.NewSeries("")
	var rows []shot.Row
	for _, s := range ss {
		rows = append(rows, s.Rows...)
		series.Add(s)
	}
	var b bytes.Buffer
	report.Table(&b, rows)
	report.Summary(&b, series.Summary())
	out := b.String()
	lines := strings.Split(out, "\n")
	assert.Contains(t, lines[0], "Ut kV")
	assert.Contains(t, lines[0], "T1 us")
	assert.Contains(t, lines[1], "day1/a.csv")
	assert.Contains(t, lines[1], "PASS")
	assert.Contains(t, lines[2], "FAIL")
	assert.Contains(t, out, "2 files, 2 channel rows: 1 pass, 1 fail, 0 error")
	assert.Regexp(t, `front time T1\s+lightning, positive\s+2\s+1\.5`, out)
}

// BenchmarkPlot draws one divider's two-panel plot from a 12,001-sample record.
func BenchmarkPlot(b *testing.B) {
	rec, _ := synth.Generate(synth.Spec{Front_s: 1.2e-6, Tail_s: 50e-6, Peak_v: 300e3, Noise: 0.003, PreTrigger_s: 4e-6, Interval_s: 10e-9, Duration_s: 120e-6})
	s := shot.Evaluate(rec, "a.csv", shot.NewConfig())
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		var buf bytes.Buffer
		if err := report.Plot(&buf, s.Curves[0], "a.csv", report.SVG); err != nil {
			b.Fatal(err)
		}
		b.SetBytes(int64(buf.Len()))
	}
}

// Shots are numbered in firing order, each identity once: by firing time, and a shot
// with none (an unreadable file) right after the one before it in input order, so the
// charts keep its gap and the table's numbers match the charts'.
func TestFiringOrder(t *testing.T) {
	at := func(min int) time.Time { return time.Date(2026, 11, 30, 10, min, 0, 0, time.UTC) }
	rows := []shot.Row{
		{File: "b.csv", Fired: at(20)}, {File: "b.csv", Fired: at(20)}, // two channels, one shot
		{File: "broken.csv"}, // after b in input order, no time
		{File: "a.csv", Fired: at(5)},
		{File: "c.csv", Fired: at(30)},
	}
	no, n := report.FiringOrder(rows)
	assert.Equal(t, 4, n)
	assert.Equal(t, map[string]int{"a.csv": 1, "b.csv": 2, "broken.csv": 3, "c.csv": 4}, no)
}
