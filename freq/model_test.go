package freq

import (
	"context"
	"fmt"
	"math"
	"sync/atomic"

	"poise/gradient"
)

// pairModel is an analytic surface: Morse potentials between pairs of
// atoms, V(r) = D (1 − e^{−α(r−r0)})², and fixed point charges for the
// dipole, μ = Σ q_a x_a. Its gradient and Hessian are exact, so it checks
// the finite differences and the analysis without an SCF.
type pairModel struct {
	nat     int
	pairs   []morse
	charges []float64
	// comMasses, if set, puts the dipole origin at the centre of mass of
	// these masses, as SCF surfaces do.
	comMasses []float64
	evals     atomic.Int64
	// cancelAfter, if set, is called with the evaluation count after
	// every evaluation (to interrupt a calculation in a test).
	after func(n int64)
}

type morse struct {
	a, b         int
	d, alpha, r0 float64 // Eh, 1/bohr, bohr
}

// v returns V, V′ and V″ at r.
func (m morse) v(r float64) (v, d1, d2 float64) {
	e := math.Exp(-m.alpha * (r - m.r0))
	return m.d * (1 - e) * (1 - e), 2 * m.d * m.alpha * (e - e*e), 2 * m.d * m.alpha * m.alpha * (2*e*e - e)
}

func (p *pairModel) NumAtoms() int    { return p.nat }
func (p *pairModel) Evaluations() int { return int(p.evals.Load()) }

func (p *pairModel) energy(x []float64) float64 {
	e := 0.0
	for _, t := range p.pairs {
		r := math.Sqrt(sq3(x, t.a, t.b))
		v, _, _ := t.v(r)
		e += v
	}
	return e
}

func sq3(x []float64, a, b int) float64 {
	s := 0.0
	for k := 0; k < 3; k++ {
		d := x[3*a+k] - x[3*b+k]
		s += d * d
	}
	return s
}

func (p *pairModel) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	if len(x) != 3*p.nat {
		return fmt.Errorf("model: %d coordinates", len(x))
	}
	out.EnergyHartree = p.energy(x)
	if req.Gradient {
		if out.Gradient == nil {
			out.Gradient = make([]float64, 3*p.nat)
		}
		for i := range out.Gradient {
			out.Gradient[i] = 0
		}
		for _, t := range p.pairs {
			r := math.Sqrt(sq3(x, t.a, t.b))
			_, d1, _ := t.v(r)
			for k := 0; k < 3; k++ {
				u := (x[3*t.a+k] - x[3*t.b+k]) / r
				out.Gradient[3*t.a+k] += d1 * u
				out.Gradient[3*t.b+k] -= d1 * u
			}
		}
	}
	if req.Dipole {
		var com [3]float64
		if p.comMasses != nil {
			total := 0.0
			for a, m := range p.comMasses {
				total += m
				for k := 0; k < 3; k++ {
					com[k] += m * x[3*a+k]
				}
			}
			for k := range com {
				com[k] /= total
			}
		}
		out.DipoleAU = [3]float64{}
		for a, q := range p.charges {
			for k := 0; k < 3; k++ {
				out.DipoleAU[k] += q * (x[3*a+k] - com[k])
			}
		}
	}
	n := p.evals.Add(1)
	if p.after != nil {
		p.after(n)
	}
	return nil
}

// exactHessian is the analytic Hessian: per pair, the block
// V″ uuᵀ + V′/r (I − uuᵀ) on the diagonal atoms and its negative between
// them.
func (p *pairModel) exactHessian(x []float64) []float64 {
	n := 3 * p.nat
	h := make([]float64, n*n)
	for _, t := range p.pairs {
		r := math.Sqrt(sq3(x, t.a, t.b))
		_, d1, d2 := t.v(r)
		var u [3]float64
		for k := range u {
			u[k] = (x[3*t.a+k] - x[3*t.b+k]) / r
		}
		for i := 0; i < 3; i++ {
			for j := 0; j < 3; j++ {
				blk := d2*u[i]*u[j] - d1/r*u[i]*u[j]
				if i == j {
					blk += d1 / r
				}
				ai, aj, bi, bj := 3*t.a+i, 3*t.a+j, 3*t.b+i, 3*t.b+j
				h[ai*n+aj] += blk
				h[bi*n+bj] += blk
				h[ai*n+bj] -= blk
				h[bi*n+aj] -= blk
			}
		}
	}
	return h
}

// exactDipoleDeriv is ∂μ_k/∂x_i = q_a δ_ik.
func (p *pairModel) exactDipoleDeriv() []float64 {
	d := make([]float64, 9*p.nat)
	for a, q := range p.charges {
		for k := 0; k < 3; k++ {
			d[3*(3*a+k)+k] = q
		}
	}
	return d
}

// waterModel is a bent triatomic with O–H Morse bonds (D, α, r0 close to
// those of water's O–H bond) and an H···H Morse term that holds the angle
// near 104.5°; charges −0.66 and +0.33 e. Returns the surface and its
// minimum-energy geometry (built from the pair minima, which this model
// satisfies exactly).
func waterModel() (*pairModel, []float64) {
	const rOH = 1.809                  // bohr
	theta := 104.5 * math.Pi / 180     // rad
	rHH := 2 * rOH * math.Sin(theta/2) // bohr
	p := &pairModel{nat: 3, charges: []float64{-0.66, 0.33, 0.33},
		pairs: []morse{{0, 1, 0.20, 1.2, rOH}, {0, 2, 0.20, 1.2, rOH}, {1, 2, 0.03, 0.9, rHH}}}
	x := []float64{0, 0, 0, 0, rOH * math.Sin(theta/2), rOH * math.Cos(theta/2), 0, -rOH * math.Sin(theta/2), rOH * math.Cos(theta/2)}
	return p, x
}
