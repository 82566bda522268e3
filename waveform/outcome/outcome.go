package outcome

import (
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strings"
)

// Procedure is how a test is run and judged (IEC 60060-1:2010 clause 7, from memory).
type Procedure string

const (
	// ProcedureA: 3 impulses at the test voltage; passed with no disruptive discharge.
	ProcedureA Procedure = "A"
	// ProcedureB: 15 impulses; passed with at most 2 disruptive discharges, all on
	// self-restoring insulation.
	ProcedureB Procedure = "B"
	// ProcedureC: 3 impulses; passed with none, or with exactly 1 and then none in 9
	// more.
	ProcedureC Procedure = "C"
	// UpDown: one impulse per level, the next a step up after a withstand and a step
	// down after a discharge; gives U50 and, when valid, its standard deviation.
	UpDown Procedure = "up-and-down"
	// MultipleLevel: several impulses at each of several levels; U50 and the standard
	// deviation by a probit maximum-likelihood fit.
	MultipleLevel Procedure = "multiple-level"
)

// Procedures are the procedures by the name a setup file gives them.
var Procedures = map[string]Procedure{"A": ProcedureA, "B": ProcedureB, "C": ProcedureC,
	"up_and_down": UpDown, "multiple_level": MultipleLevel}

// Withstand reports whether p is a withstand procedure (the others estimate U50).
func (p Procedure) Withstand() bool { return p == ProcedureA || p == ProcedureB || p == ProcedureC }

// Verdict is a test's outcome.
type Verdict string

const (
	Passed     Verdict = "passed"      // a withstand test the object withstood
	Failed     Verdict = "failed"      // a withstand test with more discharges than allowed
	Determined Verdict = "determined"  // a U50 test with enough applications for its estimate
	NotDecided Verdict = "not decided" // too few valid applications for either
)

// Application is one impulse applied to the test object.
type Application struct {
	ID        string  // the shot's identity, for the reasons
	Level_v   float64 // magnitude of the applied test voltage
	Discharge bool    // a disruptive discharge occurred
}

// Level is the applications at one voltage level.
type Level struct {
	Level_v    float64 `json:"level_v"`
	Applied    int     `json:"applied"`
	Discharges int     `json:"discharges"`
}

// Result is a series' outcome for one polarity. Figures that do not apply are NaN
// (written as absent).
type Result struct {
	Procedure  Procedure `json:"procedure"`
	Polarity   string    `json:"polarity"`
	Verdict    Verdict   `json:"verdict"`
	Reason     string    `json:"reason"`
	Applied    int       `json:"applied"` // applications counted
	Discharges int       `json:"discharges"`
	// Needed is the applications the procedure needs (withstand), or the minimum a
	// U50 estimate asks for.
	Needed int `json:"needed"`

	U50_v        float64 `json:"u50_v"`
	U50StdErr_v  float64 `json:"u50_std_err_v"` // one standard error of U50 (multiple-level)
	Sigma_v      float64 `json:"sigma_v"`       // standard deviation of the discharge voltage
	Z_pct        float64 `json:"z_pct"`         // sigma / U50, percent
	ZMeasured    bool    `json:"z_measured"`    // false: the conventional z was used for U10
	U10_v        float64 `json:"u10_v"`         // U50 (1 - 1.3 z)
	Step_v       float64 `json:"step_v"`        // up-and-down: the level step
	DixonMoodFit float64 `json:"dixon_mood_ratio"`
	Levels       []Level `json:"levels,omitempty"`
}

func newResult(p Procedure, polarity string) Result {
	nan := math.NaN()
	return Result{Procedure: p, Polarity: polarity, U50_v: nan, U50StdErr_v: nan, Sigma_v: nan, Z_pct: nan, U10_v: nan, Step_v: nan, DixonMoodFit: nan}
}

// needed is the applications a withstand procedure asks for at most: A and C's first
// part 3, C with one discharge 12, B 15.
var needed = map[Procedure]int{ProcedureA: 3, ProcedureB: 15, ProcedureC: 3}

