package integral

import "math"

// maxSphericalL is the highest angular momentum for which
// sphericalTransform is defined. The factorials involved, up to (2l)!, are
// then at most 20! and still carry full double precision.
const maxSphericalL = 10

// sphericalTransform returns the (2l+1)×ncart row-major matrix that maps
// integrals over axially normalized Cartesian components (every component
// x^lx y^ly z^lz carries the normalization of x^l, components in the
// lexicographic order of basis.Shell) to unit-normalized real solid
// harmonics ordered m = −l … +l.
//
// The coefficients are the closed form of H. B. Schlegel and M. J. Frisch,
// Int. J. Quantum Chem. 54, 83 (1995), eq. (15), for the real combinations
// of the complex solid harmonics without the Condon–Shortley phase:
// m > 0 is √2·Re and m < 0 is √2·Im of the harmonic with |m|, m = 0 is the
// harmonic itself. Thus p functions come out as (y, z, x), d as
// (xy, yz, (2z²−x²−y²)/2, xz, (x²−y²)·√3/2) in terms of unit-normalized
// Cartesians. This is the same phase and order as the "standard" solid
// harmonic convention of libint2, so integrals agree component by component.
//
// The rows are the coefficients c in Y_lm = Σ_c T[m][c]·g_c where g_c are
// the axially normalized Cartesian components; a block of integrals over
// Cartesian components I_cd is transformed as T_a · I · T_bᵀ.
// l must lie in 0 … maxSphericalL.
func sphericalTransform(l int) []float64 {
	if l < 0 || l > maxSphericalL {
		panic("integral: sphericalTransform: angular momentum out of range")
	}
	comps := cartesianExponents(l)
	nc := len(comps)
	out := make([]float64, (2*l+1)*nc)
	for row, m := 0, -l; m <= l; row, m = row+1, m+1 {
		for c, e := range comps {
			out[row*nc+c] = solidHarmonicCoefficient(l, m, e[0], e[1], e[2])
		}
	}
	return out
}

// solidHarmonicCoefficient is the coefficient of the axially normalized
// Cartesian component x^lx y^ly z^lz in the unit-normalized real solid
// harmonic (l, m): Schlegel & Frisch (1995) eq. (15) for unit-normalized
// Cartesians, times √((2l−1)!!/((2lx−1)!!(2ly−1)!!(2lz−1)!!)) to pass to
// axially normalized ones.
func solidHarmonicCoefficient(l, m, lx, ly, lz int) float64 {
	am := m
	if am < 0 {
		am = -am
	}
	// Only components with lx+ly−|m| even and ≥ 0 contribute.
	if (lx+ly-am)%2 != 0 || lx+ly < am {
		return 0
	}
	j := (lx + ly - am) / 2
	// (x ± iy)^|m| gives x^p (iy)^(|m|−p); the real part (m ≥ 0) needs |m|−p
	// even, the imaginary part (m < 0) odd. With p = lx − 2k, |m|−p has the
	// parity of |m|−lx.
	d := am - lx
	odd := d%2 != 0
	if (m >= 0) == odd {
		return 0
	}
	// Phase of i^(|m|−p): (−1)^((|m|−lx)/2)·(−1)^k for the real part,
	// (−1)^((|m|−lx−1)/2)·(−1)^k for the imaginary part.
	var phase float64
	if m >= 0 {
		phase = sign(d / 2)
	} else {
		phase = sign((d - 1) / 2)
	}

	pre := math.Sqrt(factorial(2*lx) * factorial(2*ly) * factorial(2*lz) / factorial(2*l) *
		factorial(l-am) / factorial(l) / factorial(l+am) /
		(factorial(lx) * factorial(ly) * factorial(lz)))
	pre /= math.Ldexp(1, l)

	var sum float64
	for i := j; i <= (l-am)/2; i++ {
		f := binomial(l, i) * binomial(i, j) * sign(i) * factorial(2*(l-i)) / factorial(l-am-2*i)
		var inner float64
		for k := 0; k <= j; k++ {
			p := lx - 2*k
			if p < 0 || p > am {
				continue
			}
			inner += binomial(j, k) * binomial(am, p) * sign(k)
		}
		sum += f * inner
	}
	c := phase * pre * sum
	if m != 0 {
		c *= math.Sqrt2
	}
	// From unit-normalized to axially normalized Cartesian components.
	c *= math.Sqrt(doubleFactorial(2*l-1) /
		(doubleFactorial(2*lx-1) * doubleFactorial(2*ly-1) * doubleFactorial(2*lz-1)))
	return c
}

// sign returns (−1)^n.
func sign(n int) float64 {
	if n%2 != 0 {
		return -1
	}
	return 1
}

// factorial returns n! as a float64 (exact up to 22!).
func factorial(n int) float64 {
	r := 1.0
	for k := 2; k <= n; k++ {
		r *= float64(k)
	}
	return r
}

// binomial returns the binomial coefficient (n over k), zero outside 0 ≤ k ≤ n.
func binomial(n, k int) float64 {
	if k < 0 || k > n {
		return 0
	}
	return factorial(n) / (factorial(k) * factorial(n-k))
}
