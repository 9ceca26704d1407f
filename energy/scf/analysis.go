package scf

import (
	"poise/energy/integral"
	"poise/energy/molecule"
)

// analyze fills the derived properties of a finished SCF: Mulliken charges,
// the dipole moment about the centre of mass and ⟨S²⟩.
func analyze(res *Result, mol *molecule.Molecule, b *integral.Basis, s []float64) {
	n := b.NBF
	dt := res.Density[0]
	if len(res.Density) == 2 {
		dt = make([]float64, n*n)
		for i := range dt {
			dt[i] = res.Density[0][i] + res.Density[1][i]
		}
	}
	// Mulliken populations (R. S. Mulliken, J. Chem. Phys. 23, 1833 (1955)).
	res.MullikenCharges = make([]float64, len(mol.Atoms))
	for i, a := range mol.Atoms {
		res.MullikenCharges[i] = float64(a.Z)
	}
	for sh := range b.Shells {
		atom := b.Shells[sh].Atom
		for f := b.Offsets[sh]; f < b.Offsets[sh]+b.Shells[sh].NumFunctions(); f++ {
			var ps float64
			for k := 0; k < n; k++ {
				ps += dt[f*n+k] * s[k*n+f]
			}
			res.MullikenCharges[atom] -= ps
		}
	}
	// Dipole moment about the centre of mass.
	var com [3]float64
	var mass float64
	for _, a := range mol.Atoms {
		for k := 0; k < 3; k++ {
			com[k] += a.Mass * a.Position[k]
		}
		mass += a.Mass
	}
	for k := 0; k < 3; k++ {
		com[k] /= mass
	}
	dip := b.Dipole(com)
	for k := 0; k < 3; k++ {
		var mu float64
		for _, a := range mol.Atoms {
			mu += float64(a.Z) * (a.Position[k] - com[k])
		}
		mu -= dot(dt, dip[k])
		res.DipoleAU[k] = mu
	}
	// ⟨S²⟩ = S_z(S_z+1) + N_β − Σ_ij |⟨φ_i^α|φ_j^β⟩|² (Szabo & Ostlund,
	// Modern Quantum Chemistry, eq. 3.320, adapted to overlapping AOs).
	sz := 0.5 * float64(res.NumAlpha-res.NumBeta)
	res.S2 = sz * (sz + 1)
	if res.Unrestricted {
		m := res.NMO
		ca, cb := res.Coefficients[0], res.Coefficients[1]
		var sum float64
		for i := 0; i < res.NumAlpha; i++ {
			for j := 0; j < res.NumBeta; j++ {
				var o float64
				for mu := 0; mu < n; mu++ {
					cai := ca[mu*m+i]
					if cai == 0 {
						continue
					}
					for nu := 0; nu < n; nu++ {
						o += cai * s[mu*n+nu] * cb[nu*m+j]
					}
				}
				sum += o * o
			}
		}
		res.S2 += float64(res.NumBeta) - sum
	}
}
