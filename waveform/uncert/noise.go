package uncert

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// MinPool is the fewest innovations a pre-trigger part must give for its own values to
// be resampled; below it the draws are Gaussian (ours: 64 values put the fourth moment
// within about 30 %, enough for a spread that is averaged over many samples).
const MinPool = 64

// Noise is a record's noise as its pre-trigger part shows it: a first-order
// autoregressive process e[i] = Phi e[i-1] + w[i] of standard deviation RMS, whose
// innovations w are drawn from the pre-trigger's own (resampled) or, with too short a
// pre-trigger or noise below the quantisation, from a Gaussian or a uniform law.
type Noise struct {
	RMS     float64 // standard deviation of the process, in the record's unit
	Phi     float64 // lag-1 autocorrelation; 0 for white noise
	Quantum float64 // the record's least step; 0 when unknown or negligible
	// Law says where the innovations come from: "pre-trigger" (resampled),
	// "gaussian" or "quantisation" (uniform over one step).
	Law     string
	Samples int       // the pre-trigger samples the model was estimated from
	pool    []float64 // innovations in the record's unit: variance RMS^2 (1 - Phi^2)
}

// DOF is the degrees of freedom of the noise's low-frequency level as estimated: what
// the parameters feel of the noise is mostly its power below a few MHz, S(0) =
// RMS^2 (1 + Phi)/(1 - Phi), and n samples estimate log S(0) with a variance of
// (2 + 4 (1 + Phi)/(1 - Phi))/n (the asymptotic variances of an AR(1)'s innovation
// variance, 2/n, and of Phi, (1 - Phi^2)/n, independent; Box and Jenkins, from
// memory). An uncertainty proportional to sqrt S(0) then has n/(1 + 2 (1 + Phi)/(1 -
// Phi)) degrees of freedom (GUM G.4.2's nu = 1/(2 (du/u)^2)); with Phi 0, n - 2 (the
// mean and the trend taken out). Quantisation's level is known: +Inf.
func (nz Noise) DOF() float64 {
	switch {
	case nz.Law == "quantisation":
		return math.Inf(1)
	case nz.Phi == 0:
		return float64(max(nz.Samples-2, 1))
	}
	return float64(nz.Samples) / (1 + 2*(1+nz.Phi)/(1-nz.Phi))
}

// NoiseOf models the noise of the pre-trigger samples pre with the record's least step
// quantum (0 when unknown). The pre-trigger's straight-line trend is taken out first:
// a drift is a warning of its own, not noise. Phi is the Yule-Walker estimate
// r(1)/r(0) (Box and Jenkins), clamped to +-0.99, and 0 when within 2/sqrt(n) of it:
// r(1) of n samples of white noise has a standard error of 1/sqrt(n), so a smaller
// one says nothing but costs each draw a recursion. Noise below the quantisation's
// (q^2/12, GUM F.2.2.1) is raised to it as white uniform noise: a signal that sweeps
// many codes carries that error even where the quiet pre-trigger shows none.
func NoiseOf(pre []float64, quantum float64) Noise {
	n := len(pre)
	nz := Noise{Quantum: quantum, Law: "gaussian", Samples: n}
	d := detrend(pre)
	var r0, r1 float64
	for i, v := range d {
		r0 += v * v
		if i > 0 {
			r1 += v * d[i-1]
		}
	}
	if n > 2 {
		nz.RMS = math.Sqrt(r0 / float64(n-2)) // the line took two degrees of freedom
	}
	if r0 > 0 {
		nz.Phi = math.Max(-0.99, math.Min(0.99, r1/r0))
		if math.Abs(nz.Phi) < 2/math.Sqrt(float64(n)) {
			nz.Phi = 0
		}
	}
	if q2 := quantum * quantum / 12; nz.RMS*nz.RMS < q2 {
		nz.RMS, nz.Phi, nz.Law = math.Sqrt(q2), 0, "quantisation"
		nz.pool = uniformPool()
		return nz.scale()
	}
	if n-1 >= MinPool {
		w := make([]float64, n-1)
		for i := 1; i < n; i++ {
			w[i-1] = d[i] - nz.Phi*d[i-1]
		}
		if standardise(w) {
			nz.pool, nz.Law = w, "pre-trigger"
			return nz.scale()
		}
	}
	nz.pool = gaussPool()
	return nz.scale()
}

// scale puts the standardised pool into the record's unit, once for all draws.
func (nz Noise) scale() Noise {
	g := nz.RMS * math.Sqrt(1-nz.Phi*nz.Phi)
	for i := range nz.pool {
		nz.pool[i] *= g
	}
	return nz
}

// detrend returns x less its least-squares line.
func detrend(x []float64) []float64 {
	n := len(x)
	out := make([]float64, n)
	if n == 0 {
		return out
	}
	var mean float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(n)
	c := float64(n-1) / 2
	var sxy, sxx float64
	for i, v := range x {
		xi := float64(i) - c
		sxy += xi * (v - mean)
		sxx += xi * xi
	}
	slope := 0.0
	if sxx > 0 {
		slope = sxy / sxx
	}
	for i, v := range x {
		out[i] = v - mean - slope*(float64(i)-c)
	}
	return out
}

// standardise makes w mean 0 and variance 1 in place; false when w is constant.
func standardise(w []float64) bool {
	var m float64
	for _, v := range w {
		m += v
	}
	m /= float64(len(w))
	var ss float64
	for i := range w {
		w[i] -= m
		ss += w[i] * w[i]
	}
	if !(ss > 0) {
		return false
	}
	s := 1 / math.Sqrt(ss/float64(len(w)))
	for i := range w {
		w[i] *= s
	}
	return true
}

// poolSize is the number of equiprobable values standing for a continuous law: the
// standard normal's or the uniform's quantiles at (k + 1/2)/poolSize.
const poolSize = 4096

func gaussPool() []float64 {
	p := make([]float64, poolSize)
	for k := range p {
		p[k] = distuv.UnitNormal.Quantile((float64(k) + 0.5) / poolSize)
	}
	standardise(p)
	return p
}

func uniformPool() []float64 {
	p := make([]float64, poolSize)
	for k := range p {
		p[k] = (float64(k)+0.5)/poolSize - 0.5
	}
	standardise(p)
	return p
}

// LeastStep is the smallest non-zero difference between neighbouring samples: a
// quantised record's step (one code), or something negligible for a record written
// with many digits.
func LeastStep(x []float64) float64 {
	q := math.Inf(1)
	for i := 1; i < len(x); i++ {
		if d := math.Abs(x[i] - x[i-1]); d > 0 && d < q {
			q = d
		}
	}
	if math.IsInf(q, 1) {
		return 0
	}
	return q
}
