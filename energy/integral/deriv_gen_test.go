package integral

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
)

// TestDerivGeneratedMatchesGeneric checks every generated derivative
// class (deriv_gen.go), its integrals and their contraction with a random
// two-particle density, against the batched generic code on random shells
// at short, medium and long range (the latter reaches the asymptotic
// branch of the Boys function). Both are checked against libint2 in
// deriv_libint2_test.go; this test covers every generated class without
// the library.
func TestDerivGeneratedMatchesGeneric(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 29))
	const n = derivGenMaxL + 1
	count := 0
	for cls, f := range derivGenTable {
		if f == nil {
			continue
		}
		count++
		la, lb, lc, ld := cls/(n*n*n), cls/(n*n)%n, cls/n%n, cls%n
		for _, box := range []float64{0.5, 4, 30} {
			var shells []basis.Shell
			for _, l := range []int{la, lb, lc, ld} {
				s := eriRandomShell(rng, l, false)
				for k := 0; k < 3; k++ {
					s.Center[k] *= box / 3
				}
				shells = append(shells, s)
			}
			e := NewERI(NewBasis(shells))
			d := newERIDeriv(e)
			bra, ket := d.pair(0, 1), d.pair(2, 3)
			if bra.la != la || bra.lb != lb || ket.la != lc || ket.lb != ld || ket.key() > bra.key() {
				t.Fatalf("class (%d%d|%d%d) is not canonical", la, lb, lc, ld)
			}
			nc := [4]int{basisNCart(la), basisNCart(lb), basisNCart(lc), basisNCart(ld)}
			gam := make([]float64, nc[0]*nc[1]*nc[2]*nc[3])
			for i := range gam {
				gam[i] = rng.Float64() - 0.5
			}
			dw := d.newWork()
			got := f(dw, bra, ket, gam, derivQuartetPrimThreshold)
			ref := d.newWork()
			d.cartesianDerivGeneric(ref, bra, ket)
			var want [9]float64
			for x, g := range [3][3]float64{
				derivContractCentre(la, 1, nc[1]*nc[2]*nc[3], gam, ref.up[0], ref.down[0]),
				derivContractCentre(lb, nc[0], nc[2]*nc[3], gam, ref.up[1], ref.down[1]),
				derivContractCentre(lc, nc[0]*nc[1], nc[3], gam, ref.up[2], ref.down[2]),
			} {
				copy(want[3*x:], g[:])
			}
			eriCompare(t, fmt.Sprintf("generated (%d%d|%d%d) box %g contraction", la, lb, lc, ld, box), got[:], want[:])
			ls := [3]int{la, lb, lc}
			for x := 0; x < 3; x++ {
				size := 1
				for y, l := range []int{la, lb, lc, ld} {
					if y == x {
						l++
					}
					size *= basisNCart(l)
				}
				name := fmt.Sprintf("generated (%d%d|%d%d) box %g", la, lb, lc, ld, box)
				eriCompare(t, fmt.Sprintf("%s raised %c", name, 'A'+x), dw.up[x][:size], ref.up[x][:size])
				if ls[x] == 0 {
					continue
				}
				size = 1
				for y, l := range []int{la, lb, lc, ld} {
					if y == x {
						l--
					}
					size *= basisNCart(l)
				}
				eriCompare(t, fmt.Sprintf("%s lowered %c", name, 'A'+x), dw.down[x][:size], ref.down[x][:size])
			}
		}
	}
	if count == 0 {
		t.Fatal("no generated derivative classes")
	}
}
