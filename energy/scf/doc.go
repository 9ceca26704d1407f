// Package scf solves the self-consistent-field equations of restricted and
// unrestricted Hartree–Fock (C. C. J. Roothaan, Rev. Mod. Phys. 23, 69
// (1951); J. A. Pople, R. K. Nesbet, J. Chem. Phys. 22, 571 (1954)) and, with
// an exchange–correlation potential, Kohn–Sham DFT in Gaussian basis sets.
//
// The pieces, each cited where it is implemented:
//   - canonical orthogonalization with removal of near-linear dependence
//     (Löwdin 1970);
//   - a superposition-of-atomic-densities starting guess (Almlöf et al. 1982);
//   - Pulay's DIIS on the orbital gradient FDS − SDF (Pulay 1980, 1982), with a
//     virtual-orbital level shift when DIIS stalls (Saunders & Hillier 1973);
//   - Coulomb and exchange matrices from electron-repulsion integrals with
//     8-fold permutational symmetry and Schwarz screening (Häser & Ahlrichs
//     1989), kept in memory when they fit the budget, else recomputed
//     (integral-direct). Work is cut into fixed chunks of shell quartets whose
//     partial sums are added in chunk order, so results do not depend on the
//     number of threads.
//
// Convergence requires both the energy change and the largest element of the
// orbital gradient below their thresholds (DefaultEnergyTolerance,
// DefaultGradientTolerance). A later calculation can start from an earlier
// density (State), as geometry relaxations and finite-difference Hessians do.
package scf
