package scf

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// mul returns a·b for row-major matrices a (r×k) and b (k×c).
func mul(a []float64, r, k int, b []float64, c int) []float64 {
	out := make([]float64, r*c)
	mat.NewDense(r, c, out).Mul(mat.NewDense(r, k, a), mat.NewDense(k, c, b))
	return out
}

// mulTN returns aᵀ·b for a (k×r) and b (k×c).
func mulTN(a []float64, k, r int, b []float64, c int) []float64 {
	out := make([]float64, r*c)
	mat.NewDense(r, c, out).Mul(mat.NewDense(k, r, a).T(), mat.NewDense(k, c, b))
	return out
}

// transform returns Xᵀ·M·X for M n×n and X n×m.
func transform(x []float64, n, m int, mm []float64) []float64 {
	return mulTN(x, n, m, mul(mm, n, n, x, m), m)
}

// eigenSym diagonalizes the symmetric n×n matrix a: eigenvalues ascending
// and eigenvectors as the columns of an n×n row-major matrix.
func eigenSym(a []float64, n int) (vals, vecs []float64, err error) {
	sym := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			sym.SetSym(i, j, 0.5*(a[i*n+j]+a[j*n+i]))
		}
	}
	var es mat.EigenSym
	if !es.Factorize(sym, true) {
		return nil, nil, fmt.Errorf("symmetric eigenvalue decomposition of a %d×%d matrix failed", n, n)
	}
	vals = es.Values(nil)
	var v mat.Dense
	es.VectorsTo(&v)
	vecs = make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			vecs[i*n+j] = v.At(i, j)
		}
	}
	// Fix the sign of every eigenvector (largest component positive) so that
	// orbitals are reproducible.
	for j := 0; j < n; j++ {
		big, at := 0.0, 0
		for i := 0; i < n; i++ {
			if x := math.Abs(vecs[i*n+j]); x > big+1e-12 {
				big, at = x, i
			}
		}
		if vecs[at*n+j] < 0 {
			for i := 0; i < n; i++ {
				vecs[i*n+j] = -vecs[i*n+j]
			}
		}
	}
	return vals, vecs, nil
}

// orthogonalizer returns X (n×m) with Xᵀ S X = 1 by canonical
// orthogonalization (Löwdin, Adv. Quantum Chem. 5, 185 (1970)): eigenvectors
// of S with eigenvalue below tol are dropped to remove near-linear
// dependence. It also returns the number of dropped functions.
func orthogonalizer(s []float64, n int, tol float64) (x []float64, m, dropped int, err error) {
	vals, vecs, err := eigenSym(s, n)
	if err != nil {
		return nil, 0, 0, fmt.Errorf("overlap matrix: %w", err)
	}
	keep := make([]int, 0, n)
	for i, v := range vals {
		if v >= tol {
			keep = append(keep, i)
		}
	}
	m = len(keep)
	if m == 0 {
		return nil, 0, n, fmt.Errorf("overlap matrix has no eigenvalue above %g", tol)
	}
	x = make([]float64, n*m)
	for c, k := range keep {
		f := 1 / math.Sqrt(vals[k])
		for i := 0; i < n; i++ {
			x[i*m+c] = vecs[i*n+k] * f
		}
	}
	return x, m, n - m, nil
}

// densityFromOrbitals returns D = Σ_i occ_i C_i C_iᵀ for the first columns
// of the n×m coefficient matrix c.
func densityFromOrbitals(c []float64, n, m int, occ []float64) []float64 {
	d := make([]float64, n*n)
	for i := 0; i < len(occ) && i < m; i++ {
		o := occ[i]
		if o == 0 {
			continue
		}
		for a := 0; a < n; a++ {
			ca := o * c[a*m+i]
			if ca == 0 {
				continue
			}
			row := d[a*n : a*n+n]
			for b := 0; b < n; b++ {
				row[b] += ca * c[b*m+i]
			}
		}
	}
	return d
}

// dot returns Σ a_i b_i (the trace of a·b for symmetric matrices).
func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
