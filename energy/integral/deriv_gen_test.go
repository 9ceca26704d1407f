package integral

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
)

// TestDerivGeneratedMatchesGeneric checks every generated derivative
// class (deriv_gen.go), its integrals and their contraction with a random
// two-particle density, against the batched generic code on random shells
// at short, medium and long range (the latter reaches the asymptotic
// branch of the Boys function) and with the ket far away (only that
// branch). Both are checked against libint2 in
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
		// Box −0.5: both pairs compact, the ket 40 bohr away, every
		// primitive quartet in the asymptotic branch
		// (t ≥ ρ_min·39² ≥ 0.075·39² > eriBoysTMax).
		for _, box := range []float64{0.5, 4, 30, -0.5} {
			var shells []basis.Shell
			for x, l := range []int{la, lb, lc, ld} {
				s := eriRandomShell(rng, l, false)
				for k := 0; k < 3; k++ {
					s.Center[k] *= math.Abs(box) / 3
				}
				if box < 0 && x >= 2 {
					s.Center[0] += 40
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

// TestDeriv3GeneratedMatchesGeneric checks every generated three-centre
// derivative class (ab|P) (deriv3GenTable) against the batched generic
// code on the canonical quartet (ab|P·1) with the unit shell: the
// derivatives with respect to A, B and C of every Cartesian integral
// (a unit density on one element at a time) and their contraction with a
// random density, on random shells at zero, short, medium and long range.
func TestDeriv3GeneratedMatchesGeneric(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 37))
	const n, np = derivGenMaxL + 1, deriv3GenMaxAuxL + 1
	count := 0
	worst := map[float64]float64{}
	for cls, f := range deriv3GenTable {
		if f == nil {
			continue
		}
		count++
		la, lb, lp := cls/(n*np), cls/np%n, cls%np
		for _, box := range []float64{0, 0.5, 4, 30} {
			var shells []basis.Shell
			for x, l := range []int{la, lb, lp} {
				s := eriRandomShell(rng, l, false)
				s.Atom = x
				for k := 0; k < 3; k++ {
					s.Center[k] *= box / 3
				}
				shells = append(shells, s)
			}
			tc := NewThreeCentre(NewBasis(shells[:2]), NewBasis(shells[2:]))
			d := tc.newDeriv()
			dOrb, dAux := tc.derivPairs(true)
			orb, aux := &dOrb[1], &dAux[0]
			if orb.la != la || orb.lb != lb || aux.la != lp {
				t.Fatalf("class (%d%d|%d): pair orientation", la, lb, lp)
			}
			name := fmt.Sprintf("three-centre (%d%d|%d) box %g", la, lb, lp, box)
			nA, nB, nP := basisNCart(la), basisNCart(lb), basisNCart(lp)
			size := nA * nB * nP
			// Reference: the canonical quartet, generic code.
			bra, ket := orb, aux
			swap := ket.key() > bra.key()
			if swap {
				bra, ket = ket, bra
			}
			dw := d.newWork()
			d.cartesianDerivGeneric(dw, bra, ket)
			ref := func(gam []float64) [9]float64 {
				cg := make([]float64, size)
				for i := range gam {
					j := i
					if !swap { // [P][a][b] → [a][b][P][1]
						j = i%(nA*nB)*nP + i/(nA*nB)
					}
					cg[j] = gam[i]
				}
				nc := [4]int{basisNCart(bra.la), basisNCart(bra.lb), basisNCart(ket.la), basisNCart(ket.lb)}
				byShell := map[int][3]float64{}
				var sum [3]float64
				for x, sh := range []int{bra.a, bra.b, ket.a} {
					pre, post := 1, 1
					for y := 0; y < 4; y++ {
						if y < x {
							pre *= nc[y]
						} else if y > x {
							post *= nc[y]
						}
					}
					l := [3]int{bra.la, bra.lb, ket.la}[x]
					g := derivContractCentre(l, pre, post, cg, dw.up[x], dw.down[x])
					byShell[sh] = g
					for k := range sum {
						sum[k] += g[k]
					}
				}
				// Fourth centre by translational invariance.
				byShell[ket.b] = [3]float64{-sum[0], -sum[1], -sum[2]}
				var out [9]float64
				for x, sh := range []int{orb.a, orb.b, aux.a} {
					g := byShell[sh]
					copy(out[3*x:], g[:])
				}
				return out
			}
			// Every element alone, then a random density; the deviations
			// are measured against the largest derivative of the class
			// (both codes lose a few digits to cancellation in the
			// recursions of the high classes, as against libint2), with a
			// floor far below any gradient contribution for the
			// long-range cancellation of the box-30 classes.
			var got, want [][9]float64
			gam := make([]float64, size)
			for i := range gam {
				clear(gam)
				gam[i] = 1
				got = append(got, f(orb, aux, gam, derivQuartetPrimThreshold))
				want = append(want, ref(gam))
			}
			for i := range gam {
				gam[i] = rng.Float64() - 0.5
			}
			got = append(got, f(orb, aux, gam, derivQuartetPrimThreshold))
			want = append(want, ref(gam))
			var scale float64
			for _, w := range want {
				for _, v := range w {
					scale = math.Max(scale, math.Abs(v))
				}
			}
			bad := 0
			for x := range want {
				for i := range want[x] {
					e := math.Abs(got[x][i] - want[x][i])
					if scale > 0 {
						worst[box] = math.Max(worst[box], e/scale)
					}
					if e > 5e-13*scale+1e-18 || math.IsNaN(got[x][i]) {
						if bad < 3 {
							t.Errorf("%s: check %d (%d of %d: random density), [%d] = %.16g, generic %.16g", name, x, x, size, i, got[x][i], want[x][i])
						}
						bad++
					}
				}
			}
		}
	}
	if count != (derivGenMaxL+1)*(derivGenMaxL+2)/2*np {
		t.Fatalf("%d generated three-centre classes", count)
	}
	t.Logf("largest difference relative to the largest derivative of the class, per box: %v", worst)
}
