package shot

import (
	"fmt"
	"math"
	"path"
	"slices"
	"sort"
	"strings"
	"time"

	"github.com/hvshot/hvshot/waveform/atmos"
	"github.com/hvshot/hvshot/waveform/impulse"
	"github.com/hvshot/hvshot/waveform/outcome"
)

// TestSetup is one [[test]] table: a test the series holds, the shots that belong to it,
// and how its outcome is judged.
type TestSetup struct {
	Name string `toml:"name"`
	// Shots are the test's shots: patterns (path.Match) on the shot's identity or its
	// file name; none: every shot of the series.
	Shots       []string `toml:"shots"`
	TestVoltage Quantity `toml:"test_voltage"` // the specified test voltage; default [nominal] test_voltage
	// DischargePath_m is the test object's minimum discharge path, for the atmospheric
	// correction; default [atmosphere] discharge_path_m.
	DischargePath_m *float64 `toml:"discharge_path_m"`
	Purpose         string   `toml:"purpose"`   // withstand or fifty_percent
	Procedure       string   `toml:"procedure"` // A, B, C (withstand); up_and_down, multiple_level (fifty_percent)
	Polarity        string   `toml:"polarity"`  // positive or negative; absent: each polarity found, apart
	// LevelTolerance_pct: an impulse counts at the specified level when its test voltage
	// is within this of it (default: the test voltage tolerance, 3 %).
	LevelTolerance_pct *float64 `toml:"level_tolerance_pct"`
	Step               Quantity `toml:"step"` // the level step of an up-and-down series
	// Discharged and Withstood mark shots by hand (a discharge the divider does not
	// show, a collapse that was not the test object's), by identity or file name.
	Discharged []string `toml:"discharged"`
	Withstood  []string `toml:"withstood"`
}

// TestPlan is a series' test, checked: Config.Tests.
type TestPlan struct {
	Name      string            `json:"name,omitempty"`
	Shots     []string          `json:"shots,omitempty"`
	Procedure outcome.Procedure `json:"procedure"`
	Purpose   string            `json:"purpose"`  // "withstand" or "fifty_percent"
	Polarity  Polarity          `json:"polarity"` // "": each polarity apart
	// Specified_v is the specified test voltage U0 of a withstand test (at the standard
	// atmosphere), or an up-and-down series' first level; 0 when not given.
	Specified_v  float64 `json:"specified_v,omitempty"`
	LevelTol_pct float64 `json:"level_tolerance_pct"`
	Step_v       float64 `json:"step_v,omitempty"`
	Path_m       float64 `json:"discharge_path_m,omitempty"` // for the atmospheric correction; 0: none
	// marks are the hand-marked shots: true discharged, false withstood.
	marks map[string]bool
}

// tests checks the [[test]] tables; line is each table's first line, text the setup's.
func (s *Setup) tests(text string) ([]*TestPlan, error) {
	var plans []*TestPlan
	for i := range s.Tests {
		p, err := s.test(i, text)
		if err != nil {
			return nil, err
		}
		plans = append(plans, p)
	}
	return plans, nil
}

