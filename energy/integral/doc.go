// Package integral evaluates integrals over contracted Gaussian basis
// functions: one-electron integrals (overlap, kinetic energy, nuclear
// attraction, dipole), electron-repulsion integrals and their derivatives,
// for the Hartree–Fock and Kohn–Sham engine of poise.
//
// # Conventions
//
// A Basis is built from basis.Shell values (positions in bohr, published
// contraction coefficients of normalized primitives). Results are in atomic
// units over the final basis functions, in the order of the shells and,
// inside a shell, in the order fixed by basis.Shell:
//
//   - Cartesian shells: lexicographic components, lx from l down to 0, then
//     ly from l−lx down to 0 (xx, xy, xz, yy, yz, zz for d); every component
//     is normalized to one.
//   - Spherical shells: unit-normalized real solid harmonics ordered
//     m = −l … +l, with the coefficients of H. B. Schlegel and M. J. Frisch,
//     Int. J. Quantum Chem. 54, 83 (1995), eq. (15): m > 0 are the cosine
//     (√2·Re) and m < 0 the sine (√2·Im) combinations, without the
//     Condon–Shortley phase, so p = (y, z, x) and d = (xy, yz, z²−(x²+y²)/2,
//     xz, √3/2·(x²−y²)) in unit-normalized Cartesians. This is libint2's
//     "standard" ordering and phase; integrals agree component by component.
//
// Internally every shell is contracted with coefficients that normalize its
// axial Cartesian component x^l (all Cartesian components share them); a
// per-shell matrix (shellData.trans) then maps blocks over these "axially
// normalized" Cartesian components to the final functions: a diagonal
// rescaling √((2l−1)!!/((2lx−1)!!(2ly−1)!!(2lz−1)!!)) for Cartesian shells,
// the solid-harmonic coefficients (sphericalTransform) for spherical ones.
//
// One-electron matrices are full symmetric nbf×nbf row-major slices. The
// nuclear attraction includes its sign, −Σ_C Z_C⟨μ|1/|r−C||ν⟩; dipole
// integrals are ⟨μ|(r−O)_k|ν⟩ without the electron's charge.
//
// # Methods
//
//   - Boys function F_m(t) = ∫₀¹ u^{2m} e^{−tu²} du (S. F. Boys, Proc. R. Soc.
//     London A 200, 542 (1950)): tabulated on a grid with Taylor
//     interpolation and downward recursion below t = 36, upward recursion
//     from the asymptotic F_0 above (T. Helgaker, P. Jørgensen, J. Olsen,
//     "Molecular Electronic-Structure Theory", Wiley 2000, section 9.8).
//     Orders up to BoysMaxOrder = 32, relative accuracy about 1e−15.
//   - One-electron integrals: Obara–Saika recurrences (S. Obara and
//     A. Saika, J. Chem. Phys. 84, 3963 (1986)); overlap, kinetic and dipole
//     integrals from one-dimensional overlaps, nuclear attraction from the
//     two-centre vertical recurrence over the Boys function (no horizontal
//     transfer, which loses accuracy for separated high-l shells). Any l up
//     to 10 (spherical) or beyond (Cartesian); computed serially, their cost
//     being negligible next to the electron repulsion.
//   - Distance-dependent bounds on electron-repulsion integrals
//     (PairCharges, FarFieldBound; chargebound.go): Newton's theorem applied
//     to spherical bounds of the primitive products, a rigorous form of the
//     far-field estimate of S. A. Maurer, D. S. Lambrecht, D. Flaig and
//     C. Ochsenfeld, J. Chem. Phys. 136, 144107 (2012).
//   - Electron-repulsion integrals and derivatives: see eri.go and deriv.go;
//     the derivative classes with l ≤ 2 per centre (total l ≤ 6) are
//     generated straight-line code (deriv_gen.go, go generate).
//   - Three- and two-centre Coulomb integrals for density fitting
//     (ThreeCentre; threecentre.go): (ab|P) and (P|Q) as four-centre
//     integrals with a unit s shell (exponent 0, coefficient 1) beside each
//     auxiliary shell, through the same Head-Gordon–Pople code, and their
//     nuclear derivatives through the derivative code (the unit shell's own
//     derivative is zero; generated classes for orbital l ≤ 2 and
//     auxiliary l ≤ 4 that differentiate the orbital centres only).
//     Orbital shells up to l = 5, auxiliary shells up to l = 5
//     (def2-universal-JKFIT needs g).
//
// Package-level tables (the Boys-function grid, the Cartesian recurrence
// index table) are read-only data computed once at initialization; the
// package has no mutable global state.
//
// The subpackage libintref (build tag libint2) wraps libint2 as the
// reference for tests and benchmarks.
package integral
