package gradient

import (
	"context"
	"math"
	"testing"

	"poise/energy/basis"
	"poise/energy/scf"
	"poise/energy/xc"
)

// TestFittedAnalyticVersusCentralDifferences compares the analytic
// gradient of density-fitted (RI-JK) energies with central differences of
// the same fitted energies, as TestAnalyticVersusCentralDifferences does
// for exact ones (same step and tolerances: 1e-6 Eh/bohr for Hartree–Fock,
// 1e-5 for DFT, whose analytic gradient leaves out the grid-weight
// derivatives). It also checks that the fitted gradient differs from the
// exact one, by less than the fitting error allows (1e-4 Eh/bohr, common
// practice for RI-JK gradients), so that the fit is really used.
func TestFittedAnalyticVersusCentralDifferences(t *testing.T) {
	cases := []struct {
		name   string
		atoms  []atomSpec
		mult   int
		method string
		basis  string
		tol    float64
		coords []int
		aux    string
	}{
		{"RHF water 6-31G*", waterDistorted, 1, "hf", "6-31g*", 1e-6, nil, "def2-universal-jkfit"},
		{"UHF OH radical 3-21G", hydroxyl, 2, "hf", "3-21g", 1e-6, nil, "def2-universal-jkfit"},
		{"RKS B3LYP water 3-21G", waterDistorted, 1, "b3lyp", "3-21g", 1e-5, []int{0, 4, 8}, "def2-universal-jkfit"},
		{"RKS PBE water 3-21G, Coulomb-only fit", waterDistorted, 1, "pbe", "3-21g", 1e-5, []int{2, 6}, "def2-universal-jfit"},
	}
	if testing.Short() {
		cases = cases[:1]
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			aux, err := basis.Load(c.aux)
			if err != nil {
				t.Fatal(err)
			}
			m := makeMol(t, c.atoms, 0, c.mult)
			set, err := basis.Load(c.basis)
			if err != nil {
				t.Fatal(err)
			}
			fn, err := xc.Lookup(c.method)
			if err != nil {
				t.Fatal(err)
			}
			s, err := NewSCFSurface(m, Config{Basis: set, Method: fn, Fit: aux, SCF: scf.Options{Threads: 2}})
			if err != nil {
				t.Fatal(err)
			}
			x := Coordinates(m)
			var p Point
			if err := s.Evaluate(context.Background(), x, Request{Gradient: true}, &p); err != nil {
				t.Fatal(err)
			}
			exact := surface(t, m, c.method, c.basis, basis.Default, 0, scf.Options{})
			var pe Point
			if err := exact.Evaluate(context.Background(), x, Request{Gradient: true}, &pe); err != nil {
				t.Fatal(err)
			}
			var diff float64
			for i := range x {
				diff = math.Max(diff, math.Abs(p.Gradient[i]-pe.Gradient[i]))
			}
			if diff == 0 || diff > 1e-4 {
				t.Errorf("fitted and exact gradients differ by %.2e Eh/bohr: want (0, 1e-4]", diff)
			}
			compareCentralDifferences(t, s, x, p.Gradient, c.coords, c.tol)
		})
	}
}
