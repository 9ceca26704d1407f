// Package buffer lends large float64 slices from one calculation to the
// next: the stored basis-function values of a DFT grid and the
// three-centre integrals of a density fit take hundreds of MiB per
// geometry, and a relaxation or a finite-difference Hessian computes many
// geometries of the same size one after another. Memory taken afresh from
// the operating system must be faulted in and zeroed page by page (on the
// 2-core test machine this cost a displaced aspirin point about 1 s of
// its 26); a slice handed back and lent again is simply overwritten.
//
// A Pool belongs to whoever runs the calculations (a potential-energy
// surface), never to the package: there is no global state. The slices it
// lends have unspecified contents, so only code that writes every element
// before reading it may take them.
package buffer
