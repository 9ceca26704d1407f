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
// function×point blocks, functions below 1e-11 (value and first
// derivatives) on every point of the batch are dropped, and densities and
// potential blocks are formed with matrix–matrix products (a register-tiled
// kernel, kernel.go). Batches are processed in fixed groups and their
// contributions added in batch order, so the result does not depend on the
// thread count.
//
// Performance choices:
//
//   - The function values (and first derivatives for a GGA) depend only on
//     the grid and basis of a Potential, so the first Build keeps them for
//     the later SCF iterations, batch by batch in order while they fit in
//     Potential.CacheBytes (DefaultCacheBytes, 512 MiB: about 70 % of the
//     0.7 GB that benzene/6-31G* on the default grid would need; water
//     needs 40 MB).
//     Batches beyond the budget are evaluated again on every Build.
//     Besides that cache, a Potential keeps from one Build to the next
//     per-thread scratch of a few function×point blocks (under 1 MB each
//     for 100 functions) and the potential blocks of one group of batches
//     (at most 64 MiB, groupBytes).
//   - The density matrix is factored once per Build as D = L Lᵀ by pivoted
//     Cholesky decomposition (rank = number of occupied orbitals for an SCF
//     density; N. J. Higham, Accuracy and Stability of Numerical Algorithms,
//     2nd ed., SIAM 2002, §10.3), so that U = φD costs 4·m·r instead of
//     2·m² operations per point for m functions and rank r; a matrix that
//     is not positive semidefinite, or a batch with 2r ≥ m, uses D itself.
//   - Primitive Gaussians whose term is below 1e-20 at a point are not
//     evaluated (no exponential).
package dft