// test checks the i-th [[test]] table.
func (s *Setup) test(i int, text string) (*TestPlan, error) {
	t := &s.Tests[i]
	where := "test"
	if len(s.Tests) > 1 {
		where = fmt.Sprintf("test %d", i+1)
	}
	bad := func(key, format string, v ...any) error {
		return &SetupError{File: s.Path, Line: tableKeyLine(text, "test", i, key), Key: where + "." + key, Msg: fmt.Sprintf(format, v...)}
	}
	p := &TestPlan{Name: t.Name, Shots: t.Shots, Purpose: t.Purpose, Polarity: Polarity(t.Polarity), LevelTol_pct: impulse.DefaultTolerances().TestVoltage_pct}
	var ok bool
	if p.Procedure, ok = outcome.Procedures[t.Procedure]; !ok {
		return nil, bad("procedure", "%s: A, B or C (a withstand test), up_and_down or multiple_level (a 50 %% discharge voltage)", quoteOrMissing(t.Procedure))
	}
	want := map[bool]string{true: "withstand", false: "fifty_percent"}[p.Procedure.Withstand()]
	switch {
	case p.Purpose == "":
		p.Purpose = want
	case p.Purpose != "withstand" && p.Purpose != "fifty_percent":
		return nil, bad("purpose", "%q: withstand or fifty_percent", p.Purpose)
	case p.Purpose != want:
		return nil, bad("procedure", "%q is not a procedure of a %s test", t.Procedure, strings.ReplaceAll(p.Purpose, "_", " "))
	}
	switch p.Polarity {
	case "", Positive, Negative:
	default:
		return nil, bad("polarity", "%q: positive or negative (absent: each polarity found is judged apart)", t.Polarity)
	}
	for _, pat := range t.Shots {
		if _, err := path.Match(pat, ""); err != nil {
			return nil, bad("shots", "bad pattern %q", pat)
		}
	}
	if v := t.LevelTolerance_pct; v != nil {
		if !(*v > 0 && *v <= 20) {
			return nil, bad("level_tolerance_pct", "%g: a percentage above 0, at most 20", *v)
		}
		p.LevelTol_pct = *v
	}
	for _, q := range []struct {
		key string
		q   Quantity
	}{{"step", t.Step}, {"test_voltage", t.TestVoltage}} {
		if err := q.q.in(q.key, "V"); err != nil {
			return nil, bad(q.key, "%v", strings.TrimPrefix(err.Error(), q.key+": "))
		}
	}
	p.Step_v = math.Abs(t.Step.V)
	switch {
	case t.TestVoltage.Set:
		p.Specified_v = math.Abs(t.TestVoltage.V)
	case s.Nominal.TestVoltage.Set:
		p.Specified_v = math.Abs(s.Nominal.TestVoltage.V)
	}
	if p.Procedure.Withstand() && p.Specified_v == 0 {
		return nil, bad("procedure", "a withstand test needs the specified test voltage: give test_voltage here or in [nominal]")
	}
	if p.Step_v > 0 && p.Specified_v > 0 && p.Step_v > 0.2*p.Specified_v {
		return nil, bad("step", "%g V is more than 20 %% of the test voltage: a slip of unit?", p.Step_v)
	}
	if s.Atmosphere != nil && s.Atmosphere.Path_m != nil {
		p.Path_m = *s.Atmosphere.Path_m
	}
	if v := t.DischargePath_m; v != nil {
		if !pathPlausible(*v) {
			return nil, bad("discharge_path_m", "%g: %s", *v, pathWords)
		}
		p.Path_m = *v
	}
	p.marks = map[string]bool{}
	for _, m := range []struct {
		key   string
		names []string
		d     bool
	}{{"discharged", t.Discharged, true}, {"withstood", t.Withstood, false}} {
		for _, n := range m.names {
			if d, seen := p.marks[n]; seen && d != m.d {
				return nil, bad(m.key, "%q is marked both discharged and withstood", n)
			}
			p.marks[n] = m.d
		}
	}
	return p, nil
}

// tableKeyLine is the line of key in the i-th [[name]] table of text (the table's own
// line when the key is not written there), 0 when there is no such table.
func tableKeyLine(text, name string, i int, key string) int {
	n, table := -1, 0
	for no, l := range strings.Split(text, "\n") {
		l = strings.TrimSpace(l)
		if strings.HasPrefix(l, "[") {
			if l == "[["+name+"]]" {
				n++
			}
			if n == i && table == 0 && l == "[["+name+"]]" {
				table = no + 1
			} else if table > 0 {
				return table
			}
			continue
		}
		if k, _, ok := strings.Cut(l, "="); ok && table > 0 && strings.TrimSpace(k) == key {
			return no + 1
		}
	}
	return table
}

// Belongs reports whether the shot id is one of the test's shots.
func (p *TestPlan) Belongs(id string) bool { return matchShots(p.Shots, id) }

// matchShots reports whether the shot id is one of a setup's shots: patterns
// (path.Match) on its identity or its file name; no patterns, every shot.
func matchShots(patterns []string, id string) bool {
	if len(patterns) == 0 {
		return true
	}
	for _, pat := range patterns {
		for _, n := range []string{id, fileName(id)} {
			if ok, _ := path.Match(pat, n); ok {
				return true
			}
		}
	}
	return false
}

