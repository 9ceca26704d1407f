package scf

import (
	"context"
	"math"
	"math/rand"
	"testing"

	"poise/energy/basis"
	"poise/energy/integral"
)

// TestJKAgainstTensor checks the screened, symmetry-reduced, chunked Coulomb
// and exchange build against the plain contraction of the full integral
// tensor J_ab = Σ (ab|cd) D_cd, K_ab = Σ (ac|bd) D_cd, in memory and direct.
func TestJKAgainstTensor(t *testing.T) {
	m := mol(t, waterAngstrom, false, 0, 0)
	set, err := basis.Load("6-31g*")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	b := integral.NewBasis(sh)
	n := b.NBF
	tensor := integral.NewERI(b).Tensor()
	rng := rand.New(rand.NewSource(1))
	d := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			v := rng.Float64() - 0.5
			d[i*n+j], d[j*n+i] = v, v
		}
	}
	wantJ := make([]float64, n*n)
	wantK := make([]float64, n*n)
	for a := 0; a < n; a++ {
		for bb := 0; bb < n; bb++ {
			for c := 0; c < n; c++ {
				for e := 0; e < n; e++ {
					wantJ[a*n+bb] += tensor[((a*n+bb)*n+c)*n+e] * d[c*n+e]
					wantK[a*n+bb] += tensor[((a*n+c)*n+bb)*n+e] * d[c*n+e]
				}
			}
		}
	}
	for _, mem := range []int64{1 << 30, 1} {
		jk, err := newJKBuilder(context.Background(), b, 2, mem)
		if err != nil {
			t.Fatal(err)
		}
		J, K, err := jk.build(context.Background(), [][]float64{d}, true)
		if err != nil {
			t.Fatal(err)
		}
		for i := range J {
			if math.Abs(J[i]-wantJ[i]) > 1e-11 || math.Abs(K[0][i]-wantK[i]) > 1e-11 {
				t.Fatalf("in-core %v: element %d: J %.12f want %.12f, K %.12f want %.12f",
					jk.InCore(), i, J[i], wantJ[i], K[0][i], wantK[i])
			}
		}
	}
}

// TestHydrogenExactExchange checks the exchange build on the hydrogen atom:
// for one electron the exact exchange energy −½ Tr[Dα K[Dα]] cancels the
// Coulomb self-repulsion, and for the exact density e^{−2r}/π both are
// 5/16 Eh (analytic: J = ½∫∫ρρ/r12 = 5/16 for the 1s density). A large
// basis approaches that limit from the basis-set side.
func TestHydrogenExactExchange(t *testing.T) {
	m := mol(t, []atomSpec{{"H", 0, 0, 0}}, false, 0, 0)
	set, err := basis.Load("cc-pvqz")
	if err != nil {
		t.Fatal(err)
	}
	sh, err := set.Shells(m, basis.Default)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), m, sh, Options{})
	if err != nil {
		t.Fatal(err)
	}
	jk, err := newJKBuilder(context.Background(), integral.NewBasis(sh), 2, 1<<30)
	if err != nil {
		t.Fatal(err)
	}
	J, K, err := jk.build(context.Background(), res.Density, true)
	if err != nil {
		t.Fatal(err)
	}
	ex := -0.5 * dot(res.Density[0], K[0])
	ej := 0.5 * dot(res.Density[0], J)
	t.Logf("hydrogen atom cc-pVQZ: exact exchange %.6f Eh, Coulomb %.6f Eh", ex, ej)
	if math.Abs(ex+ej) > 1e-12 {
		t.Errorf("exchange %.12f does not cancel the self-repulsion %.12f", ex, ej)
	}
	if math.Abs(ex - -0.3125) > 1e-4 {
		t.Errorf("exact exchange %.6f Eh, want −0.3125 (analytic) within the cc-pVQZ basis error 1e-4", ex)
	}
}
