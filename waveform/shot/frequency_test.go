package shot_test

import (
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/shot"
	"github.com/hvshot/hvshot/waveform/synth"
)

func TestComparisonSetupErrors(t *testing.T) {
	for _, c := range []struct {
		name, text string
		want       []string
	}{
		{"one frequency", "[comparison]\nreference = \"a.csv\"\nband = [\"10 kHz\"]\n", []string{"s.toml:3", "comparison.band", "two frequencies"}},
		{"a band in volts", "[comparison]\nband = [\"10 kV\", \"1 MHz\"]\n", []string{"s.toml:2", "comparison.band", "not a unit of frequency"}},
		{"band upside down", "[comparison]\nband = [\"1 MHz\", \"10 kHz\"]\n", []string{"s.toml:2", "above the low one"}},
		{"negative threshold", "[comparison]\n\ntransfer_deviation_max_pct = -2\n", []string{"s.toml:3", "comparison.transfer_deviation_max_pct", "negative"}},
		{"bad pattern", "[comparison]\nshots = [\"[\"]\n", []string{"s.toml:2", "comparison.shots", "bad pattern"}},
		{"unknown key", "[comparison]\nthreshold = 3\n", []string{"s.toml:2", "unknown key"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := shot.ParseSetup([]byte(c.text), "s.toml")
			require.Error(t, err)
			for _, w := range c.want {
				assert.Contains(t, err.Error(), w)
			}
		})
	}
}

// The demo's invented winding test through the shot package: the reduced-level shot
// as the reference, a full-level shot of the winding as built not flagged, the one with
// a capacitance 5 % up flagged on its transfer function; shots outside [comparison]'s
// patterns are not compared; every row with a curve has its bandwidths.
func TestDemoWindingComparison(t *testing.T) {
	setup, err := shot.ParseSetup([]byte(synth.DemoSetup), "demo.toml")
	require.NoError(t, err)
	cfg := shot.FromSetup(setup)
	require.NotNil(t, cfg.Comparison)
	recs := map[string]*waveform.Record{}
	var ids []string
	for _, d := range synth.Demo() {
		if strings.HasPrefix(d.File, "winding/") || d.File == "shot01.csv" {
			rec, err := d.Record()
			require.NoError(t, err)
			recs[d.File] = rec
			ids = append(ids, d.File)
		}
	}
	require.NoError(t, cfg.PrepareReference("", ids, func(path string) (*waveform.Record, error) { return recs[path], nil }))
	assert.Equal(t, "winding/reduced01.csv", cfg.Comparison.RefID)
	rowOf := func(s *shot.Shot, ch string) *shot.Row {
		for i := range s.Rows {
			if s.Rows[i].Channel == ch {
				return &s.Rows[i]
			}
		}
		t.Fatalf("%s: no channel %s", s.ID, ch)
		return nil
	}
	codes := func(r *shot.Row) string {
		var c []string
		for _, w := range r.Warnings {
			c = append(c, w.Code)
		}
		return strings.Join(c, ",")
	}
	col := func(key string) *shot.Column {
		for _, c := range shot.Columns {
			if c.Key == key {
				return c
			}
		}
		t.Fatalf("no column %s", key)
		return nil
	}
	for _, c := range []struct {
		file    string
		flagged bool
	}{{"winding/full02.csv", false}, {"winding/full03.csv", false}, {"winding/full04.csv", true}} {
		s := shot.Evaluate(recs[c.file], c.file, cfg)
		cur := rowOf(s, "current")
		assert.Equal(t, "winding/reduced01.csv", cur.ComparedWith)
		dev, ok := cur.Value(col("transfer_deviation_pct"))
		require.True(t, ok, "%s: transfer deviation", c.file)
		_, ok = rowOf(s, "divider").Value(col("transfer_deviation_pct"))
		assert.False(t, ok, "the transfer function is the output row's")
		pk, ok := rowOf(s, "divider").Value(col("difference_peak_pct"))
		require.True(t, ok)
		assert.Less(t, pk, 4.0, "%s: the voltages match after scaling", c.file)
		assert.Equal(t, c.flagged, strings.Contains(codes(cur), "comparison-deviation"), "%s: |H| deviation %.2f %%", c.file, dev)
		if c.flagged {
			assert.Greater(t, dev, 2.0)
		} else {
			assert.Less(t, dev, 2.0)
		}
		assert.NotNil(t, s.Curves[1].Compare)
	}
	s := shot.Evaluate(recs["shot01.csv"], "shot01.csv", cfg)
	for i := range s.Rows {
		assert.Empty(t, s.Rows[i].ComparedWith, "not one of [comparison]'s shots")
		for _, k := range []string{"bw90_hz", "bw99_hz"} {
			v, ok := s.Rows[i].Value(col(k))
			assert.True(t, ok && v > 0, "%s %s", s.Rows[i].Channel, k)
		}
	}
	ref := shot.Evaluate(recs["winding/reduced01.csv"], "winding/reduced01.csv", cfg)
	_, ok := rowOf(ref, "current").Value(col("difference_peak_pct"))
	assert.False(t, ok, "the reference is not compared with itself")
	assert.Equal(t, "winding/reduced01.csv", rowOf(ref, "current").ComparedWith)
	// at 60 % of the nominal by design: its shape judged, its level not
	div := rowOf(ref, "divider")
	assert.Equal(t, shot.Pass, div.Verdict, div.FailureNames())
	assert.True(t, slices.ContainsFunc(div.Warnings, func(w shot.Warning) bool { return w.Code == "reference-level" }))
}
