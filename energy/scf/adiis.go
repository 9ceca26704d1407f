package scf

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// adiis keeps the densities and Fock matrices of recent iterations for the
// augmented Roothaan–Hall energy DIIS of X. Hu and W. Yang, J. Chem. Phys.
// 132, 054109 (2010). The energy of a combined density D = Σ c_i D_i
// (c_i ≥ 0, Σ c_i = 1) is modelled to second order about the latest
// iterate n,
//
//	E(c) ≈ E_n + Σ_i c_i ⟨D_i − D_n, F_n⟩ + ½ Σ_ij c_i c_j ⟨D_i − D_n, F_j − F_n⟩,
//
// summed over spin channels (the total density and the spin-orbital Fock
// matrix for restricted), and minimized over the simplex; the Fock matrix
// Σ c_i F_i is diagonalized next. Far from convergence it is combined with
// Pulay's DIIS as in K. Garza, G. E. Scuseria, J. Chem. Phys. 137, 054110
// (2012) (see blendADIIS).
type adiis struct {
	max   int
	dens  [][][]float64
	focks [][][]float64
}

func newADIIS(max int) *adiis { return &adiis{max: max} }

func (a *adiis) reset() { a.dens, a.focks = nil, nil }

func (a *adiis) push(dens, focks [][]float64) {
	cp := func(x [][]float64) [][]float64 {
		out := make([][]float64, len(x))
		for i := range x {
			out[i] = append([]float64(nil), x[i]...)
		}
		return out
	}
	if len(a.dens) == a.max {
		a.dens, a.focks = a.dens[1:], a.focks[1:]
	}
	a.dens = append(a.dens, cp(dens))
	a.focks = append(a.focks, cp(focks))
}

// coefficients minimizes the model energy over the simplex. The minimum of
// a quadratic over a simplex is a stationary point of the quadratic
// restricted to the relative interior of one face, so every face (every
// non-empty subset of at most 8 iterates, 255 small linear systems) is
// tried and the lowest feasible stationary point is kept: exact and
// deterministic, with no starting point to choose.
func (a *adiis) coefficients() []float64 {
	k := len(a.dens)
	last := k - 1
	g := make([]float64, k)
	hq := make([]float64, k*k)
	for i := 0; i < k; i++ {
		for s := range a.dens[i] {
			di, dn, fn := a.dens[i][s], a.dens[last][s], a.focks[last][s]
			for x := range di {
				g[i] += (di[x] - dn[x]) * fn[x]
			}
		}
		for j := 0; j < k; j++ {
			var v float64
			for s := range a.dens[i] {
				di, dn, fj, fn := a.dens[i][s], a.dens[last][s], a.focks[j][s], a.focks[last][s]
				for x := range di {
					v += (di[x] - dn[x]) * (fj[x] - fn[x])
				}
			}
			hq[i*k+j] = v
		}
	}
	// Symmetrize: only the symmetric part enters cᵀHc.
	for i := 0; i < k; i++ {
		for j := 0; j < i; j++ {
			v := 0.5 * (hq[i*k+j] + hq[j*k+i])
			hq[i*k+j], hq[j*k+i] = v, v
		}
	}
	model := func(c []float64) float64 {
		var e float64
		for i := 0; i < k; i++ {
			e += c[i] * g[i]
			for j := 0; j < k; j++ {
				e += 0.5 * c[i] * hq[i*k+j] * c[j]
			}
		}
		return e
	}
	best := make([]float64, k)
	best[last] = 1
	bestE := model(best)
	c := make([]float64, k)
	idx := make([]int, 0, k)
	for mask := 1; mask < 1<<k; mask++ {
		idx = idx[:0]
		for i := 0; i < k; i++ {
			if mask&(1<<i) != 0 {
				idx = append(idx, i)
			}
		}
		r := len(idx)
		// Stationarity on the face: H_ff c_f + g_f = λ·1, Σ c_f = 1.
		am := mat.NewDense(r+1, r+1, nil)
		rhs := mat.NewVecDense(r+1, nil)
		for p, i := range idx {
			for q, j := range idx {
				am.Set(p, q, hq[i*k+j])
			}
			am.Set(p, r, -1)
			am.Set(r, p, 1)
			rhs.SetVec(p, -g[i])
		}
		rhs.SetVec(r, 1)
		var sol mat.VecDense
		if err := sol.SolveVec(am, rhs); err != nil {
			continue
		}
		ok := true
		for i := range c {
			c[i] = 0
		}
		for p, i := range idx {
			v := sol.AtVec(p)
			if v < 0 || math.IsNaN(v) {
				ok = false
				break
			}
			c[i] = v
		}
		if !ok {
			continue
		}
		if e := model(c); e < bestE-1e-14 {
			bestE = e
			copy(best, c)
		}
	}
	return best
}

// combine returns Σ c_i F_i.
func (a *adiis) combine(c []float64) [][]float64 {
	out := make([][]float64, len(a.focks[0]))
	for s := range out {
		f := make([]float64, len(a.focks[0][s]))
		for i, ci := range c {
			if ci == 0 {
				continue
			}
			for x, v := range a.focks[i][s] {
				f[x] += ci * v
			}
		}
		out[s] = f
	}
	return out
}

// blendADIIS returns the Fock matrix to diagonalize on the ADIIS rung:
// ADIIS alone while the orbital gradient is above 0.1, DIIS alone below
// 1e-4, and in between the mixture w·ADIIS + (1 − w)·DIIS with w = 10·error
// (the switching rule of Garza & Scuseria 2012, applied to ADIIS).
func blendADIIS(d *diis, a *adiis, focks [][]float64, maxErr float64) [][]float64 {
	var fa, fd [][]float64
	if maxErr > 1e-4 && len(a.dens) > 1 {
		fa = a.combine(a.coefficients())
	}
	if maxErr < 0.1 {
		fd = d.extrapolate()
	}
	switch {
	case fa == nil && fd == nil:
		return focks
	case fa == nil:
		return fd
	case fd == nil:
		return fa
	}
	w := 10 * maxErr
	out := make([][]float64, len(fa))
	for s := range fa {
		out[s] = make([]float64, len(fa[s]))
		for x := range fa[s] {
			out[s][x] = w*fa[s][x] + (1-w)*fd[s][x]
		}
	}
	return out
}
