package fit

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"poise/energy/basis"
	"poise/energy/integral"
	"poise/energy/internal/kernel"
	"poise/energy/molecule"
	"poise/energy/units"
)

// testBases returns the orbital and auxiliary bases of a small molecule
// (a distorted water: no symmetry makes elements vanish).
func testBases(t testing.TB, orbName, auxName string) (*molecule.Molecule, *integral.Basis, *integral.Basis) {
	t.Helper()
	m := &molecule.Molecule{}
	for _, a := range []struct {
		z        int
		x, y, z0 float64 // ångström
	}{{8, 0, 0, 0.1173}, {1, 0.05, 0.75695, -0.4692}, {1, 0, -0.70, -0.50}} {
		m.Atoms = append(m.Atoms, molecule.Atom{Z: a.z, Symbol: molecule.Symbol(a.z), Mass: molecule.MostAbundantMass(a.z),
			Position: [3]float64{a.x * units.AngstromBohr, a.y * units.AngstromBohr, a.z0 * units.AngstromBohr}})
	}
	if err := m.SetSpin(0, 0); err != nil {
		t.Fatal(err)
	}
	shells := func(name string) *integral.Basis {
		set, err := basis.Load(name)
		if err != nil {
			t.Fatal(err)
		}
		sh, err := set.Shells(m, basis.Default)
		if err != nil {
			t.Fatal(err)
		}
		return integral.NewBasis(sh)
	}
	return m, shells(orbName), shells(auxName)
}

// randomDensity is a symmetric n×n matrix Σ_i λ_i v_i v_iᵀ of rank r with
// eigenvalues of both signs (like the trial densities of a stability
// analysis), or all positive.
func randomDensity(rng *rand.Rand, n, r int, signed bool) []float64 {
	d := make([]float64, n*n)
	for i := 0; i < r; i++ {
		v := make([]float64, n)
		for k := range v {
			v[k] = rng.Float64() - 0.5
		}
		l := 0.5 + rng.Float64()
		if signed && i%2 == 1 {
			l = -l
		}
		for a := 0; a < n; a++ {
			for b := 0; b < n; b++ {
				d[a*n+b] += l * v[a] * v[b]
			}
		}
	}
	return d
}

// TestAgainstDenseAlgebra checks the fitted Coulomb and exchange matrices
// against their definition evaluated with gonum's dense inverse of the
// metric and every three-centre integral (no screening, no Cholesky, no
// packed storage): J = Σ_PQ I_P [V⁻¹]_PQ tr(I_Q D), K_μν = Σ_PQ (I_P D I_Q)_μν [V⁻¹]_PQ.
func TestAgainstDenseAlgebra(t *testing.T) {
	ctx := context.Background()
	_, orb, aux := testBases(t, "6-31g*", "def2-universal-jkfit")
	n, naux := orb.NBF, aux.NBF
	tc := integral.NewThreeCentre(orb, aux)
	w := tc.NewWorkspace()
	full := make([]float64, naux*n*n) // I_P,μν, all μν
	for a := range orb.Shells {
		for b := range orb.Shells {
			for p := range aux.Shells {
				blk := tc.Block(w, a, b, p)
				na, nb, np := orb.Shells[a].NumFunctions(), orb.Shells[b].NumFunctions(), aux.Shells[p].NumFunctions()
				for ia := 0; ia < na; ia++ {
					for ib := 0; ib < nb; ib++ {
						for ip := 0; ip < np; ip++ {
							full[(aux.Offsets[p]+ip)*n*n+(orb.Offsets[a]+ia)*n+orb.Offsets[b]+ib] = blk[(ia*nb+ib)*np+ip]
						}
					}
				}
			}
		}
	}
	var vinv mat.Dense
	if err := vinv.Inverse(mat.NewDense(naux, naux, tc.TwoCentre(2))); err != nil {
		t.Fatal(err)
	}
	f, err := New(ctx, orb, aux, 2)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for _, signed := range []bool{false, true} {
		d := randomDensity(rng, n, 5, signed)
		// Dense reference.
		tr := make([]float64, naux) // tr(I_Q D)
		for q := 0; q < naux; q++ {
			for i := 0; i < n*n; i++ {
				tr[q] += full[q*n*n+i] * d[i]
			}
		}
		jref := make([]float64, n*n)
		kref := make([]float64, n*n)
		id := make([][]float64, naux) // I_P D
		for p := 0; p < naux; p++ {
			id[p] = make([]float64, n*n)
			ip := full[p*n*n : (p+1)*n*n]
			for a := 0; a < n; a++ {
				for c := 0; c < n; c++ {
					if x := ip[a*n+c]; x != 0 {
						for b := 0; b < n; b++ {
							id[p][a*n+b] += x * d[c*n+b]
						}
					}
				}
			}
		}
		for p := 0; p < naux; p++ {
			var cp float64
			for q := 0; q < naux; q++ {
				cp += vinv.At(p, q) * tr[q]
			}
			for i := range jref {
				jref[i] += cp * full[p*n*n+i]
			}
		}
		for q := 0; q < naux; q++ {
			// Σ_P [V⁻¹]_PQ I_P D, then times I_Q.
			m := make([]float64, n*n)
			for p := 0; p < naux; p++ {
				v := vinv.At(p, q)
				for i, x := range id[p] {
					m[i] += v * x
				}
			}
			iq := full[q*n*n : (q+1)*n*n]
			for a := 0; a < n; a++ {
				for c := 0; c < n; c++ {
					x := m[a*n+c]
					for b := 0; b < n; b++ {
						kref[a*n+b] += x * iq[c*n+b]
					}
				}
			}
		}
		j, err := f.Coulomb(ctx, d)
		if err != nil {
			t.Fatal(err)
		}
		k, err := f.Exchange(ctx, d)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			name      string
			got, want []float64
		}{{"J", j, jref}, {"K", k, kref}} {
			var worst, big float64
			for i := range c.want {
				worst = math.Max(worst, math.Abs(c.got[i]-c.want[i]))
				big = math.Max(big, math.Abs(c.want[i]))
			}
			// The screening of (ab|P) at 1e-12 and rounding in the
			// inverse of a metric with condition number ~1e6.
			if worst > 1e-9*math.Max(1, big) {
				t.Errorf("signed=%v %s: largest deviation %.2e (largest element %.2e)", signed, c.name, worst, big)
			}
			if big < 1e-3 {
				t.Errorf("signed=%v %s: reference vanishes (%.1e), the test is empty", signed, c.name, big)
			}
		}
	}
}

