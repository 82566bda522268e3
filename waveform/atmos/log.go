package atmos

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
	"time"
)

// Causes of a *LogError; test with errors.Is. A reading outside Check's ranges is a
// *LogError wrapping the *FieldError instead.
var (
	ErrLogEmpty  = errors.New("no readings")
	ErrLogHeader = errors.New("bad header")
	ErrLogFields = errors.New("wrong number of fields")
	ErrLogSyntax = errors.New("bad CSV")
	ErrLogTime   = errors.New("not a time")
	ErrLogNumber = errors.New("not a number")
	ErrLogOrder  = errors.New("time goes back")
)

// LogError is a log that cannot be read, with its place: Line and Column are 1-based
// (Column counts bytes) and 0 when they do not apply.
type LogError struct {
	File         string // set by the caller who knows it; "atmos log" when empty
	Line, Column int
	Err          error
	Detail       string
}

func (e *LogError) Error() string {
	s := e.File
	if s == "" {
		s = "atmos log"
	}
	if e.Line > 0 {
		s += fmt.Sprintf(":%d", e.Line)
		if e.Column > 0 {
			s += fmt.Sprintf(":%d", e.Column)
		}
	}
	s += ": " + e.Err.Error()
	if e.Detail != "" {
		s += ": " + e.Detail
	}
	return s
}

func (e *LogError) Unwrap() error { return e.Err }

// Reading is one line of a log: the conditions at Time, and the line it came from.
type Reading struct {
	Time time.Time
	Conditions
	Line int
}

// Log is a logger's readings in time order.
type Log []Reading

// logColumns are the header names ReadLog knows, with the factor to SI. A column for
// each quantity, so the unit is in the file and never guessed from the numbers.
var logColumns = map[string]struct {
	quantity string
	scale    float64
}{
	"time":                  {"time", 1},
	"pressure_pa":           {"pressure", 1},
	"pressure_hpa":          {"pressure", 100},
	"pressure_kpa":          {"pressure", 1000},
	"temperature_c":         {"temperature", 1},
	"rel_humidity_pct":      {"rel", 1},
	"abs_humidity_g_per_m3": {"abs", 1},
}

// logTimeLayouts: RFC 3339, or a date and time without a zone, taken as UTC the way the
// capture readers take a trigger time without one, so the two compare.
var logTimeLayouts = []string{time.RFC3339Nano, "2006-01-02T15:04:05.999999999", "2006-01-02 15:04:05.999999999"}

