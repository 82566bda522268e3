package report

import (
	"fmt"
	"io"
	"math"
	"sort"

	"github.com/hvshot/hvshot/waveform"
	"github.com/hvshot/hvshot/waveform/shot"
)

// ChannelInfo is a channel as Inspect shows it.
type ChannelInfo struct {
	Name      string      `json:"name"`
	Unit      string      `json:"unit"`
	Min       float64     `json:"min"`
	Max       float64     `json:"max"`
	Range     *[2]float64 `json:"range,omitempty"`
	Bits      int         `json:"adc_bits,omitempty"`
	OverRange int         `json:"over_range,omitempty"`
}

// RecordInfo is what Inspect shows of a record.
type RecordInfo struct {
	File       string            `json:"file"`
	Segment    int               `json:"segment,omitempty"`
	Format     string            `json:"format"`
	Layout     string            `json:"layout,omitempty"`
	Samples    int               `json:"samples"`
	Interval_s float64           `json:"interval_s"`
	Start_s    float64           `json:"start_s"`
	Duration_s float64           `json:"duration_s"`
	Trigger    string            `json:"trigger,omitempty"`
	Channels   []ChannelInfo     `json:"channels"`
	Notes      []string          `json:"notes,omitempty"`
	Meta       map[string]string `json:"meta,omitempty"`
	Warnings   []string          `json:"warnings"`
}

// Describe is what the reader saw in a record, for people and for JSON.
func Describe(p string, rec *waveform.Record) RecordInfo {
	info := RecordInfo{File: p, Segment: rec.Segment, Format: rec.Format, Layout: rec.Layout, Samples: rec.Len(), Interval_s: rec.Interval_s,
		Start_s: rec.Start_s, Duration_s: rec.Duration_s(), Notes: rec.Notes, Meta: rec.Meta, Warnings: append([]string{}, rec.Warnings...)}
	if !rec.Trigger.IsZero() {
		info.Trigger = rec.Trigger.Format("2006-01-02 15:04:05.000000 MST")
	}
	for _, c := range rec.Channels {
		ci := ChannelInfo{Name: c.Name, Unit: c.Unit, Min: math.Inf(1), Max: math.Inf(-1), Bits: c.ADCBits, OverRange: c.OverRange}
		for _, v := range c.Samples {
			ci.Min, ci.Max = math.Min(ci.Min, v), math.Max(ci.Max, v)
		}
		if c.HasRange {
			ci.Range = &[2]float64{c.RangeMin, c.RangeMax}
		}
		info.Channels = append(info.Channels, ci)
	}
	return info
}

// Inspect writes what the reader saw in a record, one fact a line.
func Inspect(w io.Writer, p string, rec *waveform.Record) {
	in := Describe(p, rec)
	if in.Segment > 0 {
		p = shot.SegmentID(p, in.Segment)
	}
	fmt.Fprintf(w, "%s\n  format    %s\n", p, in.Format)
	if in.Layout != "" {
		fmt.Fprintf(w, "  layout    %s\n", in.Layout)
	}
	fmt.Fprintf(w, "  samples   %d\n  interval  %s (%.4g MS/s)\n  start     %s\n  duration  %s\n",
		in.Samples, EngTime(in.Interval_s), 1e-6/in.Interval_s, EngTime(in.Start_s), EngTime(in.Duration_s))
	if in.Trigger != "" {
		fmt.Fprintf(w, "  trigger   %s\n", in.Trigger)
	}
	for _, c := range in.Channels {
		u := c.Unit
		if u == "" {
			u = "(no unit)"
		}
		fmt.Fprintf(w, "  channel   %-12s %-9s min %.6g  max %.6g\n", c.Name, u, c.Min, c.Max)
	}
	for _, n := range in.Notes {
		fmt.Fprintf(w, "  note      %s\n", n)
	}
	keys := make([]string, 0, len(in.Meta))
	for k := range in.Meta {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		fmt.Fprintf(w, "  meta      %s: %s\n", k, in.Meta[k])
	}
	for _, x := range in.Warnings {
		fmt.Fprintf(w, "  warning   %s\n", x)
	}
}

// EngTime writes a time with an SI prefix.
func EngTime(s float64) string {
	a := math.Abs(s)
	switch {
	case a == 0:
		return "0 s"
	case a < 1e-6:
		return fmt.Sprintf("%.4g ns", s*1e9)
	case a < 1e-3:
		return fmt.Sprintf("%.4g us", s*1e6)
	case a < 1:
		return fmt.Sprintf("%.4g ms", s*1e3)
	}
	return fmt.Sprintf("%.4g s", s)
}
