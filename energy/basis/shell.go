package basis

// Shell is one contracted shell of Gaussian functions placed on an atom of a
// molecule: one angular momentum, one contraction.
//
// Exponents are in bohr⁻². Coefficients are the published contraction
// coefficients; they multiply *normalized* primitive Gaussians and the
// contraction itself is not exactly normalized. Normalization is done by the
// integral package, once, when it prepares shell data.
//
// Function order inside a shell (the convention used everywhere in poise):
//   - Cartesian (Pure false): lexicographic, lx from l down to 0, then ly from
//     l−lx down to 0: s; x y z; xx xy xz yy yz zz; xxx xxy xxz xyy xyz xzz yyy
//     yyz yzz zzz; ... Every Cartesian component is normalized to one.
//   - Spherical (Pure true): real solid harmonics ordered m = −l … +l, each
//     normalized to one.
type Shell struct {
	L            int        // angular momentum: 0 s, 1 p, 2 d, ...
	Pure         bool       // spherical (2l+1 functions) rather than Cartesian ((l+1)(l+2)/2)
	Center       [3]float64 // position in bohr
	Atom         int        // index of the atom in the molecule
	Exponents    []float64  // primitive exponents, bohr⁻²
	Coefficients []float64  // contraction coefficients for normalized primitives
}

// NumFunctions is the number of basis functions the shell contributes.
func (s *Shell) NumFunctions() int {
	if s.Pure {
		return 2*s.L + 1
	}
	return NumCartesian(s.L)
}

// NumCartesian is the number of Cartesian components of angular momentum l.
func NumCartesian(l int) int { return (l + 1) * (l + 2) / 2 }

// Offsets returns the index of the first basis function of every shell and
// the total number of basis functions.
func Offsets(shells []Shell) (offsets []int, n int) {
	offsets = make([]int, len(shells))
	for i := range shells {
		offsets[i] = n
		n += shells[i].NumFunctions()
	}
	return offsets, n
}
