package integral

import (
	"math"

	"poise/energy/basis"
)

// Basis is a molecule's list of shells prepared for integral evaluation:
// contraction coefficients normalized, function offsets and the matrices
// that map raw Cartesian integrals to the final functions.
type Basis struct {
	Shells  []basis.Shell // the shells as given, positions in bohr
	Offsets []int         // index of the first final function of each shell
	NBF     int           // number of final basis functions
	MaxL    int           // highest angular momentum present

	shells []shellData
}

// shellData is the prepared form of one shell.
type shellData struct {
	l      int
	pure   bool
	center [3]float64
	exps   []float64
	// coefs multiply unnormalized primitives x^l·exp(−α r²): they include the
	// primitive normalization of the axial component x^l and the
	// renormalization of the contraction, so that the contracted axial
	// Cartesian component has unit norm.
	coefs []float64
	ncart int // (l+1)(l+2)/2
	nfunc int // final functions: 2l+1 (pure) or ncart
	// trans is the nfunc×ncart row-major matrix that maps integrals over the
	// axially normalized Cartesian components (in the lexicographic order of
	// basis.Shell) to the final functions: per-component normalization for
	// Cartesian shells, real solid harmonics for pure ones.
	trans []float64
}

// NewBasis prepares shells for integral evaluation.
func NewBasis(shells []basis.Shell) *Basis {
	b := &Basis{Shells: shells}
	b.Offsets, b.NBF = basis.Offsets(shells)
	b.shells = make([]shellData, len(shells))
	for i := range shells {
		s := &shells[i]
		if s.L > b.MaxL {
			b.MaxL = s.L
		}
		d := shellData{
			l:      s.L,
			pure:   s.Pure,
			center: s.Center,
			exps:   append([]float64(nil), s.Exponents...),
			coefs:  normalizedCoefficients(s.L, s.Exponents, s.Coefficients),
			ncart:  basis.NumCartesian(s.L),
			nfunc:  s.NumFunctions(),
		}
		d.trans = shellTransform(s.L, s.Pure)
		b.shells[i] = d
	}
	return b
}

// doubleFactorial returns n!! with (−1)!! = 0!! = 1.
func doubleFactorial(n int) float64 {
	r := 1.0
	for k := n; k > 1; k -= 2 {
		r *= float64(k)
	}
	return r
}

// primitiveNorm is the normalization constant of x^l·exp(−α r²).
func primitiveNorm(l int, alpha float64) float64 {
	// ∫ x^{2l} e^{−2α r²} d³r = (2l−1)!! / (4α)^l · (π/2α)^{3/2}
	return math.Sqrt(math.Pow(4*alpha, float64(l)) / doubleFactorial(2*l-1) * math.Pow(2*alpha/math.Pi, 1.5))
}

// normalizedCoefficients folds the primitive normalization into the
// published coefficients and renormalizes the contraction so that its axial
// component has unit norm.
func normalizedCoefficients(l int, exps, coefs []float64) []float64 {
	out := make([]float64, len(exps))
	for p := range exps {
		out[p] = coefs[p] * primitiveNorm(l, exps[p])
	}
	// ⟨φ|φ⟩ of the axial component: Σ_pq c_p c_q (2l−1)!!/(2(α_p+α_q))^l · (π/(α_p+α_q))^{3/2}
	var s float64
	for p := range exps {
		for q := range exps {
			a := exps[p] + exps[q]
			s += out[p] * out[q] * doubleFactorial(2*l-1) / math.Pow(2*a, float64(l)) * math.Pow(math.Pi/a, 1.5)
		}
	}
	f := 1 / math.Sqrt(s)
	for p := range out {
		out[p] *= f
	}
	return out
}

// cartesianExponents lists (lx, ly, lz) of the Cartesian components of
// angular momentum l in the order of basis.Shell.
func cartesianExponents(l int) [][3]int {
	out := make([][3]int, 0, basis.NumCartesian(l))
	for lx := l; lx >= 0; lx-- {
		for ly := l - lx; ly >= 0; ly-- {
			out = append(out, [3]int{lx, ly, l - lx - ly})
		}
	}
	return out
}

// shellTransform returns the nfunc×ncart matrix from axially normalized
// Cartesian components to the final functions of a shell.
func shellTransform(l int, pure bool) []float64 {
	if pure {
		return sphericalTransform(l)
	}
	comps := cartesianExponents(l)
	n := len(comps)
	m := make([]float64, n*n)
	for i, c := range comps {
		// The axial norm ⟨x^l|x^l⟩ differs from ⟨x^lx y^ly z^lz|…⟩ by
		// (2l−1)!! / ((2lx−1)!!(2ly−1)!!(2lz−1)!!).
		m[i*n+i] = math.Sqrt(doubleFactorial(2*l-1) /
			(doubleFactorial(2*c[0]-1) * doubleFactorial(2*c[1]-1) * doubleFactorial(2*c[2]-1)))
	}
	return m
}

// ShellCoefficients returns the normalized contraction coefficients of shell
// i: they multiply unnormalized primitives x^l·exp(−α r²) and give the
// axial Cartesian component unit norm. The slice must not be modified.
func (b *Basis) ShellCoefficients(i int) []float64 { return b.shells[i].coefs }

// ShellTransform returns the nfunc×ncart row-major matrix of shell i that
// maps axially normalized Cartesian components (in the order of
// basis.Shell) to the final functions. The slice must not be modified.
func (b *Basis) ShellTransform(i int) []float64 { return b.shells[i].trans }

// CartesianExponents lists (lx, ly, lz) of the Cartesian components of
// angular momentum l in the order of basis.Shell.
func CartesianExponents(l int) [][3]int { return cartesianExponents(l) }
