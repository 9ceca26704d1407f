//go:build !linux

package hugepage

// Advise does nothing outside Linux (see hugepage_linux.go).
func Advise(s []float64) {}
