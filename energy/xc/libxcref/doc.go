//go:build libxc

// Package libxcref evaluates libxc exchange–correlation functionals by
// their libxc ID on flat arrays, closed- and open-shell, and reads their
// screening thresholds, mixing coefficients and exact-exchange fractions.
// It exists only as the reference for the tests of poise/energy/xc and is
// built only with the "libxc" build tag (cgo, -lxc -lm; Debian libxc-dev
// 5.2). libxc: S. Lehtola, C. Steigemann, M. J. T. Oliveira,
// M. A. L. Marques, SoftwareX 7, 1 (2018).
package libxcref
