//go:build libint2 || libxc

package scf_test

// referenceRun is true in the reference-library test pass, which repeats
// the package's tests: the slow hard set runs only in the plain pass.
const referenceRun = true
