package scf

import (
	"context"
	"math"

	"poise/energy/basis"
	"poise/energy/integral"
	"poise/energy/molecule"
)

// atomicDensityGuess returns the superposition of atomic densities (SAD;
// J. Almlöf, K. Faegri, K. Korsell, J. Comput. Chem. 3, 385 (1982);
// J. H. Van Lenthe et al., J. Comput. Chem. 27, 926 (2006)): a spin-averaged
// Hartree–Fock calculation of every distinct neutral atom in its own basis
// functions, with the electrons of the highest, partly filled set of
// degenerate orbitals spread evenly over it so the atom stays spherical.
// The atomic densities are placed on the diagonal blocks of the molecular
// density matrix (total density, all electrons of the neutral atoms). It
// also returns, per basis function, the diagonal element of its free atom's
// final Fock matrix (the screened orbital energies of the Hückel-like
// guess).
func atomicDensityGuess(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, b *integral.Basis, opt Options) ([]float64, []float64, error) {
	n := b.NBF
	d := make([]float64, n*n)
	diag := make([]float64, n)
	cache := map[int][]float64{}  // by atomic number: atomic density in the atom's functions
	fcache := map[int][]float64{} // by atomic number: atomic Fock diagonal
	for ai, atom := range mol.Atoms {
		var own []basis.Shell
		var first = -1
		for si := range shells {
			if shells[si].Atom == ai {
				if first < 0 {
					first = b.Offsets[si]
				}
				own = append(own, shells[si])
			}
		}
		if len(own) == 0 {
			continue
		}
		da, ok := cache[atom.Z]
		fa := fcache[atom.Z]
		if !ok {
			var err error
			da, fa, err = atomDensity(ctx, atom, own, opt)
			if err != nil {
				return nil, nil, err
			}
			cache[atom.Z], fcache[atom.Z] = da, fa
		}
		na := len(fa)
		for i := 0; i < na; i++ {
			copy(d[(first+i)*n+first:(first+i)*n+first+na], da[i*na:(i+1)*na])
		}
		copy(diag[first:first+na], fa)
	}
	return d, diag, nil
}

// atomDensity runs the fractional-occupation atomic SCF for one atom and
// returns its density and the diagonal of its last Fock matrix.
func atomDensity(ctx context.Context, atom molecule.Atom, own []basis.Shell, opt Options) ([]float64, []float64, error) {
	sh := make([]basis.Shell, len(own))
	copy(sh, own)
	for i := range sh {
		sh[i].Atom = 0
	}
	b := integral.NewBasis(sh)
	n := b.NBF
	s := b.Overlap()
	h := b.Kinetic()
	v := b.Nuclear([]float64{float64(atom.Z)}, [][3]float64{atom.Position})
	for i := range h {
		h[i] += v[i]
	}
	x, m, _, err := orthogonalizer(s, n, opt.LinearDependence)
	if err != nil {
		return nil, nil, err
	}
	jk, err := newJKBuilder(ctx, b, opt.Threads, opt.MemoryBytes)
	if err != nil {
		return nil, nil, err
	}
	nel := float64(atom.Z)
	// Core-Hamiltonian start.
	vals, vecs, err := eigenSym(transform(x, n, m, h), m)
	if err != nil {
		return nil, nil, err
	}
	c := mul(x, n, m, vecs, m)
	dens := densityFromOrbitals(c, n, m, fractionalOccupations(vals, nel))
	fdiag := make([]float64, n)
	for it := 0; it < 60; it++ {
		J, K, err := jk.build(ctx, [][]float64{dens}, true)
		if err != nil {
			return nil, nil, err
		}
		f := make([]float64, n*n)
		for i := range f {
			f[i] = h[i] + J[i] - 0.5*K[0][i]
		}
		for i := range fdiag {
			fdiag[i] = f[i*n+i]
		}
		vals, vecs, err = eigenSym(transform(x, n, m, f), m)
		if err != nil {
			return nil, nil, err
		}
		c = mul(x, n, m, vecs, m)
		next := densityFromOrbitals(c, n, m, fractionalOccupations(vals, nel))
		var change float64
		for i := range next {
			dv := next[i] - dens[i]
			change = math.Max(change, math.Abs(dv))
			// Damping keeps 4s/3d-type occupation switches from oscillating.
			dens[i] += 0.7 * dv
		}
		if change < 1e-6 {
			break
		}
	}
	return dens, fdiag, nil
}

