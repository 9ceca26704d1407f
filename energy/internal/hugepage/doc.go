// Package hugepage advises the kernel to back large float64 stores (the
// stored electron-repulsion integrals, the stored basis-function values of
// a DFT grid) with transparent huge pages, which makes their first touch
// several times cheaper than faulting them in 4 KiB at a time. It is advice
// only and changes nothing but speed.
package hugepage
