package outcome

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
)

// MinUpDown is the useful applications an up-and-down estimate needs, and
// MinMultipleLevels the levels a multiple-level one needs (IEC 60060-1:2010 clause 7,
// from memory).
const (
	MinUpDown         = 20
	MinMultipleLevels = 4
)

// dixonMoodValid is Dixon and Mood's (1948) condition for their standard deviation
// formula: (N B - A^2) / N^2 above 0.3.
const dixonMoodValid = 0.3

// UpAndDown estimates U50 from an up-and-down series in firing order, by Dixon and
// Mood (J. Amer. Stat. Assoc. 43 (1948) 109-126): counting only the less frequent
// event, n_i times at level y0 + i d from the lowest level y0 where it occurs, N = sum
// n_i, A = sum i n_i, B = sum i^2 n_i,
//
//	U50   = y0 + d (A/N - 1/2)   counting discharges
//	U50   = y0 + d (A/N + 1/2)   counting withstands
//	sigma = 1.620 d ((N B - A^2)/N^2 + 0.029), valid when (N B - A^2)/N^2 > 0.3
//
// The half step is there because a discharge happens, on average, half a step above
// the level where discharge and withstand are equally likely: the plain weighted mean
// of the levels of the less frequent event lies half a step off to that event's side.
// The series is counted from the first change of response, the application before it
// included (Dixon and Mood's practice; a series started far from U50 would otherwise
// weigh its approach). step_v 0 takes the step from the series. Without a valid sigma,
// U10 uses the conventional z.
func UpAndDown(polarity string, apps []Application, step_v float64, switching bool) Result {
	r := newResult(UpDown, polarity)
	r.Needed = MinUpDown
	start := -1
	for i := 1; i < len(apps) && start < 0; i++ {
		if apps[i].Discharge != apps[i-1].Discharge {
			start = i - 1
		}
	}
	if start < 0 {
		r.Applied = len(apps)
		r.Verdict, r.Reason = NotDecided, fmt.Sprintf("no change of response in %d applications: the levels never bracket U50", len(apps))
		return r
	}
	if step_v <= 0 {
		step_v = inferStep(apps)
	}
	if !(step_v > 0) {
		r.Verdict, r.Reason = NotDecided, "the level step could not be found: give it in the setup"
		return r
	}
	r.Step_v = step_v
	used := apps[start:]
	r.Applied = len(used)
	for _, a := range used {
		if a.Discharge {
			r.Discharges++
		}
	}
	r.Levels = Group(used, gridOrigin(apps, step_v), step_v)
	off := 0
	for i := 1; i < len(used); i++ {
		want := used[i-1].Level_v + step_v
		if used[i-1].Discharge {
			want = used[i-1].Level_v - step_v
		}
		if math.Abs(used[i].Level_v-want) > step_v/2 {
			off++
		}
	}
	if r.Applied < MinUpDown {
		r.Verdict, r.Reason = NotDecided, fmt.Sprintf("%d useful applications (from the first change of response); the up-and-down method needs %d", r.Applied, MinUpDown)
		return r
	}
	onDischarges := r.Discharges <= r.Applied-r.Discharges
	y0 := math.Inf(1)
	for _, l := range r.Levels {
		if n := eventCount(l, onDischarges); n > 0 && l.Level_v < y0 {
			y0 = l.Level_v
		}
	}
	var n, a, b float64
	for _, l := range r.Levels {
		k := eventCount(l, onDischarges)
		i := math.Round((l.Level_v - y0) / step_v)
		n += float64(k)
		a += i * float64(k)
		b += i * i * float64(k)
	}
	half := 0.5
	if onDischarges {
		half = -0.5
	}
	r.U50_v = y0 + step_v*(a/n+half)
	ratio := (n*b - a*a) / (n * n)
	r.DixonMoodFit = ratio
	event := map[bool]string{true: "discharges", false: "withstands"}[onDischarges]
	r.Verdict = Determined
	r.Reason = fmt.Sprintf("%d useful applications, counted on the %d %s", r.Applied, int(n), event)
	if ratio > dixonMoodValid {
		r.Sigma_v = 1.620 * step_v * (ratio + 0.029)
	} else {
		r.Reason += fmt.Sprintf("; Dixon and Mood's standard deviation is not valid here ((NB-A^2)/N^2 = %.2f, not above 0.3): U10 uses the conventional z", ratio)
	}
	if off > 0 {
		r.Reason += fmt.Sprintf("; %d application%s not one step from the one before, as the method asks", off, map[bool]string{true: "s"}[off > 1])
	}
	r.withU10(ConventionalZ(switching))
	return r
}