// fileName is the file name in a shot's identity.
func fileName(id string) string { return path.Base(strings.ReplaceAll(id, "\\", "/")) }

// TestFor is the first test the shot id belongs to, nil when none.
func (c *Config) TestFor(id string) *TestPlan {
	for _, p := range c.Tests {
		if p.Belongs(id) {
			return p
		}
	}
	return nil
}

// correction is the atmospheric correction of a withstand test at its level: nil
// without air or a discharge path.
func (p *TestPlan) correction(air *atmos.Conditions) *atmos.Correction {
	if air == nil || p.Path_m == 0 || p.Specified_v == 0 || !p.Procedure.Withstand() {
		return nil
	}
	corr, err := atmos.CorrectWithstand(*air, p.Specified_v, p.Path_m)
	if err != nil {
		return nil
	}
	return &corr
}

func quoteOrMissing(s string) string {
	if s == "" {
		return "missing"
	}
	return fmt.Sprintf("%q", s)
}

// mark is the hand marking of the shot id: by its identity, its file name, or its file
// name without the extension.
func (p *TestPlan) mark(id string) (discharged, marked bool, name string) {
	base := fileName(id)
	for _, n := range []string{id, base, strings.TrimSuffix(base, path.Ext(base))} {
		if d, ok := p.marks[n]; ok {
			return d, true, n
		}
	}
	return false, false, ""
}

// application decides a divider row's part in the test: whether it discharged (and
// where the word came from), and whether it counts as an application, with the reason
// when not; and whether the row is a withstand test's setting-up impulse (below the
// level). applied_v is the level a withstand test applies (U0, or U0 Kt).
func (p *TestPlan) application(row *Row, r *impulse.Result, chopped bool, applied_v float64) (settingUp bool) {
	collapse := ""
	if r != nil && !chopped {
		collapse = string(r.Collapse)
	}
	row.Discharge, row.DischargeSource = "none", "record"
	if collapse != "" {
		row.Discharge = collapse
	}
	if d, ok, _ := p.mark(row.File); ok {
		row.DischargeSource = "setup"
		switch {
		case !d:
			row.Discharge = "none"
		case collapse == "":
			row.Discharge = "marked"
		}
	}
	discharged := row.Discharge != "none"
	ut, utOK := row.Value(ColTestVoltage)
	why := ""
	switch {
	case row.Verdict == Error:
		why = "not evaluated"
	case p.Polarity != "" && row.Polarity != p.Polarity:
		why = fmt.Sprintf("%s; the test is %s", row.Polarity, p.Polarity)
	case !p.Procedure.Withstand():
		// a U50 series varies its level by design; what counts is a valid impulse
		switch {
		case discharged && row.Discharge == "front" && p.Procedure == outcome.MultipleLevel:
			why = "discharged on the front: its level is unknown"
		case discharged:
		case row.Verdict == Incomplete:
			why = "the record is incomplete"
		case row.Verdict == Fail:
			why = "its shape is out of tolerance"
		}
	case discharged && row.Discharge == "front":
		// the level was not reached; the impulse was applied at it all the same
	case !utOK || slices.Contains(row.Unmeasured, "test_voltage"):
		why = "its test voltage could not be measured"
	case math.Abs(ut-applied_v) > p.LevelTol_pct/100*applied_v:
		why = fmt.Sprintf("%.0f %% of the level applied", 100*ut/applied_v)
		if settingUp = ut < applied_v; settingUp {
			why += ", a setting-up impulse"
		}
	case discharged:
	case row.Verdict == Incomplete:
		why = "the record is incomplete"
	case row.Verdict == Fail:
		why = "out of tolerance (" + strings.Join(row.FailureNames(), ", ") + ")"
	}
	row.Counted = why == ""
	row.Application = "counted"
	if why != "" {
		row.Application = "not counted: " + why
	}
	return settingUp
}

// TestOutcome is the test's outcome in the summary: the plan, the level applied, and
// a result for each polarity judged.
type TestOutcome struct {
	TestPlan
	Applied_v  float64           `json:"applied_v,omitempty"`  // the level a withstand test applies: U0 Kt (U0 without an atmospheric correction)
	Correction *atmos.Correction `json:"correction,omitempty"` // a withstand test's atmospheric correction at its level and discharge path
	Results    []PolarityResult  `json:"results"`
	NotCounted int               `json:"not_counted"` // divider rows listed but not counted
	Unmatched  []string          `json:"unmatched_marks,omitempty"`
}

