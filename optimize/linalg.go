package optimize

import (
	"errors"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// eigenSym returns the eigenvalues of the symmetric matrix a (ascending) and
// the eigenvectors as the columns of a matrix.
func eigenSym(a *mat.SymDense) ([]float64, *mat.Dense, error) {
	var es mat.EigenSym
	if !es.Factorize(a, true) {
		return nil, nil, errors.New("optimize: symmetric eigenvalue decomposition failed")
	}
	vals := es.Values(nil)
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	// gonum returns ascending values; keep that order explicitly.
	idx := make([]int, len(vals))
	for i := range idx {
		idx[i] = i
	}
	if !sort.SliceIsSorted(idx, func(i, j int) bool { return vals[idx[i]] < vals[idx[j]] }) {
		sort.Slice(idx, func(i, j int) bool { return vals[idx[i]] < vals[idx[j]] })
		n := len(vals)
		v2 := make([]float64, n)
		m2 := mat.NewDense(n, n, nil)
		for k, i := range idx {
			v2[k] = vals[i]
			for r := 0; r < n; r++ {
				m2.Set(r, k, vecs.At(r, i))
			}
		}
		return v2, m2, nil
	}
	return vals, &vecs, nil
}

// orthonormalize returns an orthonormal basis (columns) of the span of the
// given vectors, dropping those whose remainder after projection is
// shorter than tol times their length (modified Gram–Schmidt, twice).
func orthonormalize(vs [][]float64, tol float64) [][]float64 {
	var basis [][]float64
	for _, v := range vs {
		w := append([]float64(nil), v...)
		n0 := vnorm(w)
		if n0 == 0 {
			continue
		}
		for pass := 0; pass < 2; pass++ {
			for _, b := range basis {
				c := vdot(b, w)
				for i := range w {
					w[i] -= c * b[i]
				}
			}
		}
		n1 := vnorm(w)
		if n1 <= tol*n0 {
			continue
		}
		for i := range w {
			w[i] /= n1
		}
		basis = append(basis, w)
	}
	return basis
}

// complement returns an orthonormal basis of the orthogonal complement, in
// R^n, of the span of the orthonormal vectors q.
func complement(n int, q [][]float64) [][]float64 {
	vs := make([][]float64, 0, n+len(q))
	vs = append(vs, q...)
	for i := 0; i < n; i++ {
		e := make([]float64, n)
		e[i] = 1
		vs = append(vs, e)
	}
	all := orthonormalize(vs, 1e-6)
	return all[len(q):]
}

func vdot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

func vnorm(a []float64) float64 { return math.Sqrt(vdot(a, a)) }

func maxAbs(a []float64) float64 {
	m := 0.0
	for _, v := range a {
		m = math.Max(m, math.Abs(v))
	}
	return m
}

func rms(a []float64) float64 {
	if len(a) == 0 {
		return 0
	}
	return math.Sqrt(vdot(a, a) / float64(len(a)))
}

// project removes from v its components along the orthonormal vectors q.
func project(v []float64, q [][]float64) []float64 {
	out := append([]float64(nil), v...)
	for _, b := range q {
		c := vdot(b, out)
		for i := range out {
			out[i] -= c * b[i]
		}
	}
	return out
}

// stepRFO returns the step s minimizing the quadratic model
// gᵀs + ½ sᵀHs by the rational-function method (A. Banerjee, N. Adams,
// J. Simons, R. Shepard, J. Phys. Chem. 89, 52 (1985)) within the trust
// radius: when the rational-function step is longer than radius, the
// level shift λ is lowered until |s(λ)| = radius, s(λ) = −(H − λ)⁻¹ g (the
// restricted-step form of J. Besalú, J. M. Bofill, Theor. Chem. Acc. 100,
// 265 (1998)). It also returns the model's energy change gᵀs + ½ sᵀHs.
func stepRFO(h *mat.SymDense, g []float64, radius float64) ([]float64, float64, error) {
	n := len(g)
	if n == 0 {
		return nil, 0, nil
	}
	vals, vecs, err := eigenSym(h)
	if err != nil {
		return nil, 0, err
	}
	gt := make([]float64, n) // gradient in the eigenbasis
	for i := 0; i < n; i++ {
		s := 0.0
		for r := 0; r < n; r++ {
			s += vecs.At(r, i) * g[r]
		}
		gt[i] = s
	}
	stepLen := func(lambda float64) float64 {
		s := 0.0
		for i := range gt {
			d := vals[i] - lambda
			s += gt[i] * gt[i] / (d * d)
		}
		return math.Sqrt(s)
	}
	// Rational-function shift: the root of f(λ) = λ + Σ g̃ᵢ²/(hᵢ − λ)
	// below min(h₁, 0); f increases with λ.
	gn := vnorm(g)
	hi := math.Min(vals[0], 0)
	f := func(lambda float64) float64 {
		s := lambda
		for i := range gt {
			s += gt[i] * gt[i] / (vals[i] - lambda)
		}
		return s
	}
	eps := 1e-12 * math.Max(1, math.Abs(hi))
	top := hi - eps
	lambda := top
	if f(top) > 0 {
		lo := hi - gn - 1
		for f(lo) > 0 {
			lo = hi - 2*(hi-lo)
		}
		a, b := lo, top
		for it := 0; it < 200 && b-a > 1e-15*math.Max(1, math.Abs(a)); it++ {
			m := 0.5 * (a + b)
			if f(m) > 0 {
				b = m
			} else {
				a = m
			}
		}
		lambda = 0.5 * (a + b)
	}
	if stepLen(lambda) > radius {
		// Lower λ until the step has the length of the trust radius;
		// |s(λ)| decreases monotonically as λ decreases below h₁.
		a := vals[0] - gn/radius - 1e-12
		b := lambda
		for it := 0; it < 200; it++ {
			m := 0.5 * (a + b)
			if stepLen(m) > radius {
				b = m
			} else {
				a = m
			}
			if b-a < 1e-14*math.Max(1, math.Abs(a)) {
				break
			}
		}
		lambda = a
	}
	s := make([]float64, n)
	for i := range gt {
		c := -gt[i] / (vals[i] - lambda)
		for r := 0; r < n; r++ {
			s[r] += c * vecs.At(r, i)
		}
	}
	return s, quadratic(h, g, s), nil
}

// quadratic is gᵀs + ½ sᵀHs.
func quadratic(h *mat.SymDense, g, s []float64) float64 {
	n := len(s)
	e := vdot(g, s)
	for i := 0; i < n; i++ {
		hs := 0.0
		for j := 0; j < n; j++ {
			hs += h.At(i, j) * s[j]
		}
		e += 0.5 * s[i] * hs
	}
	return e
}

// updateBFGS applies the BFGS update to the Hessian h (row-major n×n) for
// the step s and gradient change y, with Powell's damping so that h stays
// positive definite when sᵀy is small or negative (M. J. D. Powell, in
// Numerical Analysis, Lecture Notes in Mathematics 630, 144 (1978)).
func updateBFGS(h []float64, n int, s, y []float64) {
	if vnorm(s) < 1e-12 {
		return
	}
	hs := make([]float64, n)
	for i := 0; i < n; i++ {
		v := 0.0
		for j := 0; j < n; j++ {
			v += h[i*n+j] * s[j]
		}
		hs[i] = v
	}
	shs := vdot(s, hs)
	if shs <= 0 {
		return
	}
	sy := vdot(s, y)
	r := y
	if sy < 0.2*shs {
		theta := 0.8 * shs / (shs - sy)
		r = make([]float64, n)
		for i := range r {
			r[i] = theta*y[i] + (1-theta)*hs[i]
		}
		sy = vdot(s, r)
	}
	if sy <= 0 {
		return
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			h[i*n+j] += r[i]*r[j]/sy - hs[i]*hs[j]/shs
		}
	}
}
