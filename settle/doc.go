// Package settle takes a structure to a confirmed minimum of the energy and
// its ideal-gas thermochemistry in one call: a tight relaxation
// (package optimize), the harmonic analysis of a finite-difference Hessian
// (package freq), and, while imaginary modes larger than a noise threshold
// remain, a displacement along each of them (both directions, the lower
// energy kept) followed by a new relaxation, at most a few cycles; then the
// rigid-rotor/harmonic-oscillator thermochemistry of package thermo.
//
// Displacing along imaginary modes and relaxing again is the usual way out
// of a saddle point (common practice; see e.g. J. Baker, J. Comput. Chem. 7,
// 385 (1986) on following the Hessian's negative-curvature directions).
// The thermochemistry follows D. A. McQuarrie, Statistical Mechanics
// (Harper & Row 1976), as implemented in package thermo.
//
// Finished results are kept in a Store keyed by a SHA-256 hash of
// everything that changes the numbers (Key); a repeated Run with the same
// inputs returns the stored Result without any SCF.
package settle