// PolarityResult is one polarity's outcome, with a U50 also at the standard reference
// atmosphere (U50 / Kt, Kt computed with U_B = U50) when the air is described.
type PolarityResult struct {
	outcome.Result
	U50Standard_v float64           `json:"u50_standard_v,omitempty"`
	Correction    *atmos.Correction `json:"u50_correction,omitempty"`
}

// TestFailed reports whether some withstand test of the series failed.
func (s Summary) TestFailed() bool {
	return slices.ContainsFunc(s.Tests, (*TestOutcome).Failed)
}

// Failed reports whether a withstand test failed in some polarity.
func (t *TestOutcome) Failed() bool {
	for _, r := range t.Results {
		if r.Verdict == outcome.Failed {
			return true
		}
	}
	return false
}

// applied is one counted application, kept until the series ends: the test's outcome
// may depend on the firing order.
type applied struct {
	fired     time.Time
	order     int
	polarity  Polarity
	app       outcome.Application
	front     bool // discharged on the front: its level is inferred (up-and-down)
	switching bool
}

// judge is the test's outcome from the counted applications.
func (p *TestPlan) judge(apps []applied, notCounted int, seen map[string]bool, cfg *Config) *TestOutcome {
	out := &TestOutcome{TestPlan: *p, NotCounted: notCounted}
	for n := range p.marks {
		if !seen[n] {
			out.Unmatched = append(out.Unmatched, n)
		}
	}
	sort.Strings(out.Unmatched)
	sort.SliceStable(apps, func(i, j int) bool {
		a, b := apps[i], apps[j]
		if !a.fired.Equal(b.fired) && !a.fired.IsZero() && !b.fired.IsZero() {
			return a.fired.Before(b.fired)
		}
		return a.order < b.order
	})
	// the air of the test: with a log, the reading in force at its last application
	air := cfg.Air
	if n := len(apps); n > 0 {
		air, _ = cfg.AirAt(apps[n-1].fired)
	}
	if p.Procedure.Withstand() {
		out.Applied_v = p.Specified_v
		if corr := p.correction(air); corr != nil {
			out.Applied_v, out.Correction = atmos.ToApply(p.Specified_v, *corr), corr
		}
	}
	pols := []Polarity{p.Polarity}
	if p.Polarity == "" {
		pols = nil
		for _, pol := range []Polarity{Positive, Negative} {
			if slices.ContainsFunc(apps, func(a applied) bool { return a.polarity == pol }) {
				pols = append(pols, pol)
			}
		}
		if len(pols) == 0 {
			pols = []Polarity{Positive}
		}
	}
	for _, pol := range pols {
		var list []outcome.Application
		switching := false
		for _, a := range apps {
			if a.polarity != pol {
				continue
			}
			switching = switching || a.switching
			if a.front && p.Procedure == outcome.UpDown && len(list) > 0 {
				// an up-and-down impulse discharged on the front is at the level the
				// rule sets after the one before
				prev := list[len(list)-1]
				a.app.Level_v = prev.Level_v + p.Step_v
				if prev.Discharge {
					a.app.Level_v = prev.Level_v - p.Step_v
				}
			}
			list = append(list, a.app)
		}
		var r outcome.Result
		switch p.Procedure {
		case outcome.UpDown:
			r = outcome.UpAndDown(string(pol), list, p.Step_v, switching)
		case outcome.MultipleLevel:
			r = outcome.MultipleLevels(string(pol), list, p.Step_v, switching)
		default:
			r = outcome.Withstand(p.Procedure, string(pol), list)
		}
		pr := PolarityResult{Result: r}
		if air != nil && p.Path_m > 0 && r.Verdict == outcome.Determined {
			if corr, err := atmos.Correct(*air, r.U50_v, p.Path_m); err == nil {
				pr.Correction, pr.U50Standard_v = &corr, atmos.ToStandard(r.U50_v, corr)
			}
		}
		out.Results = append(out.Results, pr)
	}
	return out
}
