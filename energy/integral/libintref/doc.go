//go:build libint2

// Package libintref computes reference integrals with libint2 (E. F. Valeev,
// Libint: a library for the evaluation of molecular integrals of
// operators over Gaussian functions, version 2.7.2, http://libint.valeyev.net/)
// through a small C++ shim. It exists only for poise's tests and
// benchmarks: it needs cgo, the libint2 and Eigen development headers and
// the build tag libint2 (`go test -tags libint2 ./energy/integral/...`), and
// no production code may import it.
//
// Every result is converted to poise's conventions inside this package, so
// callers compare values component by component without further work:
//
//   - Shells are given as poise states them: published contraction
//     coefficients of normalized primitives, positions in bohr. libint2
//     rescales the contraction so that the axial Cartesian component x^l
//     has unit norm; poise's integral package does the same.
//   - Cartesian shells: libint2's standard (CCA) order — lx from l down, then
//     ly from l−lx down — is poise's order. libint2 gives every component the
//     normalization of x^l, so x^lx y^ly z^lz is not unit-normalized; this
//     package multiplies each Cartesian index by
//     √((2l−1)!!/((2lx−1)!!(2ly−1)!!(2lz−1)!!)) so that every component is
//     unit-normalized, as in poise.
//   - Spherical shells: libint2's standard solid-harmonic order m = −l … +l
//     and its coefficients (H. B. Schlegel and M. J. Frisch, Int. J. Quantum
//     Chem. 54, 83 (1995), no Condon–Shortley phase: p = (y, z, x)) give
//     unit-normalized real solid harmonics, as in poise; no conversion.
//   - Blocks are row-major over the shells' functions in argument order:
//     ⟨a|O|b⟩[i·nb+j], (ab|cd)[((i·nb+j)·nc+k)·nd+l] in chemists' notation.
//   - Nuclear attraction is −Σ_C Z_C ⟨a|1/|r−C||b⟩ (attractive for positive
//     charges), dipole integrals are ⟨a|(r−O)_k|b⟩ without the electron's
//     charge, as in poise.
//   - Reference values are computed with libint2's primitive screening
//     switched off (precision 0).
//
// The libint2 build on the development machines has LIBINT_MAX_AM 5 (one-
// and two-electron integrals up to h functions) and first derivatives of
// electron-repulsion integrals up to l = 4; one-electron derivatives were not
// compiled in (INCLUDE_ONEBODY 0), so OneBodyDeriv1 reports an error there.
package libintref