func eventCount(l Level, discharges bool) int {
	if discharges {
		return l.Discharges
	}
	return l.Applied - l.Discharges
}

// gridOrigin places the grid of levels step apart where the applications' measured
// levels sit on average: a grid through one shot's level would carry that shot's
// deviation into every level.
func gridOrigin(apps []Application, step float64) float64 {
	o := apps[0].Level_v
	var sum float64
	for _, a := range apps {
		sum += a.Level_v - o - step*math.Round((a.Level_v-o)/step)
	}
	return o + sum/float64(len(apps))
}

// inferStep is the median of the level changes between successive applications.
func inferStep(apps []Application) float64 {
	var d []float64
	for i := 1; i < len(apps); i++ {
		if v := math.Abs(apps[i].Level_v - apps[i-1].Level_v); v > 0 {
			d = append(d, v)
		}
	}
	if len(d) == 0 {
		return math.NaN()
	}
	sort.Float64s(d)
	return d[len(d)/2]
}

// MultipleLevels estimates U50 and sigma from applications at several levels by a
// probit maximum-likelihood fit (see Probit); levels are grouped on a grid of step_v
// (0: within 1 % of each other).
func MultipleLevels(polarity string, apps []Application, step_v float64, switching bool) Result {
	r := newResult(MultipleLevel, polarity)
	r.Needed = MinMultipleLevels
	origin := 0.0
	if len(apps) > 0 {
		origin = apps[0].Level_v
	}
	if step_v > 0 {
		origin = gridOrigin(apps, step_v)
	}
	r.Levels = Group(apps, origin, step_v)
	for _, l := range r.Levels {
		r.Applied += l.Applied
		r.Discharges += l.Discharges
	}
	if len(r.Levels) < MinMultipleLevels {
		r.Verdict, r.Reason = NotDecided, fmt.Sprintf("%d levels; the multiple-level method needs %d", len(r.Levels), MinMultipleLevels)
		return r
	}
	u50, sigma, se, err := Probit(r.Levels)
	if err != nil {
		r.Verdict, r.Reason = NotDecided, err.Error()
		return r
	}
	r.U50_v, r.Sigma_v, r.U50StdErr_v = u50, sigma, se
	r.Verdict, r.Reason = Determined, fmt.Sprintf("%d applications at %d levels, probit maximum likelihood", r.Applied, len(r.Levels))
	r.withU10(ConventionalZ(switching))
	return r
}

// ErrSeparated is Probit's error when the data are separated (see Probit): they give
// no estimate.
var ErrSeparated = errors.New("the levels do not overlap (every level below some voltage withstood, every level above it discharged, at most one level between mixed): no finite standard deviation; add levels")

