package freq

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"

	"poise/energy/units"
)

// LinearToleranceBohr is the largest distance of an atom from the
// molecular axis (the principal axis of the smallest moment of inertia,
// through the centre of mass) for the molecule to count as linear, with
// 3N−5 vibrations instead of 3N−6. Relaxed linear molecules are straight
// to far better; XYZ files in ångström with six decimals to 1e-6 Å.
const LinearToleranceBohr = 1e-3

// System is what a harmonic analysis needs. Slices are row-major; n = 3N.
type System struct {
	// Z are the atomic numbers (for the descriptions of the motions; nil
	// leaves the descriptions empty).
	Z []int
	// MassesU are the nuclear masses in u.
	MassesU []float64
	// CoordsBohr is the geometry (n).
	CoordsBohr []float64
	// HessianAU is the Cartesian Hessian (n×n, Eh/bohr²); it is used
	// symmetrized.
	HessianAU []float64
	// DipoleDerivAU are the atomic polar tensors ∂μ_k/∂x_i (n×3, e);
	// nil leaves the IR intensities out.
	DipoleDerivAU []float64
}

// Mode is one normal mode of vibration.
type Mode struct {
	// WavenumberCm1 is the harmonic wavenumber; negative for an imaginary
	// frequency (a negative curvature).
	WavenumberCm1 float64
	// EigenvalueAU is the eigenvalue of the projected mass-weighted
	// Hessian, Eh/(bohr²·u).
	EigenvalueAU float64
	// ReducedMassU is μ = 1/Σ_i q_i²/m_i for the normalized mass-weighted
	// eigenvector q (u).
	ReducedMassU float64
	// ForceConstantMdynA is k = λμ in mdyn/Å (negative for an imaginary
	// mode).
	ForceConstantMdynA float64
	// IRIntensityKmMol is the integrated intensity of the fundamental,
	// 974.86 km/mol × |∂μ/∂Q|² (e²/u); 0 without dipole derivatives.
	IRIntensityKmMol float64
	// MassWeighted is the normalized eigenvector q (n, √u·bohr per unit
	// normal coordinate, dimensionless when normalized).
	MassWeighted []float64
	// Displacement is the Cartesian displacement of the mode, q_i/√m_i
	// normalized to unit length (n, dimensionless): the direction the atoms
	// move in.
	Displacement []float64
	// Motions are the internal coordinates the mode moves, largest share
	// first, and Description says it in words ("O–H stretch, in phase").
	Motions     []Motion
	Description string
}

// Analysis is the result of a harmonic analysis.
type Analysis struct {
	// Linear is true for linear molecules (3N−5 vibrations).
	Linear bool
	// External is the number of translations and rotations projected out
	// (3 for an atom, 5 linear, 6 otherwise).
	External int
	// Modes are the vibrations in ascending order of wavenumber
	// (imaginary ones first, most negative first).
	Modes []Mode
	// RigidBodyCm1 are the External eigenvalues of the unprojected
	// mass-weighted Hessian nearest zero, as wavenumbers (negative:
	// imaginary), ascending: how far the Hessian is from the exact
	// invariance under translations and rotations.
	RigidBodyCm1 []float64
	// ZeroPointHartree is ½Σ hcν̃ over the real modes (Eh per molecule).
	ZeroPointHartree float64
	// HasIntensities is true when dipole derivatives were given.
	HasIntensities bool
}

