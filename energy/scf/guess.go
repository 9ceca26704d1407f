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
// density matrix (total density, all electrons of the neutral atoms).
func atomicDensityGuess(ctx context.Context, mol *molecule.Molecule, shells []basis.Shell, b *integral.Basis, opt Options) ([]float64, error) {
	n := b.NBF
	d := make([]float64, n*n)
	cache := map[int][]float64{} // by atomic number: atomic density in the atom's functions
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
		if !ok {
			var err error
			da, err = atomDensity(ctx, atom, own, opt)
			if err != nil {
				return nil, err
			}
			cache[atom.Z] = da
		}
		na := int(math.Round(math.Sqrt(float64(len(da)))))
		for i := 0; i < na; i++ {
			copy(d[(first+i)*n+first:(first+i)*n+first+na], da[i*na:(i+1)*na])
		}
	}
	return d, nil
}

// atomDensity runs the fractional-occupation atomic SCF for one atom.
func atomDensity(ctx context.Context, atom molecule.Atom, own []basis.Shell, opt Options) ([]float64, error) {
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
		return nil, err
	}
	jk, err := newJKBuilder(ctx, b, opt.Threads, opt.MemoryBytes)
	if err != nil {
		return nil, err
	}
	nel := float64(atom.Z)
	// Core-Hamiltonian start.
	vals, vecs, err := eigenSym(transform(x, n, m, h), m)
	if err != nil {
		return nil, err
	}
	c := mul(x, n, m, vecs, m)
	dens := densityFromOrbitals(c, n, m, fractionalOccupations(vals, nel))
	for it := 0; it < 60; it++ {
		J, K, err := jk.build(ctx, [][]float64{dens}, true)
		if err != nil {
			return nil, err
		}
		f := make([]float64, n*n)
		for i := range f {
			f[i] = h[i] + J[i] - 0.5*K[0][i]
		}
		vals, vecs, err = eigenSym(transform(x, n, m, f), m)
		if err != nil {
			return nil, err
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
	return dens, nil
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
