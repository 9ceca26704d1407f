//go:build !linux

package dft

// adviseHugePages does nothing outside Linux (see hugepages_linux.go).
func adviseHugePages(s []float64) {}