// Withstand judges a withstand test from its applications at the specified level, in
// firing order. Applications beyond what the procedure asks for are not counted.
func Withstand(p Procedure, polarity string, apps []Application) Result {
	r := newResult(p, polarity)
	r.Needed = needed[p]
	var ids []string // the discharges, for the reason
	count := func(n int) {
		for _, a := range apps[:min(n, len(apps))] {
			r.Applied++
			if a.Discharge {
				r.Discharges++
				ids = append(ids, a.ID)
			}
		}
	}
	which := func() string {
		if len(ids) == 0 {
			return ""
		}
		return " (" + strings.Join(ids, ", ") + ")"
	}
	switch p {
	case ProcedureA:
		count(3)
		switch {
		case r.Discharges > 0:
			r.Verdict, r.Reason = Failed, fmt.Sprintf("%s in %d applications%s; procedure A allows none", plural(r.Discharges, "disruptive discharge"), r.Applied, which())
		case r.Applied < 3:
			r.Verdict, r.Reason = NotDecided, fmt.Sprintf("%d of the 3 applications procedure A needs", r.Applied)
		default:
			r.Verdict, r.Reason = Passed, "3 applications without disruptive discharge"
		}
	case ProcedureB:
		count(15)
		switch {
		case r.Discharges > 2:
			r.Verdict, r.Reason = Failed, fmt.Sprintf("%s in %d applications%s; procedure B allows 2 in 15", plural(r.Discharges, "disruptive discharge"), r.Applied, which())
		case r.Applied < 15:
			r.Verdict, r.Reason = NotDecided, fmt.Sprintf("%d of the 15 applications procedure B needs (%s so far)", r.Applied, plural(r.Discharges, "disruptive discharge"))
		default:
			r.Verdict, r.Reason = Passed, fmt.Sprintf("%s in 15 applications%s; procedure B allows 2", plural(r.Discharges, "disruptive discharge"), which())
		}
	case ProcedureC:
		count(3)
		first := r.Discharges
		switch {
		case first >= 2:
			r.Verdict, r.Reason = Failed, fmt.Sprintf("%d disruptive discharges in the first 3 applications%s; procedure C allows 1", first, which())
		case r.Applied < 3:
			r.Verdict, r.Reason = NotDecided, fmt.Sprintf("%d of the 3 applications procedure C needs", r.Applied)
		case first == 0:
			r.Verdict, r.Reason = Passed, "3 applications without disruptive discharge"
		default:
			r.Needed = 12
			r.Applied, r.Discharges, ids = 0, 0, nil
			count(12)
			switch {
			case r.Discharges > 1:
				r.Verdict, r.Reason = Failed, fmt.Sprintf("1 disruptive discharge in the first 3 applications and %d in the 9 more%s; procedure C allows none there", r.Discharges-1, which())
			case r.Applied < 12:
				r.Verdict, r.Reason = NotDecided, fmt.Sprintf("1 disruptive discharge in the first 3 applications%s: procedure C needs 9 more without one; %d so far", which(), r.Applied-3)
			default:
				r.Verdict, r.Reason = Passed, fmt.Sprintf("1 disruptive discharge in the first 3 applications%s and none in the 9 more", which())
			}
		}
	default:
		r.Verdict, r.Reason = NotDecided, fmt.Sprintf("%q is not a withstand procedure", p)
	}
	if extra := len(apps) - r.Applied; extra > 0 && r.Verdict != Failed {
		r.Reason += fmt.Sprintf("; %d further application%s at the level not counted", extra, map[bool]string{true: "s"}[extra > 1])
	}
	return r
}

func plural(n int, what string) string {
	if n == 1 {
		return "1 " + what
	}
	return fmt.Sprintf("%d %ss", n, what)
}

// ConventionalZ is the per-unit standard deviation IEC 60060-1 takes when it is not
// measured: 0.03 for lightning and 0.06 for switching impulses (from memory).
func ConventionalZ(switching bool) float64 {
	if switching {
		return 0.06
	}
	return 0.03
}

// withU10 fills z and U10 from U50 and sigma, or from the conventional z.
func (r *Result) withU10(zConv float64) {
	z := r.Sigma_v / r.U50_v
	r.ZMeasured = !math.IsNaN(z)
	if !r.ZMeasured {
		z = zConv
	}
	r.Z_pct = 100 * z
	r.U10_v = r.U50_v * (1 - 1.3*z)
}

// Group sums applications into levels: each application goes to the level nearest its
// own on a grid of step from origin (step 0: levels within 1 % of each other's first
// member are one), sorted by voltage.
func Group(apps []Application, origin_v, step_v float64) []Level {
	var levels []Level
	for _, a := range apps {
		l := a.Level_v
		if step_v > 0 {
			l = origin_v + step_v*math.Round((a.Level_v-origin_v)/step_v)
		}
		i := sort.Search(len(levels), func(i int) bool { return levels[i].Level_v >= l-levelTol(l, step_v) })
		if i == len(levels) || math.Abs(levels[i].Level_v-l) > levelTol(l, step_v) {
			levels = append(levels, Level{})
			copy(levels[i+1:], levels[i:])
			levels[i] = Level{Level_v: l}
		}
		levels[i].Applied++
		if a.Discharge {
			levels[i].Discharges++
		}
	}
	return levels
}

func levelTol(l, step float64) float64 {
	if step > 0 {
		return step / 4
	}
	return 0.01 * math.Abs(l)
}

// MarshalJSON writes the figures that do not apply (NaN) as absent: JSON has no NaN.
func (r Result) MarshalJSON() ([]byte, error) {
	num := func(v float64) *float64 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil
		}
		return &v
	}
	type plain Result // without this method
	return json.Marshal(struct {
		plain
		U50_v        *float64 `json:"u50_v,omitempty"`
		U50StdErr_v  *float64 `json:"u50_std_err_v,omitempty"`
		Sigma_v      *float64 `json:"sigma_v,omitempty"`
		Z_pct        *float64 `json:"z_pct,omitempty"`
		U10_v        *float64 `json:"u10_v,omitempty"`
		Step_v       *float64 `json:"step_v,omitempty"`
		DixonMoodFit *float64 `json:"dixon_mood_ratio,omitempty"`
	}{plain(r), num(r.U50_v), num(r.U50StdErr_v), num(r.Sigma_v), num(r.Z_pct), num(r.U10_v), num(r.Step_v), num(r.DixonMoodFit)})
}
