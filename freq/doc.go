// Package freq computes Hessians by finite differences of analytic
// gradients and the harmonic analysis that follows: normal modes,
// vibrational frequencies, reduced masses, force constants, IR
// intensities, zero-point energies, isotopologues and empirical scale
// factors. It sees the electronic structure only through the surface
// interface of package gradient (coordinates in; energy, gradient and
// dipole out), so it is tested on analytic model surfaces as well as SCF
// ones.
//
// # Hessian
//
// ComputeHessian displaces every Cartesian coordinate by ±h (default
// DefaultStepBohr = 0.0025 bohr) and differentiates the analytic gradients,
//
//	H_ij = (g_j(x + h e_i) − g_j(x − h e_i)) / 2h,
//
// or with the optional four-point formula
// (−g(+2h) + 8g(+h) − 8g(−h) + g(−2h))/12h (error O(h⁴); B. Fornberg,
// Math. Comp. 51, 699 (1988)); the matrix is then symmetrized,
// H ← (H + Hᵀ)/2, and its asymmetry reported as a noise measure. The
// dipole derivatives ∂μ/∂x_i (atomic polar tensors) come from the same
// points. The displaced points of one coordinate form a group; the 3N
// groups are independent: k run at once, sharing the thread budget
// (Threads/k threads each), warm-started from the reference density
// (Request.KeepWarmStart). With HessianOptions.Extrapolate the points of
// a group after the first start from an extrapolated state instead: the
// −h point from 2S₀ − S(+h) (S₀ the reference's state, S(+h) the +h
// point's; gradient.Extrapolation), the linear extrapolation through the
// two, whose error is of order h² rather than h; an SCF then needs about
// 40 % fewer iterations there.
// Every start depends only on its own group, so the result does not
// depend on the order of the groups or the thread count. The surface
// should converge its SCF to SCFGradientTolerance: the differences
// amplify gradient noise by 1/2h. With a work directory each finished
// point is saved as a small JSON file (temporary file and rename), and an
// interrupted run resumes with what is saved (with Extrapolate, also the
// state of a saved point whose later partner is still to compute).
//
// # Symmetry
//
// With HessianOptions.SymmetryKinds the Hessian evaluates only the
// displaced points that are not images of others under the molecule's
// point group. The operations are found directly, without naming the
// group: two reference atoms off the centroid and not collinear with it,
// mapped onto every pair of atoms of the same kinds at the same distances,
// fix a candidate orthogonal matrix (proper or improper), which is kept if
// it maps every atom onto an atom of its kind within the tolerance
// (DefaultSymmetryToleranceBohr); the set must close under products. The
// geometry is then averaged over the group, x̄_i = (1/|G|) Σ_g R_gᵀ
// x_{π_g(i)}, and the matrices rebuilt, until it is symmetric to rounding.
// For every set of equivalent atoms one representative a is displaced;
// for b = π_g(a) the invariance E(gX) = E(X) gives
//
//	H_{π(i) b} = R H_{i a} Rᵀ,    ∂μ/∂x_b = R (∂μ/∂x_a) Rᵀ
//
// (3×3 blocks), so the columns of b are rotated central differences of a
// and carry the same kind of error. A displacement of a may itself be
// the image of another one of a under an operation that leaves a in place
// (−x from +x when a lies on the mirror plane x = 0, g_π(i)(−h e_x) =
// R g_i(+h e_x)); that mixes two points in one difference, so it is used
// only when the surface is exactly invariant under the operation
// (AxisOperationsExact: no DFT grid, or a grid oriented along the
// coordinate axes, whose Lebedev–Laikov rules are invariant under the
// octahedral group). Linear molecules use no symmetry.
//
// With HessianOptions.TranslationalInvariance one atom that every
// operation leaves in place is not displaced: E(x + t) = E(x) for a rigid
// translation t gives Σ_B H_{iB} = 0, so its columns are minus the sum of
// all others' (the dipole about the centre of mass likewise). Benzene
// (D6h) needs 8 displaced points instead of 72, water (C2v) 5 instead of
// 18, a molecule without symmetry 6N − 6. With
// HessianOptions.RotationalInvariance too, a molecule without symmetry
// needs 6N − 12: the columns of three more coordinates, of atoms far from
// the translation atom d, follow from the rotation of the gradient with
// the molecule, Σ_c (e_k × (r_c − r_d))·H_c = e_k × g (and of the dipole,
// e_k × μ), solved with the reference gradient g and dipole μ.
//
// # Harmonic analysis
//
// Analyze follows E. B. Wilson, J. C. Decius, P. C. Cross, Molecular
// Vibrations (McGraw-Hill 1955): the Hessian is mass-weighted
// (H̃ = M^{-1/2} H M^{-1/2}; most abundant isotopes by default), the
// translations and rotations about the centre of mass are projected out
// (W. H. Miller, N. C. Handy, J. E. Adams, J. Chem. Phys. 72, 99 (1980);
// one rotation fewer for a linear molecule) by diagonalizing H̃ within an
// orthonormal basis of their complement, which yields exactly 3N−6 (3N−5)
// vibrations. For an eigenvalue λ and normalized eigenvector q:
//
//	ν̃ = √λ / (2πc)                       (negative for λ < 0: imaginary)
//	μ = 1 / Σ_i q_i²/m_i                  reduced mass (u)
//	k = λμ                                force constant (mdyn/Å)
//	A = N_A π/(3c²) |∂μ/∂Q|² /(4πε0)      IR intensity (km/mol), ∂μ/∂Q = Σ_i (∂μ/∂x_i) q_i/√m_i
//	ZPE = ½ Σ hcν̃                        over the real modes
//
// (the intensity of the fundamental in the double-harmonic approximation;
// Wilson, Decius & Cross ch. 7). The translations and rotations are
// projected before diagonalizing; RigidBodyCm1 reports the roots of the
// unprojected Hessian nearest zero, a check of the numerical quality. Each
// mode is described by the internal coordinates it moves most (bonds from
// covalent radii, bends, linear bends, torsions; angle changes weighted by
// their arms so that they compare with stretches), e.g.
// "O–H stretch, in phase".
//
// Isotopologues reuse the Hessian and the dipole derivatives with other
// masses: the Born–Oppenheimer surface does not depend on the nuclear
// masses. The Teller–Redlich product rule checks this in the tests.
//
// # Scale factors
//
// LookupScale holds published factors per level of theory, separate for
// frequencies, zero-point energies, and the thermal enthalpy and entropy
// (A. P. Scott, L. Radom, J. Phys. Chem. 100, 16502 (1996)); the source
// stands beside each entry.
//
// # Files
//
// File is the JSON document of an analysis (the contract package thermo
// reads, plus the Hessian, dipole derivatives, masses and level of theory
// so that isotopologues and thermochemistry are redone from the file
// alone). Every file is written atomically (WriteFileAtomic).
package freq
