package xc

import (
	"math"
	"math/rand/v2"
	"testing"
)

// fusedPoints returns closed-shell and open-shell points that reach every
// branch of the fused evaluation: densities across and at the component
// thresholds (1e-15, 1e-14, 1e-12, zero), zero gradients, and spin
// polarizations 0, ±1 (one spin density exactly zero), and nearly ±1.
func fusedPoints() (rho, sigma, ra, rb, saa, sab, sbb []float64) {
	rng := rand.New(rand.NewPCG(3, 17))
	special := []float64{0, 5e-16, 1e-15, 2e-15, 3e-15, 1e-14, 2e-14, 1e-12, 2e-12}
	for i := 0; i < 4000; i++ {
		r := math.Pow(10, -17+20*rng.Float64())
		if i < len(special) {
			r = special[i]
		} else if i%7 == 0 {
			r = special[i%len(special)] * (1 + 1e-3*rng.Float64())
		}
		s := gradSq(r, 8*rng.Float64())
		if i%11 == 0 {
			s = 0
		}
		rho = append(rho, r)
		sigma = append(sigma, s)
		zeta := 2*rng.Float64() - 1
		switch i % 9 {
		case 0:
			zeta = 1
		case 1:
			zeta = -1
		case 2:
			zeta = 0
		case 3:
			zeta = 1 - 1e-15
		}
		a, b := r*(1+zeta)/2, r*(1-zeta)/2
		if zeta == 1 {
			b = 0
		}
		if zeta == -1 {
			a = 0
		}
		ga, gb := gradSq(a, 8*rng.Float64()), gradSq(b, 8*rng.Float64())
		ra, rb = append(ra, a), append(rb, b)
		saa, sbb = append(saa, ga), append(sbb, gb)
		sab = append(sab, (2*rng.Float64()-1)*math.Sqrt(ga*gb))
	}
	return
}

// TestFusedEqualsComponents: a functional evaluated in one fused pass,
// with the density powers shared between its components, gives exactly
// (bit for bit) the sum, in definition order, of its components evaluated
// one at a time. This checks the sharing and the per-component clamping,
// not the formulas (those are checked against libxc in libxc_test.go).
func TestFusedEqualsComponents(t *testing.T) {
	rho, sigma, ra, rb, saa, sab, sbb := fusedPoints()
	n := len(rho)
	alloc := func() (o [6][]float64) {
		for k := range o {
			o[k] = make([]float64, n)
		}
		return o
	}
	for _, name := range Names() {
		f, err := Lookup(name)
		if err != nil {
			t.Fatal(err)
		}
		got, part, want := alloc(), alloc(), alloc()
		f.EvalUnpolarized(n, rho, sigma, got[0], got[1], got[2])
		for _, tm := range f.terms {
			newFunctional("part", 0, tm).EvalUnpolarized(n, rho, sigma, part[0], part[1], part[2])
			for k := 0; k < 3; k++ {
				for i := range part[k] {
					want[k][i] += part[k][i]
				}
			}
		}
		compareExact(t, name+" unpolarized", got[:3], want[:3])

		got, want = alloc(), alloc()
		f.EvalPolarized(n, ra, rb, saa, sab, sbb, got[0], got[1], got[2], got[3], got[4], got[5])
		for _, tm := range f.terms {
			newFunctional("part", 0, tm).EvalPolarized(n, ra, rb, saa, sab, sbb,
				part[0], part[1], part[2], part[3], part[4], part[5])
			for k := range part {
				for i := range part[k] {
					want[k][i] += part[k][i]
				}
			}
		}
		compareExact(t, name+" polarized", got[:], want[:])
	}
}

func compareExact(t *testing.T, what string, got, want [][]float64) {
	t.Helper()
	bad := 0
	for k := range got {
		for i := range got[k] {
			if got[k][i] != want[k][i] && bad < 5 {
				t.Errorf("%s: output %d point %d: fused %v, sum of components %v", what, k, i, got[k][i], want[k][i])
				bad++
			}
		}
	}
}

// gradSq returns |∇ρ|² for density r and reduced gradient
// s = |∇ρ|/(2(3π²)^(1/3) ρ^(4/3)).
func gradSq(r, s float64) float64 {
	g := 2 * math.Cbrt(3*math.Pi*math.Pi) * math.Pow(r, 4.0/3.0) * s
	return g * g
}
