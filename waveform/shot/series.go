package shot

import (
	"math"
	"slices"
	"time"

	"github.com/hvshot/hvshot/waveform/atmos"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/outcome"
)

// Stat is the spread of one parameter over a series, in SI.
type Stat struct {
	Name  string  `json:"name"`
	Key   string  `json:"key"`
	Group string  `json:"group"` // the shots it pools: shape family and polarity, "lightning, positive"
	Unit  string  `json:"unit"`
	N     int     `json:"n"`
	Mean  float64 `json:"mean"`
	SD    float64 `json:"sd"` // sample standard deviation; 0 for a single value
	Min   float64 `json:"min"`
	Max   float64 `json:"max"`
	// The series' type A evaluation (GUM 4.2; uncertainty.go, seriesUncertainty): the
	// standard uncertainty of the mean, sd/sqrt n, and the expanded uncertainties of
	// the mean and of one shot's value as a member of the series, each with what all
	// shots share (scale factor, time base); absent for a single value.
	UMean   *float64 `json:"u_mean,omitempty"`
	U95Mean *float64 `json:"u95_mean,omitempty"`
	U95Shot *float64 `json:"u95_shot,omitempty"`
	col     *Column
}

// Column is the output column the statistic summarises (nil after decoding JSON).
func (s Stat) Column() *Column { return s.col }

// Summary is a series' outcome: counts of files and rows by verdict, and statistics.
type Summary struct {
	Series      string `json:"series,omitempty"`
	Files       int    `json:"files"`
	Shots       int    `json:"shots"` // more than files when a file holds several segments
	Rows        int    `json:"rows"`
	Pass        int    `json:"pass"`
	Fail        int    `json:"fail"`
	Errors      int    `json:"error"`
	Measured    int    `json:"measured"`   // rows with no tolerance to judge (coil, antenna)
	Incomplete  int    `json:"incomplete"` // rows whose compliance could not be shown
	Discharge   int    `json:"discharge"`  // rows of a test where the test object discharged
	Stats       []Stat `json:"stats"`
	Interrupted bool   `json:"interrupted,omitempty"`
	// Command is how the run was started, for the record (set by the caller).
	Command []string `json:"command,omitempty"`
	// FirstFired and LastFired bound the shots' firing times (Row.Fired), when known.
	FirstFired *time.Time `json:"first_fired,omitempty"`
	LastFired  *time.Time `json:"last_fired,omitempty"`
	// Record is the test record the setup describes (set by the caller).
	Record *TestRecord `json:"record,omitempty"`
	// Atmosphere is the series' atmospheric correction (Config.Atmosphere; set by the
	// caller).
	Atmosphere *atmos.Correction `json:"atmosphere,omitempty"`
	// Tests are the outcomes of the tests the setup describes (Series.Judging).
	Tests []*TestOutcome `json:"tests,omitempty"`
}

// Series accumulates shots into a Summary without keeping them: its memory does not
// grow with the number of shots.
type Series struct {
	name               string
	files, shots, rows int
	pass, fail, errors int
	measured           int
	incomplete         int
	discharge          int
	acc                map[statKey]*welford
	first, last        time.Time
	cfg                *Config
	tests              []*testState // by Config.Tests
}

// testState is what a test keeps until the series ends: its counted applications, the
// rows it left out, the hand marks met.
type testState struct {
	plan       *TestPlan
	apps       []applied
	notCounted int
	marksSeen  map[string]bool
}

// statKey is one statistic: a column over one group of shots. Lightning and switching
// impulses, and positive and negative ones, are never pooled: a mean T2 of the two
// families, or a mean Ut of both polarities, describes no shot.
type statKey struct {
	col   int
	group string
}

// group is the row's group: its shape family (for dividers) and its polarity.
func group(r *Row) string {
	g := string(r.Polarity)
	switch r.Shape {
	case impulse.LightningFull, impulse.LightningChopped:
		g = "lightning, " + g
	case impulse.Switching:
		g = "switching, " + g
	}
	return g
}

// welford is Welford's running mean and sum of squared deviations (Knuth, TAOCP vol. 2,
// 4.2.2), stable where a sum of squares minus a squared sum is not.
type welford struct {
	n        int
	mean, m2 float64
	min, max float64
	started  bool
	sys      welfordSys
}

func (w *welford) add(v float64) {
	w.n++
	d := v - w.mean
	w.mean += d / float64(w.n)
	w.m2 += d * (v - w.mean)
	if !w.started {
		w.min, w.max, w.started = v, v, true
	}
	w.min, w.max = math.Min(w.min, v), math.Max(w.max, v)
}

