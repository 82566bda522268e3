package waveform

import (
	"errors"
	"fmt"
	"math"
	"time"
)

// MinSamples is the fewest samples a channel may have; fewer cannot carry an impulse.
const MinSamples = 8

// Channel is one recorded signal.
type Channel struct {
	Name    string
	Unit    string // SI unit symbol of Samples after scaling, e.g. "V", "A", "V/m"; may be empty
	Samples []float64

	// Scope metadata, where the file states it.
	HasRange           bool
	RangeMin, RangeMax float64 // vertical range in Unit
	ADCBits            int     // 0 when unknown
	// OverRange counts the samples the instrument itself marked as beyond its range
	// (codes outside the stated limits); 0 when none or when the file cannot say.
	OverRange int
}

// Record is one capture: channels on one uniform time base.
type Record struct {
	Source     string // file name, for messages
	Format     string // reader that produced it, e.g. "text", "npy", "raw"
	Layout     string // the file layout the reader recognised, in words; may be empty
	Start_s    float64
	Interval_s float64
	Channels   []Channel
	Meta       map[string]string
	// Trigger is the acquisition's trigger (firing) time when the file states it.
	Trigger time.Time
	// Segment is the 1-based segment of a segmented (sequence) capture, 0 for a file
	// that holds one record.
	Segment int
	// Notes say what the reader decided and did: header lines used for names and
	// units, rows dropped at the edges. Warnings are about the data's trustworthiness.
	Notes    []string
	Warnings []string
}

// The bounds of a plausible time base (ours): a sample interval from 1 ps (faster than
// any digitiser) to 1 s (slower than any impulse record), and a start and a span within
// an hour. A value outside them is a damaged header or a misread unit, never a record.
const (
	MinInterval_s = 1e-12
	MaxInterval_s = 1.0
	MaxSpan_s     = 3600.0
)

// ErrInvalid is wrapped by every validation failure of NewRecord.
var ErrInvalid = errors.New("invalid record")

// NewRecord validates and returns a record: positive finite interval, finite start,
// at least one channel, equal lengths, at least MinSamples samples, finite samples.
func NewRecord(source string, interval_s, start_s float64, channels []Channel) (*Record, error) {
	r := &Record{Source: source, Interval_s: interval_s, Start_s: start_s, Channels: channels, Meta: map[string]string{}}
	if err := r.Validate(); err != nil {
		return nil, err
	}
	return r, nil
}

// ValidateTime checks the time base against the bounds above.
func (r *Record) ValidateTime() error {
	if !(r.Interval_s >= MinInterval_s && r.Interval_s <= MaxInterval_s) {
		hint := ""
		if r.Interval_s > MaxInterval_s {
			hint = ": times in ns or us read as seconds? Give the time unit in the header (t [ns]) or the interval with --interval"
		}
		return fmt.Errorf("%w: sample interval %.4g s is outside %g to %g s%s", ErrInvalid, r.Interval_s, MinInterval_s, MaxInterval_s, hint)
	}
	if !(math.Abs(r.Start_s) <= MaxSpan_s) {
		return fmt.Errorf("%w: start time %g s is more than an hour from the trigger", ErrInvalid, r.Start_s)
	}
	if d := r.Duration_s(); d > MaxSpan_s {
		return fmt.Errorf("%w: the record spans %g s, more than an hour", ErrInvalid, d)
	}
	return nil
}

// Validate checks the invariants NewRecord promises.
func (r *Record) Validate() error {
	if err := r.ValidateTime(); err != nil {
		return err
	}
	if len(r.Channels) == 0 {
		return fmt.Errorf("%w: no channels", ErrInvalid)
	}
	n := len(r.Channels[0].Samples)
	for _, c := range r.Channels {
		if len(c.Samples) != n {
			return fmt.Errorf("%w: channel %q has %d samples, channel %q has %d", ErrInvalid, c.Name, len(c.Samples), r.Channels[0].Name, n)
		}
		for i, v := range c.Samples {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%w: channel %q sample %d is %g", ErrInvalid, c.Name, i, v)
			}
		}
	}
	if n < MinSamples {
		return fmt.Errorf("%w: %d samples, need at least %d", ErrInvalid, n, MinSamples)
	}
	return nil
}

// Len is the number of samples per channel.
func (r *Record) Len() int {
	if len(r.Channels) == 0 {
		return 0
	}
	return len(r.Channels[0].Samples)
}

// Duration_s is the time spanned from the first to the last sample.
func (r *Record) Duration_s() float64 { return float64(r.Len()-1) * r.Interval_s }

// Time_s is the time of sample i.
func (r *Record) Time_s(i int) float64 { return r.Start_s + float64(i)*r.Interval_s }

// Channel returns the channel with the given name, or nil.
func (r *Record) Channel(name string) *Channel {
	for i := range r.Channels {
		if r.Channels[i].Name == name {
			return &r.Channels[i]
		}
	}
	return nil
}