// Probit fits P(discharge | U) = Phi((U - U50) / sigma) to the levels by maximum
// likelihood, and returns U50, sigma and U50's standard error from the inverse of the
// observed information (the Hessian of the negative log-likelihood at the optimum).
func Probit(levels []Level) (u50_v, sigma_v, u50StdErr_v float64, err error) {
	nan := math.NaN()
	// No estimate exists when a voltage splits the levels into all-withstand below and
	// all-discharge above, one level at it mixing both at most (quasi-complete
	// separation): the likelihood then grows as sigma shrinks to zero.
	lo, hi := math.Inf(-1), math.Inf(1) // highest all-withstand level, lowest all-discharge level
	var mixed []float64
	var sw, swu float64
	for _, l := range levels {
		switch {
		case l.Applied == 0:
		case l.Discharges == 0:
			lo = math.Max(lo, l.Level_v)
		case l.Discharges == l.Applied:
			hi = math.Min(hi, l.Level_v)
		default:
			mixed = append(mixed, l.Level_v)
		}
		sw += float64(l.Applied)
		swu += float64(l.Applied) * l.Level_v
	}
	if lo < hi && (len(mixed) == 0 || len(mixed) == 1 && lo < mixed[0] && mixed[0] < hi) {
		return nan, nan, nan, ErrSeparated
	}
	// Work in units of the mean level, sigma on a log scale: the problem is then near
	// 1 in size and sigma stays positive.
	ref := swu / sw
	nll := func(x []float64) float64 { return negLogLik(levels, ref, x[0], math.Exp(x[1]), nil) }
	grad := func(g, x []float64) {
		s := math.Exp(x[1])
		negLogLik(levels, ref, x[0], s, g)
		g[1] *= s
	}
	res, err := optimize.Minimize(optimize.Problem{Func: nll, Grad: grad}, []float64{1, math.Log(0.03)}, &optimize.Settings{GradientThreshold: 1e-10}, &optimize.BFGS{})
	if err != nil && res == nil {
		return nan, nan, nan, fmt.Errorf("probit fit: %v", err)
	}
	mu, s := res.X[0], math.Exp(res.X[1])
	if !(s > 0) || math.IsInf(s, 0) || s > 10 {
		return nan, nan, nan, fmt.Errorf("probit fit did not converge (sigma %g of the mean level)", s)
	}
	// Observed information in (mu, sigma): central differences of the gradient.
	h := mat.NewSymDense(2, nil)
	x := []float64{mu, s}
	for j := range 2 {
		step := 1e-5 * x[j]
		gp, gm := make([]float64, 2), make([]float64, 2)
		xp, xm := append([]float64(nil), x...), append([]float64(nil), x...)
		xp[j] += step
		xm[j] -= step
		negLogLik(levels, ref, xp[0], xp[1], gp)
		negLogLik(levels, ref, xm[0], xm[1], gm)
		for i := 0; i <= j; i++ {
			h.SetSym(i, j, (gp[i]-gm[i])/(2*step))
		}
	}
	var cov mat.Dense
	se := nan
	if cov.Inverse(h) == nil && cov.At(0, 0) > 0 {
		se = math.Sqrt(cov.At(0, 0)) * ref
	}
	return mu * ref, s * ref, se, nil
}

// negLogLik is the probit model's negative log-likelihood in units of ref, and its
// gradient in (mu, sigma) when g is not nil.
func negLogLik(levels []Level, ref, mu, sigma float64, g []float64) float64 {
	var f float64
	if g != nil {
		g[0], g[1] = 0, 0
	}
	for _, l := range levels {
		if l.Applied == 0 {
			continue
		}
		z := (l.Level_v/ref - mu) / sigma
		p := 0.5 * math.Erfc(-z/math.Sqrt2) // Phi(z)
		q := 0.5 * math.Erfc(z/math.Sqrt2)  // 1 - Phi(z), without the cancellation
		p, q = math.Max(p, 1e-300), math.Max(q, 1e-300)
		d, w := float64(l.Discharges), float64(l.Applied-l.Discharges)
		f -= d*math.Log(p) + w*math.Log(q)
		if g != nil {
			phi := math.Exp(-z*z/2) / math.Sqrt(2*math.Pi)
			// d(log-lik)/dz, then dz/dmu = -1/sigma, dz/dsigma = -z/sigma
			dz := d*phi/p - w*phi/q
			g[0] += dz / sigma
			g[1] += dz * z / sigma
		}
	}
	return f
}
