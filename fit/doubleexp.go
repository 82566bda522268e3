package fit

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// FrontTimeFactor turns the 30 % to 90 % interval of a lightning impulse's front into
// its front time: T1 = 1.67 (t90 - t30), IEC 60060-1:2010's definition (1/(0.9 - 0.3)
// as the standard rounds it).
const FrontTimeFactor = 1.67

// The standard 1.2/50 shape's ratios, for start values and shape searches: with the
// handbook coefficients tau1 = 68.2 us and tau2 = 0.405 us (high-voltage engineering
// textbooks), T1/tau2 = 1.2/0.405 = 2.96 and T2/tau1 = 50/68.2 = 0.733. The switching
// ratios (Tp/tau2 about 4, T2/tau1 about 0.8) are ours, only ever start values.
const (
	lightningFrontPerTau2 = 2.96
	lightningHalfPerTau1  = 0.733
	switchingPeakPerTau2  = 4
	switchingHalfPerTau1  = 0.8
)

// The solver's tuning, ours unless marked.
const (
	defaultMaxIterations = 200
	defaultRelTol        = 1e-12
	// Marquardt's damping starts small and moves by factors of ten (common practice).
	lambdaStart, lambdaMin, lambdaMax, lambdaStep = 1e-3, 1e-12, 1e16, 10
	// Windows longer than blockAbove samples are fitted on about blockCount block means,
	// each block shorter than blockMaxOfTau2 of the front constant.
	blockAbove, blockCount, blockMaxOfTau2 = 16000, 4000, 0.1
	// A minimum with tau1 below degenerateRatio x tau2, or tau1 beyond stepWindows x
	// the window, is no double exponential (the second: the data never decay, a step).
	degenerateRatio, stepWindows = 1.05, 100
)

// DoubleExp is the base-curve model's four parameters.
type DoubleExp struct {
	U      float64 // amplitude factor, volts (the curve's maximum is U times the peak factor)
	Td_s   float64 // start of the curve
	Tau1_s float64 // tail time constant
	Tau2_s float64 // front time constant, smaller than Tau1_s
}

// At evaluates the curve at time t.
func (p DoubleExp) At(t float64) float64 {
	if t < p.Td_s {
		return 0
	}
	u := t - p.Td_s
	return p.U * (math.Exp(-u/p.Tau1_s) - math.Exp(-u/p.Tau2_s))
}

// Eval writes the curve at t0 + i dt into out. The exponentials come from the
// recurrence exp(-(u+dt)/tau) = exp(-u/tau) exp(-dt/tau), re-anchored every 256 samples.
func (p DoubleExp) Eval(t0, dt float64, out []float64) {
	k0 := int(math.Ceil((p.Td_s - t0) / dt))
	if k0 < 0 {
		k0 = 0
	}
	for i := 0; i < k0 && i < len(out); i++ {
		out[i] = 0
	}
	r1, r2 := math.Exp(-dt/p.Tau1_s), math.Exp(-dt/p.Tau2_s)
	var e1, e2 float64
	for i := k0; i < len(out); i++ {
		if (i-k0)&255 == 0 {
			u := t0 + float64(i)*dt - p.Td_s
			e1, e2 = math.Exp(-u/p.Tau1_s), math.Exp(-u/p.Tau2_s)
		} else {
			e1 *= r1
			e2 *= r2
			if e2 < 1e-290 {
				e2 = 0
			}
		}
		out[i] = p.U * (e1 - e2)
	}
}

// PeakDelay_s is the closed-form time from Td to the maximum:
// ln(tau1/tau2) tau1 tau2 / (tau1 - tau2).
func (p DoubleExp) PeakDelay_s() float64 {
	return math.Log(p.Tau1_s/p.Tau2_s) * p.Tau1_s * p.Tau2_s / (p.Tau1_s - p.Tau2_s)
}

// PeakFactor is the curve's maximum divided by U.
func (p DoubleExp) PeakFactor() float64 {
	tp := p.PeakDelay_s()
	return math.Exp(-tp/p.Tau1_s) - math.Exp(-tp/p.Tau2_s)
}

// Peak is the curve's maximum value.
func (p DoubleExp) Peak() float64 { return p.U * p.PeakFactor() }