// NewSeries starts a series of the given name.
func NewSeries(name string) *Series {
	return &Series{name: name, acc: map[statKey]*welford{}}
}

// Judging makes the series judge the test cfg describes (Config.Test), if any, and
// returns it.
func (s *Series) Judging(cfg *Config) *Series {
	s.cfg = cfg
	for _, p := range cfg.Tests {
		s.tests = append(s.tests, &testState{plan: p, marksSeen: map[string]bool{}})
	}
	return s
}

// testOf is the state of the test a divider row of a test belongs to.
func (s *Series) testOf(r *Row) *testState {
	if r.Role != Divider || r.Application == "" {
		return nil
	}
	for _, t := range s.tests {
		if t.plan.Belongs(r.File) {
			return t
		}
	}
	return nil
}

// Add counts one file's shots (one, or one a segment): their rows by verdict and their
// values.
func (s *Series) Add(shots ...*Shot) {
	s.files++
	for _, sh := range shots {
		s.add(sh)
	}
}

func (s *Series) add(sh *Shot) {
	s.shots++
	for i := range sh.Rows {
		r := &sh.Rows[i]
		s.rows++
		if f := r.Fired; !f.IsZero() {
			if s.first.IsZero() || f.Before(s.first) {
				s.first = f
			}
			if f.After(s.last) {
				s.last = f
			}
		}
		if t := s.testOf(r); t != nil {
			if _, ok, name := t.plan.mark(r.File); ok {
				t.marksSeen[name] = true
			}
			if !r.Counted {
				t.notCounted++
			} else {
				ut, _ := r.Value(ColTestVoltage)
				t.apps = append(t.apps, applied{fired: r.Fired, order: s.rows, polarity: r.Polarity, front: r.Discharge == "front",
					switching: r.Shape == impulse.Switching, app: outcome.Application{ID: r.File, Level_v: ut, Discharge: r.Discharge != "none"}})
			}
		}
		switch r.Verdict {
		case Pass:
			s.pass++
		case Fail:
			s.fail++
		case Measured:
			s.measured++
		case Incomplete:
			s.incomplete++
		case Discharge:
			s.discharge++
		default:
			s.errors++
		}
		for _, c := range Columns {
			// a value the verdict could not trust (a clipped extreme) is no statistic either
			if v, ok := r.Value(c); ok && c.Stat != "" && !slices.Contains(r.untrusted, c.Param) {
				k := statKey{c.index, group(r)}
				if s.acc[k] == nil {
					s.acc[k] = &welford{}
				}
				s.acc[k].add(v)
				s.acc[k].sys.add(r, c)
			}
		}
	}
}

// Summary returns the series so far.
func (s *Series) Summary() Summary {
	out := Summary{Series: s.name, Files: s.files, Shots: s.shots, Rows: s.rows, Pass: s.pass, Fail: s.fail, Errors: s.errors, Measured: s.measured, Incomplete: s.incomplete, Discharge: s.discharge, Stats: []Stat{}}
	for _, t := range s.tests {
		out.Tests = append(out.Tests, t.plan.judge(slices.Clone(t.apps), t.notCounted, t.marksSeen, s.cfg))
	}
	if !s.first.IsZero() {
		first, last := s.first.UTC(), s.last.UTC()
		out.FirstFired, out.LastFired = &first, &last
	}
	// in the per-shot tables' order, then the rest in the column table's
	cols := slices.Clone(Columns)
	rank := func(c *Column) int {
		if c.Console > 0 {
			return c.Console
		}
		return len(Columns) + c.index
	}
	slices.SortStableFunc(cols, func(a, b *Column) int { return rank(a) - rank(b) })
	var groups []string
	for k := range s.acc {
		if !slices.Contains(groups, k.group) {
			groups = append(groups, k.group)
		}
	}
	slices.Sort(groups)
	for _, c := range cols {
		for _, g := range groups {
			w := s.acc[statKey{c.index, g}]
			if w == nil {
				continue
			}
			st := Stat{Name: c.Stat, Key: c.Key, Group: g, Unit: c.Unit, N: w.n, Mean: w.mean, Min: w.min, Max: w.max, col: c}
			if w.n > 1 {
				st.SD = math.Sqrt(w.m2 / float64(w.n-1))
			}
			seriesUncertainty(&st, w.sys.mean())
			out.Stats = append(out.Stats, st)
		}
	}
	return out
}
