package integral

import (
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
)

// TestFarFieldBoundTwoGaussians checks the far-field bound on the
// interaction of two normalized s Gaussians, (aa|bb) = erf(√ρ·R)/R with
// ρ = 2α·2β/(2α+2β): the charge distributions a² and b² are unit Gaussian
// charges of exponents 2α and 2β (closed form of the Coulomb interaction
// of two Gaussian charges; textbook, e.g. Helgaker, Jørgensen & Olsen,
// "Molecular Electronic-Structure Theory", section 9.7, from memory). The
// bound must hold and, both distributions being single spherical
// Gaussians of unit charge, equal 1/R.
func TestFarFieldBoundTwoGaussians(t *testing.T) {
	const alpha, beta = 0.8, 0.3
	for _, r := range []float64{0.5, 2, 5, 12, 40} {
		shells := []basis.Shell{
			{L: 0, Center: [3]float64{0, 0, 0}, Exponents: []float64{alpha}, Coefficients: []float64{1}},
			{L: 0, Center: [3]float64{0, r * 0.6, r * 0.8}, Exponents: []float64{beta}, Coefficients: []float64{1}},
		}
		e := NewERI(NewBasis(shells))
		w := e.NewWorkspace()
		pc := e.PairCharges()
		aa, bb := &pc[0], &pc[2] // pairs (0,0) and (1,1)
		rho := 2 * alpha * 2 * beta / (2*alpha + 2*beta)
		exact := math.Erf(math.Sqrt(rho)*r) / r
		got := e.Quartet(w, 0, 0, 1, 1)[0]
		if math.Abs(got-exact) > 1e-13 {
			t.Fatalf("R = %g: (aa|bb) = %.15f, closed form %.15f", r, got, exact)
		}
		bound := FarFieldBound(aa, bb)
		if bound < exact {
			t.Errorf("R = %g: bound %.15g below the integral %.15g", r, bound, exact)
		}
		if math.Abs(bound*r-1) > 1e-9 {
			t.Errorf("R = %g: bound %.15g, want 1/R = %.15g", r, bound, 1/r)
		}
		if b2 := FarFieldBound(bb, aa); math.Abs(b2-bound) > 1e-14*bound { // summation order only
			t.Errorf("R = %g: bound not symmetric: %g, %g", r, bound, b2)
		}
	}
}

// TestFarFieldBoundHolds checks |(ij|kl)| ≤ FarFieldBound for every
// integral over random contracted shells up to f, Cartesian and spherical,
// spread over a box large enough for the bound to be finite and often
// tighter than the Schwarz bound (the integrals themselves are checked
// against libint2 in eri_libint2_test.go).
func TestFarFieldBoundHolds(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 4))
	for trial := 0; trial < 4; trial++ {
		pure := trial%2 == 1
		var shells []basis.Shell
		for _, l := range []int{0, 1, 2, 3, 0, 1, 2} {
			s := eriRandomShell(rng, l, pure && l >= 2)
			for k := range s.Center {
				s.Center[k] *= 4 // ±6 bohr
			}
			shells = append(shells, s)
		}
		e := NewERI(NewBasis(shells))
		w := e.NewWorkspace()
		pc := e.PairCharges()
		n := e.NumShells()
		tighter, finite := 0, 0
		for i := 0; i < n; i++ {
			for j := 0; j <= i; j++ {
				for k := 0; k < n; k++ {
					for l := 0; l <= k; l++ {
						bound := FarFieldBound(&pc[i*(i+1)/2+j], &pc[k*(k+1)/2+l])
						if math.IsInf(bound, 1) {
							continue
						}
						finite++
						if bound < e.Schwarz(i, j)*e.Schwarz(k, l) {
							tighter++
						}
						for _, v := range e.Quartet(w, i, j, k, l) {
							if math.Abs(v) > bound {
								t.Fatalf("trial %d (%d%d|%d%d), l = %d%d|%d%d: |%g| > bound %g", trial, i, j, k, l,
									shells[i].L, shells[j].L, shells[k].L, shells[l].L, v, bound)
							}
						}
					}
				}
			}
		}
		t.Logf("trial %d: %d pair-pair bounds finite, %d tighter than Schwarz", trial, finite, tighter)
		if finite == 0 || tighter == 0 {
			t.Errorf("trial %d: %d finite bounds, %d tighter than Schwarz: the test checks nothing", trial, finite, tighter)
		}
	}
}