// LevelDelay_s returns the time after Td at which the curve reaches frac of its maximum,
// on the front (rising) or on the tail, solved by bisection to a relative 1e-14.
func (p DoubleExp) LevelDelay_s(frac float64, rising bool) float64 {
	tp := p.PeakDelay_s()
	target := frac * p.PeakFactor()
	g := func(u float64) float64 { return math.Exp(-u/p.Tau1_s) - math.Exp(-u/p.Tau2_s) - target }
	lo, hi := 0.0, tp
	if !rising {
		lo, hi = tp, tp+p.Tau1_s
		for g(hi) > 0 {
			hi += p.Tau1_s
		}
	}
	for i := 0; i < 200 && hi-lo > 1e-14*tp; i++ {
		mid := (lo + hi) / 2
		if (g(mid) < 0) == rising {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// Status says how a fit ended.
type Status int

const (
	Converged     Status = iota // the cost stopped decreasing within tolerance
	MaxIterations               // the iteration limit was reached first
	Degenerate                  // the minimum has tau1 ~ tau2, a non-positive amplitude or time constant
)

func (s Status) String() string {
	switch s {
	case Converged:
		return "converged"
	case MaxIterations:
		return "iteration limit reached"
	case Degenerate:
		return "degenerate minimum"
	}
	return "unknown"
}

var (
	// ErrNoConvergence is returned when the solver hits its iteration limit.
	ErrNoConvergence = errors.New("fit: did not converge")
	// ErrDegenerate is returned when the solution is not a usable double exponential.
	ErrDegenerate = errors.New("fit: degenerate double exponential")
	// ErrTooFewSamples is returned for a window with fewer samples than parameters.
	ErrTooFewSamples = errors.New("fit: too few samples in the window")
)

// Result is a fit's outcome. Check Status (or the error from Fit) before using Params.
type Result struct {
	Params      DoubleExp
	StdErr      DoubleExp // one standard error of each parameter
	ResidualRMS float64   // RMS of data minus model over the window
	Iterations  int
	Samples     int
	Status      Status
}

// Settings tune the solver; the zero value means the defaults.
type Settings struct {
	MaxIterations int     // default 200
	RelTol        float64 // relative cost change that ends the search, default 1e-12
	// BlockRMS leaves ResidualRMS as the block means give it when a long window was
	// fitted on them (the noise averaged away), for a caller that measures the residual
	// itself: it saves a pass over the raw window.
	BlockRMS bool
}

// StartValues derives start parameters from the 30 %, 90 % (front) and 50 % (tail)
// crossing times and the extreme value, using the ratios of the standard lightning
// shape (tau2 ~ T1/2.96, tau1 ~ T2/0.733). Pass t50 < 0 when the tail is unknown.
func StartValues(t30, t90, t50, ue float64) DoubleExp {
	t1 := FrontTimeFactor * (t90 - t30)
	tau2 := t1 / lightningFrontPerTau2
	tau1 := 60 * tau2 // without a tail: a tail long against the front
	if t50 > t90 {
		t2 := t50 - (t30 - 0.3*t1)
		tau1 = t2 / lightningHalfPerTau1
	}
	if tau1 < 3*tau2 {
		tau1 = 3 * tau2
	}
	p := DoubleExp{U: 1, Tau1_s: tau1, Tau2_s: tau2}
	u30 := p.LevelDelay_s(0.3, true)
	p.Td_s = t30 - u30
	p.U = ue / p.PeakFactor()
	return p
}

// blockFactor is the mean of exp(-k dt/tau) over a block of s samples centred on
// k = 0, divided by its centre value: sinh(s dt/2tau) / (s sinh(dt/2tau)).
func blockFactor(s int, dt, tau float64) float64 {
	if s <= 1 {
		return 1
	}
	return math.Sinh(float64(s)*dt/(2*tau)) / (float64(s) * math.Sinh(dt/(2*tau)))
}

// passBlock computes the cost over y[from:to] and, when jtj is non-nil, J^T J and J^T r,
// where y holds block means of s raw samples each (s = 1: the raw samples), spaced dt
// apart; the model is averaged over each block exactly, so the minimum is that of the
// raw data's curve. Exponentials come from a multiplicative recurrence re-anchored every
// 256 samples: uniform sampling makes exp(-(t+dt)/tau) = exp(-t/tau) exp(-dt/tau).
func passBlock(y []float64, t0, dt float64, from, to int, p DoubleExp, s int, jtj *[4][4]float64, jtr *[4]float64) float64 {
	var cost float64
	if jtj != nil {
		*jtj = [4][4]float64{}
		*jtr = [4]float64{}
	}
	k0 := int(math.Ceil((p.Td_s - t0) / dt))
	if k0 < from {
		k0 = from
	}
	for i := from; i < k0 && i < to; i++ {
		cost += y[i] * y[i]
	}
	if k0 >= to {
		return cost
	}
	r1, r2 := math.Exp(-dt/p.Tau1_s), math.Exp(-dt/p.Tau2_s)
	var e1, e2 float64
	it1, it2 := 1/p.Tau1_s, 1/p.Tau2_s
	U := p.U
	c1, c2 := blockFactor(s, dt/float64(s), p.Tau1_s), blockFactor(s, dt/float64(s), p.Tau2_s)
	// Locals, not the arrays behind the pointers, so the loop stays in registers.
	var a00, a01, a02, a03, a11, a12, a13, a22, a23, a33, b0, b1, b2, b3 float64
	want := jtj != nil
	for i := k0; i < to; i++ {
		u := t0 + float64(i)*dt - p.Td_s
		if (i-k0)&255 == 0 {
			e1, e2 = math.Exp(-u*it1), math.Exp(-u*it2)
		} else {
			e1 *= r1
			e2 *= r2
			if e2 < 1e-290 {
				e2 = 0
			}
		}
		r := y[i] - U*(c1*e1-c2*e2)
		cost += r * r
		if want {
			g0 := c1*e1 - c2*e2
			g1 := U * (c1*e1*it1 - c2*e2*it2)
			g2 := U * c1 * e1 * u * it1 * it1
			g3 := -U * c2 * e2 * u * it2 * it2
			a00 += g0 * g0
			a01 += g0 * g1
			a02 += g0 * g2
			a03 += g0 * g3
			a11 += g1 * g1
			a12 += g1 * g2
			a13 += g1 * g3
			a22 += g2 * g2
			a23 += g2 * g3
			a33 += g3 * g3
			b0 += g0 * r
			b1 += g1 * r
			b2 += g2 * r
			b3 += g3 * r
		}
	}
	if want {
		*jtj = [4][4]float64{
			{a00, a01, a02, a03},
			{a01, a11, a12, a13},
			{a02, a12, a22, a23},
			{a03, a13, a23, a33},
		}
		*jtr = [4]float64{b0, b1, b2, b3}
	}
	return cost
}

func vec(p DoubleExp) [4]float64 { return [4]float64{p.U, p.Td_s, p.Tau1_s, p.Tau2_s} }
func unvec(v [4]float64) DoubleExp {
	return DoubleExp{U: v[0], Td_s: v[1], Tau1_s: v[2], Tau2_s: v[3]}
}

func usable(p DoubleExp) bool {
	return p.U > 0 && p.Tau2_s > 0 && p.Tau1_s > 1.01*p.Tau2_s && !math.IsInf(p.Tau1_s, 0) && !math.IsNaN(p.Td_s)
}

// Fit fits the model to y[from:to], sample i at time t0 + i dt, starting from start.
// The error is non-nil whenever Status is not Converged.
func Fit(y []float64, t0, dt float64, from, to int, start DoubleExp, s *Settings) (Result, error) {
	if from < 0 {
		from = 0
	}
	if to > len(y) {
		to = len(y)
	}
	n := to - from
	res := Result{Samples: n, Params: start}
	if n < 8 {
		return res, ErrTooFewSamples
	}
	if !usable(start) {
		res.Status = Degenerate
		return res, fmt.Errorf("%w: start values %+v", ErrDegenerate, start)
	}
	maxIt, tol := defaultMaxIterations, defaultRelTol
	if s != nil && s.MaxIterations > 0 {
		maxIt = s.MaxIterations
	}
	if s != nil && s.RelTol > 0 {
		tol = s.RelTol
	}
	// Column scales keep J^T J well conditioned: volts against seconds differ by 1e10.
	amp := math.Abs(start.Peak())
	ts := math.Sqrt(start.Tau1_s * start.Tau2_s)
	scale := [4]float64{amp, ts, ts, ts}

	// Long windows are fitted on block means: the model's block mean is exact (see
	// passBlock), the noise averages the same, and the cost per pass falls by the block
	// size. Blocks stay below a tenth of the front constant so the td block matters little.
	blk := 1
	if n > blockAbove {
		blk = n / blockCount
		if lim := int(blockMaxOfTau2 * start.Tau2_s / dt); blk > lim {
			blk = lim
		}
		if blk < 1 {
			blk = 1
		}
	}
	rawY, rawT0, rawDt, rawFrom, rawTo := y, t0, dt, from, to
	yw, bt0, bdt, bfrom, bto := y, t0, dt, from, to
	if blk > 1 {
		m := n / blk
		yw = make([]float64, m)
		for b := 0; b < m; b++ {
			var acc float64
			for _, v := range y[from+b*blk : from+(b+1)*blk] {
				acc += v
			}
			yw[b] = acc / float64(blk)
		}
		bt0 = t0 + (float64(from)+float64(blk-1)/2)*dt
		bdt = dt * float64(blk)
		bfrom, bto = 0, m
	}
	pass := func(y []float64, t0, dt float64, from, to int, p DoubleExp, jtj *[4][4]float64, jtr *[4]float64) float64 {
		return passBlock(y, t0, dt, from, to, p, blk, jtj, jtr)
	}
	y, t0, dt, from, to = yw, bt0, bdt, bfrom, bto

	p := start
	var jtj [4][4]float64
	var jtr [4]float64
	cost := pass(y, t0, dt, from, to, p, &jtj, &jtr)
	lambda := lambdaStart
	A := mat.NewSymDense(4, nil)
	bvec := mat.NewVecDense(4, nil)
	var chol mat.Cholesky
	x := mat.NewVecDense(4, nil)
	converged := false
	it := 0
	for it = 1; it <= maxIt; it++ {
		improved := false
		for lambda < lambdaMax {
			for a := 0; a < 4; a++ {
				for b := a; b < 4; b++ {
					v := jtj[a][b] * scale[a] * scale[b]
					if a == b {
						v *= 1 + lambda
					}
					A.SetSym(a, b, v)
				}
				bvec.SetVec(a, jtr[a]*scale[a])
			}
			if !chol.Factorize(A) {
				lambda *= lambdaStep
				continue
			}
			if err := chol.SolveVecTo(x, bvec); err != nil {
				lambda *= lambdaStep
				continue
			}
			v := vec(p)
			var step, size float64
			for a := 0; a < 4; a++ {
				d := x.AtVec(a) * scale[a]
				v[a] += d
				step += (d / scale[a]) * (d / scale[a])
				size += (v[a] / scale[a]) * (v[a] / scale[a])
			}
			q := unvec(v)
			if !usable(q) {
				lambda *= lambdaStep
				continue
			}
			// Trials cost only the sum of squares; the Jacobian is built once a step is taken.
			nc := pass(y, t0, dt, from, to, q, nil, nil)
			if nc < cost {
				rel := (cost - nc) / cost
				p, cost = q, nc
				pass(y, t0, dt, from, to, p, &jtj, &jtr)
				lambda = math.Max(lambda/lambdaStep, lambdaMin)
				improved = true
				if rel < tol || step < 1e-20*size {
					converged = true
				}
				break
			}
			lambda *= lambdaStep
		}
		if !improved {
			// No step lowers the cost any more: a minimum to working precision.
			converged = true
		}
		if converged {
			break
		}
	}
	res.Params = p
	res.Iterations = it
	nb := to - from
	res.ResidualRMS = math.Sqrt(cost / float64(nb))
	if blk > 1 && (s == nil || !s.BlockRMS) {
		// The block means hide the noise: measure the residual on the raw samples.
		res.ResidualRMS = math.Sqrt(passBlock(rawY, rawT0, rawDt, rawFrom, rawTo, p, 1, nil, nil) / float64(n))
	}
	// A tail constant far beyond the window means the data never decay: a step, not an impulse.
	if !usable(p) || p.Tau1_s < degenerateRatio*p.Tau2_s || p.Tau1_s > stepWindows*float64(n)*rawDt {
		res.Status = Degenerate
		return res, fmt.Errorf("%w: tau1 %.4g s, tau2 %.4g s, U %.4g", ErrDegenerate, p.Tau1_s, p.Tau2_s, p.U)
	}
	if !converged {
		res.Status = MaxIterations
		return res, fmt.Errorf("%w after %d iterations", ErrNoConvergence, maxIt)
	}
	res.Status = Converged
	// Standard errors from s^2 (J^T J)^-1 at the solution.
	if nb > 4 {
		// cost/(nb-4) estimates the variance of a block mean, which is what J^T J
		// was built on, so the errors are those of the raw data.
		s2 := cost / float64(nb-4)
		for a := 0; a < 4; a++ {
			for b := a; b < 4; b++ {
				A.SetSym(a, b, jtj[a][b]*scale[a]*scale[b])
			}
		}
		if chol.Factorize(A) {
			var inv mat.SymDense
			if err := chol.InverseTo(&inv); err == nil {
				var se [4]float64
				for a := 0; a < 4; a++ {
					se[a] = math.Sqrt(math.Max(inv.At(a, a)*s2, 0)) * scale[a]
				}
				res.StdErr = unvec(se)
			}
		}
	}
	return res, nil
}

// ForLightning returns tau1 and tau2 (Td 0, peak 1) of the double exponential whose
// front time and time to half-value, as IEC 60060-1 defines them on a smooth curve,
// are t1 and t2; ForSwitching does the same for the time to peak (the closed-form peak
// delay) and the time to half-value from the true origin. Solved by Newton's method on
// the logarithms of the time constants.
func ForLightning(t1_s, t2_s float64) (DoubleExp, error) {
	return solveShape(t1_s, t2_s, func(p DoubleExp) (float64, float64) {
		a30, a90 := p.LevelDelay_s(0.3, true), p.LevelDelay_s(0.9, true)
		T1 := FrontTimeFactor * (a90 - a30)
		return T1, p.LevelDelay_s(0.5, false) - (a30 - 0.3*T1)
	}, DoubleExp{Tau1_s: t2_s / lightningHalfPerTau1, Tau2_s: t1_s / lightningFrontPerTau2})
}

// ForSwitching: see ForLightning.
func ForSwitching(tp_s, t2_s float64) (DoubleExp, error) {
	return solveShape(tp_s, t2_s, func(p DoubleExp) (float64, float64) {
		return p.PeakDelay_s(), p.LevelDelay_s(0.5, false)
	}, DoubleExp{Tau1_s: t2_s / switchingHalfPerTau1, Tau2_s: tp_s / switchingPeakPerTau2})
}

func solveShape(a, b float64, times func(DoubleExp) (float64, float64), p DoubleExp) (DoubleExp, error) {
	p.U = 1
	if !(a > 0) || !(b > 2*a) {
		return p, fmt.Errorf("fit: no double exponential for front %g s and tail %g s (tail must exceed twice the front)", a, b)
	}
	x := [2]float64{math.Log(p.Tau1_s), math.Log(p.Tau2_s)}
	f := func(x [2]float64) [2]float64 {
		q := DoubleExp{U: 1, Tau1_s: math.Exp(x[0]), Tau2_s: math.Exp(x[1])}
		if q.Tau1_s <= q.Tau2_s*1.001 {
			return [2]float64{math.Inf(1), math.Inf(1)}
		}
		ga, gb := times(q)
		return [2]float64{math.Log(ga / a), math.Log(gb / b)}
	}
	for it := 0; it < 100; it++ {
		r := f(x)
		if math.Abs(r[0]) < 1e-12 && math.Abs(r[1]) < 1e-12 {
			p.Tau1_s, p.Tau2_s = math.Exp(x[0]), math.Exp(x[1])
			return p, nil
		}
		const h = 1e-6
		var j [2][2]float64
		for k := 0; k < 2; k++ {
			xh := x
			xh[k] += h
			rh := f(xh)
			j[0][k], j[1][k] = (rh[0]-r[0])/h, (rh[1]-r[1])/h
		}
		det := j[0][0]*j[1][1] - j[0][1]*j[1][0]
		if det == 0 || math.IsNaN(det) || math.IsInf(det, 0) {
			break
		}
		d0 := (r[0]*j[1][1] - r[1]*j[0][1]) / det
		d1 := (j[0][0]*r[1] - j[1][0]*r[0]) / det
		step := 1.0
		for k := 0; k < 30; k++ {
			xn := [2]float64{x[0] - step*d0, x[1] - step*d1}
			rn := f(xn)
			if math.Hypot(rn[0], rn[1]) < math.Hypot(r[0], r[1]) {
				x = xn
				break
			}
			step /= 2
		}
	}
	return p, fmt.Errorf("fit: no double exponential found for front %g s and tail %g s", a, b)
}
