package scf

import (
	"gonum.org/v1/gonum/mat"
)

// diis extrapolates Fock matrices by Pulay's direct inversion in the
// iterative subspace (P. Pulay, Chem. Phys. Lett. 73, 393 (1980);
// J. Comput. Chem. 3, 556 (1982)). Each entry holds one Fock matrix per spin
// and the concatenated error vector FDS − SDF in the orthonormal basis.
type diis struct {
	max   int
	focks [][][]float64
	errs  [][]float64
	bmat  [][]float64 // cached error inner products
}

func newDIIS(max int) *diis { return &diis{max: max} }

func (d *diis) reset() {
	d.focks, d.errs, d.bmat = nil, nil, nil
}

// push adds a Fock/error pair, dropping the oldest beyond the subspace size.
func (d *diis) push(focks [][]float64, errv []float64) {
	fs := make([][]float64, len(focks))
	for i, f := range focks {
		fs[i] = append([]float64(nil), f...)
	}
	if len(d.focks) == d.max {
		d.focks = d.focks[1:]
		d.errs = d.errs[1:]
		d.bmat = d.bmat[1:]
		for i := range d.bmat {
			d.bmat[i] = d.bmat[i][1:]
		}
	}
	e := append([]float64(nil), errv...)
	d.focks = append(d.focks, fs)
	d.errs = append(d.errs, e)
	row := make([]float64, len(d.errs))
	for i := range d.errs {
		row[i] = dot(d.errs[i], e)
	}
	for i := range d.bmat {
		d.bmat[i] = append(d.bmat[i], row[i])
	}
	d.bmat = append(d.bmat, row)
}

// extrapolate returns the DIIS combination of the stored Fock matrices, or
// nil when the subspace equations are singular even after dropping the
// oldest vectors.
func (d *diis) extrapolate() [][]float64 {
	for len(d.focks) > 1 {
		m := len(d.focks)
		a := mat.NewDense(m+1, m+1, nil)
		rhs := mat.NewVecDense(m+1, nil)
		// Scale by the largest diagonal element for conditioning.
		scale := 0.0
		for i := 0; i < m; i++ {
			if d.bmat[i][i] > scale {
				scale = d.bmat[i][i]
			}
		}
		if scale == 0 {
			scale = 1
		}
		for i := 0; i < m; i++ {
			for j := 0; j < m; j++ {
				a.Set(i, j, d.bmat[i][j]/scale)
			}
			a.Set(i, m, -1)
			a.Set(m, i, -1)
		}
		rhs.SetVec(m, -1)
		var x mat.VecDense
		if err := x.SolveVec(a, rhs); err == nil {
			var cond float64
			var lu mat.LU
			lu.Factorize(a)
			cond = lu.Cond()
			if cond < 1e14 {
				out := make([][]float64, len(d.focks[0]))
				for s := range out {
					f := make([]float64, len(d.focks[0][s]))
					for i := 0; i < m; i++ {
						c := x.AtVec(i)
						for k, v := range d.focks[i][s] {
							f[k] += c * v
						}
					}
					out[s] = f
				}
				return out
			}
		}
		// Ill-conditioned: drop the oldest vector and try again.
		d.focks = d.focks[1:]
		d.errs = d.errs[1:]
		d.bmat = d.bmat[1:]
		for i := range d.bmat {
			d.bmat[i] = d.bmat[i][1:]
		}
	}
	return nil
}
