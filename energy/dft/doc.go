// Package dft builds the Kohn–Sham exchange–correlation energy and potential
// matrix on a molecular grid (W. Kohn, L. J. Sham, Phys. Rev. 140, A1133
// (1965)), for restricted and unrestricted densities, LDA and GGA
// functionals. It satisfies scf.XC.
//
// The GGA potential matrix follows the standard finite-basis form
// (J. A. Pople, P. M. W. Gill, B. G. Johnson, Chem. Phys. Lett. 199, 557
// (1992)):
//
//	V_μν = Σ_p w_p [ ∂e/∂ρ φ_μφ_ν + (2 ∂e/∂σ_σσ ∇ρ_σ + ∂e/∂σ_αβ ∇ρ_σ') · ∇(φ_μφ_ν) ]
//
// evaluated batch by batch: basis functions whose extent does not reach a
// batch's bounding sphere are skipped, the rest are evaluated into dense
// point×function blocks, and densities and potential blocks are formed with
// matrix–matrix products. Batches are processed in fixed groups and their
// contributions added in batch order, so the result does not depend on the
// thread count.
package dft
