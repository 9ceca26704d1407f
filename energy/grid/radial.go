package grid

import "math"

// taAlpha is the exponent α = 0.6 of the Treutler–Ahlrichs M4 mapping
// (O. Treutler, R. Ahlrichs, J. Chem. Phys. 102, 346 (1995), eq. 19).
const taAlpha = 0.6

// radialM4 returns n radial points r (bohr, increasing) and weights w such
// that Σ w_i f(r_i) ≈ ∫₀^∞ r² f(r) dr, for radial scaling factor xi.
//
// The points are Gauss–Chebyshev points of the second kind,
// x_i = cos(iπ/(n+1)), i = 1…n, whose rule
// ∫₋₁¹ g(x) √(1−x²) dx ≈ π/(n+1) Σ sin²(iπ/(n+1)) g(x_i)
// (M. Abramowitz, I. A. Stegun, Handbook of Mathematical Functions, 25.4.40)
// is applied to g = h/√(1−x²), mapped to r by the M4 transformation
// r(x) = ξ/ln 2 · (1+x)^α · ln(2/(1−x)).
func radialM4(n int, xi float64) (r, w []float64) {
	r = make([]float64, n)
	w = make([]float64, n)
	c := xi / math.Ln2
	for k := 0; k < n; k++ {
		// k = 0 is the innermost point: i = n, x close to −1.
		i := n - k
		theta := float64(i) * math.Pi / float64(n+1)
		x := math.Cos(theta)
		s := math.Sin(theta)
		onePlus := 1 + x
		lnTerm := math.Log(2 / (1 - x))
		pw := math.Pow(onePlus, taAlpha)
		rr := c * pw * lnTerm
		drdx := c * (taAlpha*pw/onePlus*lnTerm + pw/(1-x))
		r[k] = rr
		w[k] = math.Pi / float64(n+1) * s * drdx * rr * rr
	}
	return r, w
}
