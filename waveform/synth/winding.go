package synth

import (
	"fmt"

	"gonum.org/v1/gonum/mat"
)

// Winding is an invented winding under an impulse test: a ladder of Sections equal
// sections, each a series inductance L_h with resistance R_ohm from one node to the
// next and a capacitance Cg_f from each node to earth; the last node goes to earth
// through a Shunt_ohm shunt whose current is recorded (channel "current", in A). The
// applied voltage drives the first section. It is a model for rehearsing comparisons,
// not a design of any real winding.
type Winding struct {
	Sections                    int
	L_h, R_ohm, Cg_f, Shunt_ohm float64
	// Altered (1-based node, 0 none) has its capacitance to earth multiplied by
	// Factor: a changed winding.
	Altered int
	Factor  float64
	Noise_a float64 // current noise RMS
}

// Current is the shunt current for the applied voltage u (sample interval dt, the
// ladder at rest before u's first sample), exact for u linear between samples (a
// first-order hold): the state steps by the matrix exponential of the augmented system
// [[A h, B h, 0], [0, 0, 1], [0, 0, 0]], so the result depends on dt only through the
// input's interpolation.
func (w *Winding) Current(u []float64, dt float64) ([]float64, error) {
	n := w.Sections
	if n < 1 || !(w.L_h > 0) || !(w.Cg_f > 0) || !(w.Shunt_ohm > 0) || w.R_ohm < 0 {
		return nil, fmt.Errorf("synth: winding: sections, L, Cg and the shunt must be positive")
	}
	// states: node voltages v1..vn, section currents i1..in (i_k from node k-1 to k)
	m := 2*n + 2
	aug := mat.NewDense(m, m, nil)
	for k := range n {
		c := w.Cg_f
		if k+1 == w.Altered {
			c *= w.Factor
		}
		aug.Set(k, n+k, dt/c)
		if k+1 < n {
			aug.Set(k, n+k+1, -dt/c)
		} else {
			aug.Set(k, k, -dt/(w.Shunt_ohm*c))
		}
		aug.Set(n+k, k, -dt/w.L_h)
		if k > 0 {
			aug.Set(n+k, k-1, dt/w.L_h)
		}
		aug.Set(n+k, n+k, -dt*w.R_ohm/w.L_h)
	}
	aug.Set(n, 2*n, dt/w.L_h) // the applied voltage drives the first section
	aug.Set(2*n, 2*n+1, 1)
	var e mat.Dense
	e.Exp(aug)
	s := 2 * n
	x, next := make([]float64, s), make([]float64, s)
	out := make([]float64, len(u))
	for i := range u {
		out[i] = x[n-1] / w.Shunt_ohm
		if i+1 == len(u) {
			break
		}
		du := u[i+1] - u[i]
		for r := range s {
			v := e.At(r, s)*u[i] + e.At(r, s+1)*du
			for c := range s {
				v += e.At(r, c) * x[c]
			}
			next[r] = v
		}
		x, next = next, x
	}
	return out, nil
}