// Analyze mass-weights the Hessian, projects out the translations and
// rotations about the centre of mass (one rotation fewer for a linear
// molecule), and diagonalizes the Hessian within the space of vibrations:
// frequencies, normal modes, reduced masses, force constants and, with
// dipole derivatives, IR intensities (E. B. Wilson, J. C. Decius,
// P. C. Cross, Molecular Vibrations, McGraw-Hill 1955, ch. 2 and 4;
// W. H. Miller, N. C. Handy, J. E. Adams, J. Chem. Phys. 72, 99 (1980) for
// the projector).
//
// The vibrations are the eigenvectors of BᵀH̃B, where H̃ = M^{-1/2} H
// M^{-1/2} and the columns of B are an orthonormal basis of the complement
// of the translations √m_i e_α and rotations √m_i (e_α × r_i) (r_i from the
// centre of mass, e_α along the principal axes). Exactly 3N−6 (3N−5)
// values come out, none of them a leftover of the projection.
func Analyze(sys System) (*Analysis, error) {
	nat := len(sys.MassesU)
	n := 3 * nat
	if nat == 0 {
		return nil, errors.New("freq: no atoms")
	}
	if len(sys.CoordsBohr) != n {
		return nil, fmt.Errorf("freq: %d coordinates for %d atoms", len(sys.CoordsBohr), nat)
	}
	if len(sys.HessianAU) != n*n {
		return nil, fmt.Errorf("freq: Hessian has %d elements, want %d", len(sys.HessianAU), n*n)
	}
	if sys.DipoleDerivAU != nil && len(sys.DipoleDerivAU) != 3*n {
		return nil, fmt.Errorf("freq: dipole derivatives have %d elements, want %d", len(sys.DipoleDerivAU), 3*n)
	}
	if sys.Z != nil && len(sys.Z) != nat {
		return nil, fmt.Errorf("freq: %d atomic numbers for %d atoms", len(sys.Z), nat)
	}
	for i, m := range sys.MassesU {
		if !(m > 0) || !finite(m) {
			return nil, fmt.Errorf("freq: mass of atom %d is %g u", i+1, m)
		}
	}
	for i, v := range sys.CoordsBohr {
		if !finite(v) {
			return nil, fmt.Errorf("freq: coordinate %d is %v", i+1, v)
		}
	}
	// Atoms on top of each other have no rigid-body frame (and are no
	// molecule).
	for a := 0; a < nat; a++ {
		for b := 0; b < a; b++ {
			var d2 float64
			for k := 0; k < 3; k++ {
				d := sys.CoordsBohr[3*a+k] - sys.CoordsBohr[3*b+k]
				d2 += d * d
			}
			if d2 < minSeparationBohr*minSeparationBohr {
				return nil, fmt.Errorf("freq: atoms %d and %d are %.2g bohr apart: give distinct positions", b+1, a+1, math.Sqrt(d2))
			}
		}
	}
	for _, v := range sys.HessianAU {
		if !finite(v) {
			return nil, errors.New("freq: the Hessian has a non-finite element")
		}
	}
	for _, v := range sys.DipoleDerivAU {
		if !finite(v) {
			return nil, errors.New("freq: the dipole derivatives have a non-finite element")
		}
	}

	// Mass-weighted, symmetrized Hessian.
	sq := make([]float64, n) // √m per coordinate
	for i := range sq {
		sq[i] = math.Sqrt(sys.MassesU[i/3])
	}
	hmw := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := 0.5 * (sys.HessianAU[i*n+j] + sys.HessianAU[j*n+i]) / (sq[i] * sq[j])
			hmw.SetSym(i, j, v)
		}
	}

	ext, linear := externalBasis(sys.MassesU, sys.CoordsBohr)
	a := &Analysis{Linear: linear, External: len(ext), HasIntensities: sys.DipoleDerivAU != nil}

	// Rigid-body roots of the unprojected Hessian.
	var es mat.EigenSym
	if !es.Factorize(hmw, false) {
		return nil, errors.New("freq: diagonalizing the mass-weighted Hessian failed")
	}
	vals := es.Values(nil)
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(x, y int) bool { return math.Abs(vals[idx[x]]) < math.Abs(vals[idx[y]]) })
	for _, i := range idx[:len(ext)] {
		a.RigidBodyCm1 = append(a.RigidBodyCm1, WavenumberCm1(vals[i]))
	}
	sort.Float64s(a.RigidBodyCm1)

	nvib := n - len(ext)
	if nvib == 0 {
		return a, nil
	}
	vib, err := complementBasis(ext, n) // n × nvib, orthonormal columns
	if err != nil {
		return nil, err
	}
	// BᵀH̃B.
	var hb mat.Dense
	hb.Mul(hmw, vib)
	small := mat.NewSymDense(nvib, nil)
	for i := 0; i < nvib; i++ {
		for j := i; j < nvib; j++ {
			s := 0.0
			for k := 0; k < n; k++ {
				s += vib.At(k, i) * hb.At(k, j)
			}
			small.SetSym(i, j, s)
		}
	}
	var es2 mat.EigenSym
	if !es2.Factorize(small, true) {
		return nil, errors.New("freq: diagonalizing the projected Hessian failed")
	}
	lam := es2.Values(nil)
	var u mat.Dense
	es2.VectorsTo(&u)
	var q mat.Dense
	q.Mul(vib, &u) // n × nvib, columns the mass-weighted normal modes

	var coords *internalSet
	if sys.Z != nil {
		coords = newInternalSet(sys.Z, sys.CoordsBohr)
	}
	mdyn := mdynPerAngstromPerAU()
	km := kmPerMolPerAU()
	for p := 0; p < nvib; p++ {
		m := Mode{EigenvalueAU: lam[p], WavenumberCm1: WavenumberCm1(lam[p])}
		m.MassWeighted = make([]float64, n)
		big := 0
		for i := 0; i < n; i++ {
			m.MassWeighted[i] = q.At(i, p)
			if math.Abs(m.MassWeighted[i]) > math.Abs(m.MassWeighted[big])+1e-12 {
				big = i
			}
		}
		if m.MassWeighted[big] < 0 { // a fixed sign: the largest component positive
			for i := range m.MassWeighted {
				m.MassWeighted[i] = -m.MassWeighted[i]
			}
		}
		m.Displacement = make([]float64, n)
		norm2 := 0.0
		for i := 0; i < n; i++ {
			m.Displacement[i] = m.MassWeighted[i] / sq[i]
			norm2 += m.Displacement[i] * m.Displacement[i]
		}
		m.ReducedMassU = 1 / norm2
		norm := math.Sqrt(norm2)
		m.ForceConstantMdynA = lam[p] * m.ReducedMassU * mdyn
		if sys.DipoleDerivAU != nil {
			var d [3]float64
			for i := 0; i < n; i++ {
				l := m.Displacement[i] // ∂x_i/∂Q_p (bohr per bohr·√u)
				for k := 0; k < 3; k++ {
					d[k] += sys.DipoleDerivAU[3*i+k] * l
				}
			}
			m.IRIntensityKmMol = km * (d[0]*d[0] + d[1]*d[1] + d[2]*d[2])
		}
		for i := range m.Displacement {
			m.Displacement[i] /= norm
		}
		if coords != nil {
			m.Motions = coords.motions(m.Displacement)
			m.Description = describe(m.Motions)
		}
		if m.WavenumberCm1 > 0 {
			a.ZeroPointHartree += 0.5 * m.WavenumberCm1 / units.HartreeWavenumber
		}
		a.Modes = append(a.Modes, m)
	}
	return a, nil
}

