//go:build !(libint2 || libxc)

package scf_test

// referenceRun is false in the plain test pass (see tagged_ref_test.go).
const referenceRun = false