// fractionalOccupations fills orbitals (energies ascending) with nel
// electrons, two per orbital, sharing the electrons of the last, partly
// filled level evenly among orbitals degenerate with it (within 1e-4 Eh).
func fractionalOccupations(vals []float64, nel float64) []float64 {
	occ := make([]float64, len(vals))
	left := nel
	i := 0
	for i < len(vals) && left > 1e-12 {
		j := i + 1
		for j < len(vals) && vals[j]-vals[i] < 1e-4 {
			j++
		}
		cap := 2 * float64(j-i)
		put := math.Min(cap, left)
		for k := i; k < j; k++ {
			occ[k] = put / float64(j-i)
		}
		left -= put
		i = j
	}
	return occ
}

// GuessKind selects the starting density of an SCF.
type GuessKind int

const (
	// GuessAtomic is the superposition of atomic densities (the default).
	GuessAtomic GuessKind = iota
	// GuessCore occupies the eigenvectors of the core Hamiltonian (kinetic
	// energy and nuclear attraction only).
	GuessCore
	// GuessHuckel occupies the eigenvectors of an extended-Hückel-like
	// matrix built by the generalized Wolfsberg–Helmholz rule
	// H_μν = ½·K·S_μν·(H_μμ + H_νν), K = 1.75 (M. Wolfsberg, L. Helmholz,
	// J. Chem. Phys. 20, 837 (1952)), whose diagonal H_μμ is the diagonal
	// of the free atom's Fock matrix from the atomic calculations of
	// GuessAtomic: screened orbital energies, as extended Hückel theory
	// takes valence-state ionization energies (R. Hoffmann, J. Chem. Phys.
	// 39, 1397 (1963)). (The core Hamiltonian's diagonal, unscreened,
	// puts the 3d functions of a transition metal far too low.)
	GuessHuckel
)

// String names the guess as it is reported.
func (g GuessKind) String() string {
	switch g {
	case GuessCore:
		return "core Hamiltonian"
	case GuessHuckel:
		return "Hückel"
	default:
		return "atomic densities"
	}
}

// alternativeGuess is the guess the fallback ladder restarts from: the
// Hückel-like guess after the atomic one, the atomic one otherwise.
func alternativeGuess(g GuessKind) GuessKind {
	if g == GuessAtomic {
		return GuessHuckel
	}
	return GuessAtomic
}

// huckelK is the generalized Wolfsberg–Helmholz constant (common practice).
const huckelK = 1.75

// startingDensity returns the spin densities (one total density when
// restricted) of the requested guess.
func startingDensity(ctx context.Context, p *problem, kind GuessKind, opt Options) ([][]float64, error) {
	n, m := p.n, p.m
	switch kind {
	case GuessCore, GuessHuckel:
		hm := p.h
		if kind == GuessHuckel {
			_, diag, err := atomicDensityGuess(ctx, p.mol, p.shells, p.b, opt)
			if err != nil {
				return nil, err
			}
			hm = make([]float64, n*n)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					if i == j {
						hm[i*n+j] = diag[i]
					} else {
						hm[i*n+j] = 0.5 * huckelK * p.s[i*n+j] * (diag[i] + diag[j])
					}
				}
			}
		}
		_, vecs, err := eigenSym(transform(p.x, n, m, hm), m)
		if err != nil {
			return nil, err
		}
		c := mul(p.x, n, m, vecs, m)
		dens := make([][]float64, p.nspin)
		for sp := range dens {
			dens[sp] = densityFromOrbitals(c, n, m, p.occ[sp])
		}
		return dens, nil
	}
	dsad, _, err := atomicDensityGuess(ctx, p.mol, p.shells, p.b, opt)
	if err != nil {
		return nil, err
	}
	dens := adaptDensity([][]float64{dsad}, p.nspin)
	if p.unrestricted && p.na != p.nb {
		// Give the α and β guesses their electron counts.
		ne := float64(p.na + p.nb)
		for i := range dens[0] {
			dens[0][i] *= 2 * float64(p.na) / ne
			dens[1][i] *= 2 * float64(p.nb) / ne
		}
	}
	return dens, nil
}
