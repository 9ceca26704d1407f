// Package gradient computes nuclear gradients of SCF energies and provides
// the potential-energy-surface interface that geometry relaxation and
// Hessians use.
//
// Analytic gradients (Analytic) cover restricted and unrestricted
// Hartree–Fock and Kohn–Sham DFT. For a variational SCF energy the
// derivative needs no orbital response (J. A. Pople, R. Krishnan,
// H. B. Schlegel, J. S. Binkley, Int. J. Quantum Chem. Symp. 13, 225
// (1979)):
//
//	dE/dR_A = Σ D ∂h/∂R_A + ∂E2/∂R_A − Σ W ∂S/∂R_A + ∂E_xc/∂R_A + ∂V_nn/∂R_A,
//
// D the total density, W = Σ_s Σ_i n_i ε_i C_i C_iᵀ the energy-weighted
// density, E2 the Coulomb and exact-exchange energy at fixed densities.
// The derivative integrals come from package integral; the
// exchange–correlation part (B. G. Johnson, P. M. W. Gill, J. A. Pople,
// J. Chem. Phys. 98, 5612 (1993)) from package dft, without the
// derivatives of the grid weights: the tests show the result within
// 1e-5 Eh/bohr of central differences of the energy on the default grid.
//
// Numeric computes central-difference gradients of any Surface, the
// fallback for methods without analytic gradients and the reference of
// the tests.
//
// Surface is the interface: coordinates in, energy, gradient and dipole
// out into caller-owned memory, cancellable through a context, counting
// evaluations. SCFSurface implements it with SCF calculations: its
// basis shells move with the atoms, its DFT grids keep one frame, and its
// warm-start state (the last density) is explicit data that can be saved
// and restored (WarmStart, SetWarmStart). Concurrent evaluations are safe;
// a caller running several at once splits its thread budget through
// Request.Threads and keeps the shared warm start with
// Request.KeepWarmStart.
package gradient