// externalBasis returns the orthonormal mass-weighted translations and
// rotations (about the principal axes through the centre of mass; the
// rotation about the axis of a linear molecule, and all rotations of an
// atom, left out).
func externalBasis(masses, x []float64) (vecs [][]float64, linear bool) {
	nat := len(masses)
	n := 3 * nat
	total := 0.0
	var com [3]float64
	for a, m := range masses {
		total += m
		for k := 0; k < 3; k++ {
			com[k] += m * x[3*a+k]
		}
	}
	for k := range com {
		com[k] /= total
	}
	r := make([][3]float64, nat)
	inertia := mat.NewSymDense(3, nil)
	for a, m := range masses {
		for k := 0; k < 3; k++ {
			r[a][k] = x[3*a+k] - com[k]
		}
		rr := r[a][0]*r[a][0] + r[a][1]*r[a][1] + r[a][2]*r[a][2]
		for i := 0; i < 3; i++ {
			for j := i; j < 3; j++ {
				v := -m * r[a][i] * r[a][j]
				if i == j {
					v += m * rr
				}
				inertia.SetSym(i, j, inertia.At(i, j)+v)
			}
		}
	}
	for k := 0; k < 3; k++ {
		t := make([]float64, n)
		for a, m := range masses {
			t[3*a+k] = math.Sqrt(m / total)
		}
		vecs = append(vecs, t)
	}
	if nat == 1 {
		return vecs, false
	}
	var es mat.EigenSym
	if !es.Factorize(inertia, true) { // moments ascending
		return vecs, false
	}
	var axes mat.Dense
	es.VectorsTo(&axes)
	// Linear when every atom lies on the axis of the smallest moment.
	var e0 [3]float64
	for k := 0; k < 3; k++ {
		e0[k] = axes.At(k, 0)
	}
	linear = true
	for a := range r {
		d := r[a][0]*e0[0] + r[a][1]*e0[1] + r[a][2]*e0[2]
		perp2 := r[a][0]*r[a][0] + r[a][1]*r[a][1] + r[a][2]*r[a][2] - d*d
		if perp2 > LinearToleranceBohr*LinearToleranceBohr {
			linear = false
			break
		}
	}
	for ax := 0; ax < 3; ax++ {
		if linear && ax == 0 {
			continue
		}
		var e [3]float64
		for k := 0; k < 3; k++ {
			e[k] = axes.At(k, ax)
		}
		v := make([]float64, n)
		norm2 := 0.0
		for a, m := range masses {
			c := [3]float64{e[1]*r[a][2] - e[2]*r[a][1], e[2]*r[a][0] - e[0]*r[a][2], e[0]*r[a][1] - e[1]*r[a][0]}
			s := math.Sqrt(m)
			for k := 0; k < 3; k++ {
				v[3*a+k] = s * c[k]
				norm2 += v[3*a+k] * v[3*a+k]
			}
		}
		norm := math.Sqrt(norm2)
		for i := range v {
			v[i] /= norm
		}
		vecs = append(vecs, v)
	}
	// The rotations about principal axes are orthogonal to each other and
	// to the translations; one Gram–Schmidt pass removes rounding.
	for i := range vecs {
		for j := 0; j < i; j++ {
			d := dot(vecs[i], vecs[j])
			for k := range vecs[i] {
				vecs[i][k] -= d * vecs[j][k]
			}
		}
		nrm := math.Sqrt(dot(vecs[i], vecs[i]))
		for k := range vecs[i] {
			vecs[i][k] /= nrm
		}
	}
	return vecs, linear
}

// minSeparationBohr is the smallest distance between two atoms that
// Analyze accepts; closer atoms are a mistake in the input.
const minSeparationBohr = 0.01

// complementBasis returns an n × (n − len(ext)) matrix whose orthonormal
// columns span the complement of the orthonormal vectors ext: the
// eigenvectors of the projector I − Σ e eᵀ with eigenvalue 1.
func complementBasis(ext [][]float64, n int) (*mat.Dense, error) {
	p := mat.NewSymDense(n, nil)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := 0.0
			if i == j {
				v = 1
			}
			for _, e := range ext {
				v -= e[i] * e[j]
			}
			p.SetSym(i, j, v)
		}
	}
	var es mat.EigenSym
	if !es.Factorize(p, true) {
		return nil, errors.New("freq: no vibrational subspace (the rigid-body directions are degenerate)")
	}
	var vec mat.Dense
	es.VectorsTo(&vec)
	m := n - len(ext)
	out := mat.NewDense(n, m, nil)
	// Eigenvalues ascending: the last m are the ones.
	for c := 0; c < m; c++ {
		for i := 0; i < n; i++ {
			out.Set(i, c, vec.At(i, len(ext)+c))
		}
	}
	return out, nil
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