// ReadLog reads a comma-separated log of readings. The first line names the columns:
// time, one of pressure_pa, pressure_hpa, pressure_kpa, temperature_c, and one of
// rel_humidity_pct, abs_humidity_g_per_m3; other columns are ignored. Lines starting
// with # and blank lines are skipped. Times must not go back. Every reading passes
// Conditions.Check.
func ReadLog(r io.Reader) (Log, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	head, err := cr.Read()
	if err == io.EOF {
		return nil, &LogError{Err: ErrLogEmpty, Detail: "no header"}
	}
	if err != nil {
		return nil, csvError(err)
	}
	head = append([]string(nil), head...) // ReuseRecord would overwrite it
	col := map[string]int{}
	scale := map[string]float64{}
	for i, name := range head {
		c, ok := logColumns[strings.ToLower(strings.TrimSpace(name))]
		if !ok {
			continue
		}
		line, column := cr.FieldPos(i)
		if _, dup := col[c.quantity]; dup || (c.quantity == "rel" && hasKey(col, "abs")) || (c.quantity == "abs" && hasKey(col, "rel")) {
			what := c.quantity
			if what == "rel" || what == "abs" {
				what = "humidity"
			}
			return nil, &LogError{Line: line, Column: column, Err: ErrLogHeader, Detail: fmt.Sprintf("%q: a second %s column", name, what)}
		}
		col[c.quantity], scale[c.quantity] = i, c.scale
	}
	for _, q := range []struct{ key, names string }{
		{"time", "time"}, {"pressure", "pressure_pa, pressure_hpa or pressure_kpa"}, {"temperature", "temperature_c"},
	} {
		if !hasKey(col, q.key) {
			return nil, &LogError{Line: 1, Err: ErrLogHeader, Detail: "no " + q.names + " column"}
		}
	}
	if !hasKey(col, "rel") && !hasKey(col, "abs") {
		return nil, &LogError{Line: 1, Err: ErrLogHeader, Detail: "no rel_humidity_pct or abs_humidity_g_per_m3 column"}
	}

	var log Log
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, csvError(err)
		}
		at := func(q string) (int, int) { return cr.FieldPos(col[q]) }
		line, _ := cr.FieldPos(0)
		rd := Reading{Line: line}
		cell := strings.TrimSpace(rec[col["time"]])
		if rd.Time, err = parseLogTime(cell); err != nil {
			l, c := at("time")
			return nil, &LogError{Line: l, Column: c, Err: ErrLogTime, Detail: fmt.Sprintf("%q: give RFC 3339 (2024-05-06T09:30:00+02:00) or 2024-05-06 09:30:00 (UTC)", cell)}
		}
		if n := len(log); n > 0 && rd.Time.Before(log[n-1].Time) {
			l, c := at("time")
			return nil, &LogError{Line: l, Column: c, Err: ErrLogOrder, Detail: fmt.Sprintf("%s is before line %d's %s", cell, log[n-1].Line, log[n-1].Time.Format(time.RFC3339))}
		}
		for _, f := range []struct {
			q   string
			dst *float64
		}{{"pressure", &rd.Pressure_pa}, {"temperature", &rd.Temperature_c}, {"rel", &rd.RelHumidity_pct}, {"abs", &rd.AbsHumidity_g_per_m3}} {
			q, dst := f.q, f.dst
			i, ok := col[q]
			if !ok {
				continue
			}
			cell := strings.TrimSpace(rec[i])
			v, err := strconv.ParseFloat(cell, 64)
			if err != nil {
				l, c := at(q)
				return nil, &LogError{Line: l, Column: c, Err: ErrLogNumber, Detail: fmt.Sprintf("%q in column %s", cell, head[i])}
			}
			*dst = v * scale[q]
		}
		if err := rd.Check(); err != nil {
			var fe *FieldError
			l, c := line, 0
			if errors.As(err, &fe) {
				l, c = at(map[string]string{"Pressure_pa": "pressure", "Temperature_c": "temperature", "RelHumidity_pct": "rel", "AbsHumidity_g_per_m3": "abs"}[fe.Field])
			}
			return nil, &LogError{Line: l, Column: c, Err: err}
		}
		log = append(log, rd)
	}
	if len(log) == 0 {
		return nil, &LogError{Err: ErrLogEmpty, Detail: "a header and no readings"}
	}
	return log, nil
}

// LastBefore is the last reading at or before t: the air as it was when a shot was
// fired. False when t precedes the log.
func (l Log) LastBefore(t time.Time) (Reading, bool) {
	i := sort.Search(len(l), func(i int) bool { return l[i].Time.After(t) })
	if i == 0 {
		return Reading{}, false
	}
	return l[i-1], true
}

// Nearest is the reading closest in time to t, the earlier one on a tie; false for an
// empty log. The caller judges whether the gap, r.Time.Sub(t), is too long.
func (l Log) Nearest(t time.Time) (Reading, bool) {
	if len(l) == 0 {
		return Reading{}, false
	}
	i := sort.Search(len(l), func(i int) bool { return !l[i].Time.Before(t) })
	switch {
	case i == 0:
		return l[0], true
	case i == len(l):
		return l[i-1], true
	case l[i].Time.Sub(t) < t.Sub(l[i-1].Time):
		return l[i], true
	default:
		return l[i-1], true
	}
}

func parseLogTime(s string) (time.Time, error) {
	var err error
	for _, layout := range logTimeLayouts {
		var t time.Time
		if t, err = time.Parse(layout, s); err == nil {
			return t, nil
		}
	}
	return time.Time{}, err
}

// csvError gives encoding/csv's failures our type, keeping their place.
func csvError(err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		cause := ErrLogSyntax
		if errors.Is(pe.Err, csv.ErrFieldCount) {
			cause = ErrLogFields
		}
		return &LogError{Line: pe.Line, Column: pe.Column, Err: cause, Detail: pe.Err.Error()}
	}
	return &LogError{Err: err}
}

func hasKey(m map[string]int, k string) bool { _, ok := m[k]; return ok }
