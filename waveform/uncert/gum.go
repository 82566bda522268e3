package uncert

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Coverage is the coverage probability of every expanded uncertainty here, 2 Phi(2) - 1
// = 95.45 %: the probability a normal distribution puts within two standard
// deviations, so that the coverage factor is k = 2 when the combined uncertainty's
// degrees of freedom are many (GUM, JCGM 100:2008, 6.2, 6.3.3 and Table G.2).
var Coverage = 2*distuv.UnitNormal.CDF(2) - 1

// CoverageFactor is k = t_p(nu) for the coverage probability p = Coverage and nu
// degrees of freedom (GUM G.3.4, Table G.2: 2.00 for infinitely many, 2.09 for 30,
// 2.28 for 10); nu <= 0 or beyond 1e7 gives 2 (t_p(1e7) is 2 within 3e-7, and the
// quantile's numerics fail long before infinity).
func CoverageFactor(nu float64) float64 {
	if !(nu > 0) || nu > 1e7 {
		return 2
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Quantile((1 + Coverage) / 2)
}

// Rect is the standard uncertainty of a quantity known only to lie within +-a: a
// rectangular distribution's a/sqrt 3 (GUM 4.3.7).
func Rect(a float64) float64 { return a / math.Sqrt(3) }

// FromExpanded is the standard uncertainty behind an expanded one stated with coverage
// factor k (GUM 4.3.3: a calibration certificate's "U = ... with k = 2").
func FromExpanded(U, k float64) float64 { return U / k }

// Combine is the combined standard uncertainty of uncorrelated components, each
// already multiplied by its sensitivity coefficient: the root of the sum of squares
// (GUM 5.1.2). NaN components (not evaluated) are left out; with none left it is NaN.
func Combine(u ...float64) float64 {
	s, any := 0.0, false
	for _, v := range u {
		if !math.IsNaN(v) {
			s += v * v
			any = true
		}
	}
	if !any {
		return math.NaN()
	}
	return math.Sqrt(s)
}

// SpreadDOF is the degrees of freedom of a standard deviation whose relative errors
// from several sources multiply, each source's estimate having nu_i: the relative
// variances 1/(2 nu_i) add (GUM G.4.2), so 1/nu = sum 1/nu_i. A Monte Carlo's spread
// has the draws' N - 1 and the noise model's own (Noise.DOF).
func SpreadDOF(nu ...float64) float64 {
	var inv float64
	for _, v := range nu {
		if v > 0 {
			inv += 1 / v // +Inf adds nothing
		}
	}
	if inv == 0 {
		return math.Inf(1)
	}
	return 1 / inv
}

// Budget is one parameter's standard uncertainty by its sources, in the parameter's
// unit; NaN for a source not evaluated.
type Budget struct {
	Record   float64 // the record's own noise and quantisation (Monte Carlo)
	Scale    float64 // the measuring system's scale factor (type B, its certificate)
	Timebase float64 // the digitiser's time base (type B, its specification)
	Reading  float64 // the resolution of the instants read off the sampled record (type B)
	// RecordDOF is the Record part's degrees of freedom: a Monte Carlo of N draws
	// estimates a standard deviation with N - 1 (GUM G.3.3), with the noise model's
	// own combined (SpreadDOF). 0 or +Inf: infinitely many.
	RecordDOF float64
}

// Standard is the combined standard uncertainty u_c (GUM 5.1.2).
func (b Budget) Standard() float64 { return Combine(b.Record, b.Scale, b.Timebase, b.Reading) }

// DOF is the effective degrees of freedom of u_c by the Welch-Satterthwaite formula
// (GUM G.4.1, G.2b): u_c^4 / sum(u_i^4/nu_i), the type B parts taken as exactly known
// (nu infinite, GUM G.4.2: bounds from a specification or a certificate). +Inf when
// only they are present.
func (b Budget) DOF() float64 {
	uc := b.Standard()
	if math.IsNaN(b.Record) || b.Record == 0 || b.RecordDOF <= 0 || math.IsInf(b.RecordDOF, 1) || !(uc > 0) {
		return math.Inf(1)
	}
	return math.Pow(uc/b.Record, 4) * b.RecordDOF
}

// Expanded is U = k u_c with k = CoverageFactor(DOF) (GUM 6.2.1, G.4.1): about 95 %
// coverage, k = 2 with many degrees of freedom, more when the Monte Carlo's few
// draws dominate.
func (b Budget) Expanded() float64 { return CoverageFactor(b.DOF()) * b.Standard() }

// Repeat is what a series of n repeated shots with sample standard deviation sd says
// (GUM 4.2): the standard uncertainty of their mean, sd/sqrt n (4.2.3), and of a single
// shot's value as a member of the series, sd itself (4.2.2). Both are NaN for n < 2.
func Repeat(sd float64, n int) (mean, single float64) {
	if n < 2 {
		return math.NaN(), math.NaN()
	}
	return sd / math.Sqrt(float64(n)), sd
}
