// Package kernel holds the dense floating-point kernels of the engine's
// hot paths: products of row-major matrices (A·Bᵀ with the contraction
// index contiguous, and A·B), column dot products, the exponential of
// non-positive arguments, the rows of the GGA potential's z matrix, and
// Cartesian Gaussian functions with their first (and second) derivatives
// from the powers of the coordinates and the radial parts.
// Each has a portable Go version and, on amd64 with AVX2 and FMA, a vector
// version (kernel_amd64.s); both sum every element in an order that
// depends only on the shapes, so results never depend on how callers
// split work among threads. Used by the Kohn–Sham grid code (energy/dft)
// and the density-fitted Fock build (energy/scf).
package kernel