// TestThreadIndependence checks that the fit, its Fock matrices and its
// gradient are bit-identical with 1 and 2 threads (fixed chunks,
// fixed-order reductions).
func TestThreadIndependence(t *testing.T) {
	ctx := context.Background()
	m, orb, aux := testBases(t, "3-21g", "def2-universal-jkfit")
	rng := rand.New(rand.NewPCG(5, 6))
	d := randomDensity(rng, orb.NBF, 5, false)
	type out struct{ j, k []float64 }
	var res [2]out
	var grads [2][][3]float64
	for i, threads := range []int{1, 2} {
		f, err := New(ctx, orb, aux, threads)
		if err != nil {
			t.Fatal(err)
		}
		if res[i].j, err = f.Coulomb(ctx, d); err != nil {
			t.Fatal(err)
		}
		if res[i].k, err = f.Exchange(ctx, d); err != nil {
			t.Fatal(err)
		}
		if grads[i], err = f.Gradient(ctx, [][]float64{d}, 0.2, len(m.Atoms)); err != nil {
			t.Fatal(err)
		}
	}
	for i := range res[0].j {
		if res[0].j[i] != res[1].j[i] || res[0].k[i] != res[1].k[i] {
			t.Fatalf("element %d differs between 1 and 2 threads", i)
		}
	}
	for a := range grads[0] {
		if grads[0][a] != grads[1][a] {
			t.Fatalf("gradient of atom %d differs between 1 and 2 threads: %v, %v", a, grads[0][a], grads[1][a])
		}
	}
}

// TestGradientReleasing: the gradient formed in B's memory equals the
// ordinary one bit for bit (the same operations in the same order, for a
// restricted and an unrestricted density pair), and the released fit
// refuses further use with an error.
func TestGradientReleasing(t *testing.T) {
	ctx := context.Background()
	m, orb, aux := testBases(t, "3-21g", "def2-universal-jkfit")
	rng := rand.New(rand.NewPCG(7, 8))
	da := randomDensity(rng, orb.NBF, 5, false)
	db := randomDensity(rng, orb.NBF, 4, false)
	for _, dens := range [][][]float64{{da}, {da, db}} {
		f, err := New(ctx, orb, aux, 2)
		if err != nil {
			t.Fatal(err)
		}
		want, err := f.Gradient(ctx, dens, 0.2, len(m.Atoms))
		if err != nil {
			t.Fatal(err)
		}
		got, err := f.GradientReleasing(ctx, dens, 0.2, len(m.Atoms))
		if err != nil {
			t.Fatal(err)
		}
		for a := range want {
			if got[a] != want[a] {
				t.Fatalf("%d densities: atom %d: %v releasing, %v not", len(dens), a, got[a], want[a])
			}
		}
		if _, err := f.Coulomb(ctx, da); err == nil {
			t.Error("Coulomb of a released fit: no error")
		}
		if _, err := f.Exchange(ctx, da); err == nil {
			t.Error("Exchange of a released fit: no error")
		}
		if _, err := f.Gradient(ctx, dens, 0.2, len(m.Atoms)); err == nil {
			t.Error("gradient of a released fit: no error")
		}
	}
}

// TestNonSymmetricDensity: exchange is only defined here for symmetric
// densities; anything else is an error, not a wrong answer.
func TestNonSymmetricDensity(t *testing.T) {
	_, orb, aux := testBases(t, "sto-3g", "def2-universal-jkfit")
	f, err := New(context.Background(), orb, aux, 1)
	if err != nil {
		t.Fatal(err)
	}
	d := make([]float64, orb.NBF*orb.NBF)
	d[1] = 1
	if _, err := f.Exchange(context.Background(), d); err == nil {
		t.Error("exchange of a non-symmetric density: no error")
	}
}

// TestLowerProducts checks the blocked lower-triangle product against the
// full product kernel, itself checked against gonum's matrix product in
// energy/internal/kernel (its elements depend only on their own inputs, so
// the two must agree bit for bit), for sizes around the row block.
func TestLowerProducts(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for _, n := range []int{1, triBlock - 1, triBlock, triBlock + 1, 2*triBlock + 5} {
		const k = 13
		a, b := make([]float64, n*k), make([]float64, n*k)
		for i := range a {
			a[i], b[i] = rng.Float64()-0.5, rng.Float64()-0.5
		}
		full, low := make([]float64, n*n), make([]float64, n*n)
		kernel.DotProducts(a, n, b, n, k, full, n)
		lowerProducts(a, b, n, k, low)
		for i := 0; i < n; i++ {
			for j := 0; j <= i; j++ {
				if low[i*n+j] != full[i*n+j] {
					t.Fatalf("n=%d: element (%d,%d) = %v, full product %v", n, i, j, low[i*n+j], full[i*n+j])
				}
			}
		}
	}
}
