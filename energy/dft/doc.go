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
// function×point blocks, functions below 1e-9 (value and first
// derivatives) on every point of the batch are dropped, and densities and
// potential blocks are formed with matrix–matrix products (register-tiled
// kernels, see below). Batches are processed in fixed groups and their
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
//     evaluated (no exponential), in the build and in the gradient.
//   - Shells whose functions are single scaled Cartesian components (s, p,
//     Cartesian d) are evaluated function row by function row over the
//     points; other shells point by point through their transform.
//   - The stored function values live in one allocation, evaluated there
//     in place; on Linux it is advised to use transparent huge pages
//     (madvise), which makes its first touch (0.5 GB for benzene/6-31G*)
//     about twice as cheap on a virtual machine.
//
// Kernels. A few loops carry nearly all the arithmetic, each in a portable
// Go version and, on amd64 processors with AVX2 and FMA, an assembly
// version vectorized four doubles wide and
// chosen at start-up from the processor's features (golang.org/x/sys/cpu),
// all in package energy/internal/kernel: DotProducts (C = A·Bᵀ, the potential blocks φᵀZ; lanes over the
// contraction index, 3×4 register tiles, each element reduced as
// (lane0+lane1)+(lane2+lane3)), MatMul (C = A·B, the density step
// U = D φ or L(Lᵀφ); lanes over the columns, 4×12 tiles, the sum over
// the contraction in order), ColumnDots (ρ and ∇ρ from U; lanes over the
// points), expNonPositive (e^x for x ≤ 0, Taylor polynomial of degree
// 13 after reduction by ln 2; within a few units in the last place of
// math.Exp), and the Cartesian basis functions from their radial parts:
// CartesianRows (the value row and three derivative rows of one
// component, function-major, for the potential) and CartesianDerivatives
// (values, first and second derivatives of a whole shell, point-major,
// for the gradient). Tails of every dimension use masked loads and stores, and in
// every kernel an element's value depends only on its own inputs, never
// on its position in a tile, so results stay independent of the thread
// count and of which batches are stored. The vector kernels round
// differently from the portable ones (fused multiply–adds, another
// summation order), at the 1e-16 relative level. Other processors and
// architectures use the portable kernels, and the build tag purego forces
// them everywhere (go test -tags purego).
package dft
