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
//     1989) together with a rigorous distance-dependent far-field bound
//     (integral.FarFieldBound, after the QQR idea of Maurer, Lambrecht, Flaig
//     & Ochsenfeld, J. Chem. Phys. 136, 144107 (2012)); the Coulomb matrix is
//     accumulated in a packed shell-pair layout so that the ket side of a
//     bra pair's quartets reads contiguous memory. Integrals are
//     kept in memory when they fit the budget; when they do not, those
//     that cost most to compute per integral (contracted core shells) are
//     kept as far as the budget allows and the rest are recomputed in
//     every build (semi-direct; integral-direct when the budget holds
//     almost nothing; semi-direct storage is common practice). Stored or
//     recomputed, an integral is the same number, so the results do not
//     depend on the budget. Work is cut into fixed chunks of shell quartets whose
//     partial sums are added in chunk order, so results do not depend on the
//     number of threads.
//
// Fallback ladder. Every calculation starts with DIIS; when the orbital
// gradient has not improved tenfold within a window of iterations (8 on the
// first rung, 12 on later ones: stalls and oscillations alike), the SCF
// moves one rung down, resets its extrapolation histories, and reports the
// switch through Options.Log and Result.Fallbacks (never silently):
//  1. DIIS (Pulay 1980, 1982);
//  2. DIIS restarted with a 0.5 Eh virtual-orbital level shift (Saunders &
//     Hillier 1973), which damps occupied–virtual mixing without moving
//     the converged solution;
//  3. ADIIS+DIIS: the augmented-Roothaan–Hall energy model of X. Hu and
//     W. Yang, J. Chem. Phys. 132, 054109 (2010), minimized exactly over
//     the simplex of the last 8 iterates, blended with DIIS by the rule of
//     K. Garza and G. E. Scuseria, J. Chem. Phys. 137, 054110 (2012) (ADIIS
//     above an orbital gradient of 0.1, DIIS below 1e-4, linear mixture
//     between); no level shift;
//  4. a restart from another guess (Hückel-like after the atomic one,
//     atomic otherwise) that climbs down rungs 1–3 once more (DIIS first:
//     a start that DIIS and the level shift converge, ADIIS alone may
//     not, as for UHF CN from the atomic densities); no second restart.
//
// The iteration budget is Options.MaxIterations (DefaultMaxIterations,
// 128) for all rungs together; the shortest path to the restart takes
// 8 + 12 + 12 = 32 stalled iterations, leaving at least 96 for the second
// climb.
// Damping alone and second-order steps are not used: the level shift
// plays damping's part and ADIIS supplies the energy-based step.
//
// Starting guesses (Options.StartGuess): superposition of atomic densities
// (default), core Hamiltonian, or a Hückel-like matrix by the generalized
// Wolfsberg–Helmholz rule (M. Wolfsberg, L. Helmholz, J. Chem. Phys. 20,
// 837 (1952)) whose diagonal is that of the free atoms' Fock matrices
// (screened orbital energies, in the spirit of R. Hoffmann, J. Chem. Phys.
// 39, 1397 (1963)). A warm start (Options.Guess, the density of a nearby
// geometry) is first purified in the new overlap metric (R. McWeeny, Rev.
// Mod. Phys. 32, 335 (1960)), which removes the first-order error of the
// moved basis functions (water B3LYP, 0.0025 bohr displacement: first
// energy 7e-7 Eh off instead of 7e-4). A cold Kohn–Sham start may iterate
// on a coarser grid (Options.XCStart) until the orbital gradient is below
// CoarseSwitchGradient and then converges on the full grid with a fresh
// DIIS, so the result is the full grid's.
//
// Wavefunction stability (Options.Stability, CheckStability): the lowest
// eigenvalue of the real orbital Hessian A+B — for a restricted solution
// its triplet (spin-flip) block, whose negative eigenvalue means a
// restricted → unrestricted instability (RHF→UHF, RKS→UKS); for an
// unrestricted solution the full real internal Hessian (R. Seeger,
// J. A. Pople, J. Chem. Phys. 66, 3045 (1977); R. Bauernschmitt,
// R. Ahlrichs, J. Chem. Phys. 104, 9047 (1996)). Hessian–vector products
// use the existing builders: Coulomb and exact exchange of the trial
// density analytically, the exchange–correlation response by central
// differences of the unrestricted potential; Davidson's method (E. R.
// Davidson, J. Comput. Phys. 17, 87 (1975)) finds the lowest root.
// Eigenvalues below StabilityThreshold (−1e-4 Eh) count as unstable. To
// follow an instability the occupied α (β) orbitals are rotated by +t (−t
// for the triplet kind) along the eigenvector, t = 0.5 (then −0.5 if that
// does not lead lower), an unrestricted SCF is converged from there and
// checked again, at most 3 times.
//
// Second-start search. The stability check sees only the instabilities of
// the solution it has: an open shell can converge to a stable solution
// with a different occupation that is not the lowest. CN (doublet) in UHF
// is the example: the atomic-density guess reaches the X²Σ⁺-like solution
// (…1π⁴5σ¹); a start near …1π³5σ² (a Hückel-like guess on the unscreened
// core-Hamiltonian diagonal gave one) ends, after following its
// instability, in a symmetry-broken ²Π-like solution that is stable but
// 0.016 Eh higher. A converged SCF occupies its
// orbitals by the aufbau rule in every iteration, so a "virtual below an
// occupied orbital" test cannot reveal such a solution; instead, in
// StabilityFollow mode and from a cold start (no Options.Guess), an open
// shell (Nα ≠ Nβ) is converged and followed a second time from the
// alternative guess (Hückel-like after the atomic one, atomic otherwise),
// and the lower stable solution is kept (a second start replaces the first
// only when more than 1e-8 Eh lower; when it converges to the first's
// energy within 1e-8 Eh its stability check is skipped, and when the
// ladder has already restarted from the alternative guess the search is). Both outcomes are reported through
// Options.Log and Result.Fallbacks. Closed shells (whose restricted →
// unrestricted instabilities the following handles), warm starts
// (relaxations, finite differences) and the Off/Check modes never pay for
// a second SCF; each of
// the two starts has its own iteration budget (Options.MaxIterations), and
// Result.Iterations counts those of the returned solution's own SCF.
//
// Convergence requires both the energy change and the largest element of the
// orbital gradient below their thresholds (DefaultEnergyTolerance,
// DefaultGradientTolerance). A later calculation can start from an earlier
// density (State), as geometry relaxations and finite-difference Hessians do.
package scf
