//go:build libint2

package integral

import (
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/integral/libintref"
)

// Three- and two-centre Coulomb integrals and their derivatives against
// libint2 (four-centre Coulomb integrals with libint2's unit shell, through
// package libintref), for water in 6-31G* (orbital s, p and Cartesian d)
// and def2-universal-JKFIT (auxiliary s … g, spherical). Agreement is
// required to 1e-12·max(1, |reference|) for integrals, as the four-centre
// tests do, and 1e-11·max(1, |reference|) for derivatives (as
// deriv_libint2_test.go).

func threeLibintCompare(t *testing.T, what string, got, want []float64, tol float64) float64 {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, reference %d", what, len(got), len(want))
	}
	var worst float64
	bad := 0
	for x := range want {
		d := math.Abs(got[x] - want[x])
		worst = math.Max(worst, d/math.Max(1, math.Abs(want[x])))
		if d > tol*math.Max(1, math.Abs(want[x])) || math.IsNaN(got[x]) {
			if bad < 3 {
				t.Errorf("%s: element %d: %.15g, libint2 %.15g (diff %.2g)", what, x, got[x], want[x], d)
			}
			bad++
		}
	}
	return worst
}

func TestLibintThreeCentre(t *testing.T) {
	orb, aux := threeWaterBases(t)
	ob, ab := NewBasis(orb), NewBasis(aux)
	tc := NewThreeCentre(ob, ab)
	w := tc.NewWorkspace()
	seenL := map[int]bool{}
	var worst float64
	for a := range orb {
		for b := range orb {
			for p := range aux {
				seenL[aux[p].L] = true
				want := libintref.ThreeCentre(derivLibintShell(orb[a]), derivLibintShell(orb[b]), derivLibintShell(aux[p]))
				got := tc.Block(w, a, b, p)
				worst = math.Max(worst, threeLibintCompare(t, "(ab|P)", got, want, 1e-12))
			}
		}
	}
	for l := 0; l <= 4; l++ {
		if !seenL[l] {
			t.Errorf("no auxiliary shell with l = %d in the test", l)
		}
	}
	m := tc.TwoCentre(2)
	n := ab.NBF
	var worst2 float64
	for p := range aux {
		for q := range aux {
			want := libintref.TwoCentre(derivLibintShell(aux[p]), derivLibintShell(aux[q]))
			np, nq := aux[p].NumFunctions(), aux[q].NumFunctions()
			got := make([]float64, np*nq)
			for i := 0; i < np; i++ {
				for j := 0; j < nq; j++ {
					got[i*nq+j] = m[(ab.Offsets[p]+i)*n+ab.Offsets[q]+j]
				}
			}
			worst2 = math.Max(worst2, threeLibintCompare(t, "(P|Q)", got, want, 1e-12))
		}
	}
	t.Logf("largest scaled deviation from libint2: (ab|P) %.2g, (P|Q) %.2g", worst, worst2)
}

func TestLibintThreeCentreGradient(t *testing.T) {
	orb, aux := threeWaterBases(t)
	ob, ab := NewBasis(orb), NewBasis(aux)
	tc := NewThreeCentre(ob, ab)
	rng := rand.New(rand.NewPCG(11, 12))
	nbf, naux := ob.NBF, ab.NBF
	npair := nbf * (nbf + 1) / 2
	G := threePackedRandom(rng, naux, nbf)
	H := make([]float64, naux*naux)
	for i := 0; i < naux; i++ {
		for j := 0; j <= i; j++ {
			H[i*naux+j] = 2*rng.Float64() - 1
			H[j*naux+i] = H[i*naux+j]
		}
	}
	const natoms = 3
	ref3 := make([][3]float64, natoms)
	for a := range orb {
		for b := range orb {
			for p := range aux {
				d, err := libintref.ThreeCentreDeriv1(derivLibintShell(orb[a]), derivLibintShell(orb[b]), derivLibintShell(aux[p]))
				if err != nil {
					t.Fatal(err)
				}
				na, nb, np := orb[a].NumFunctions(), orb[b].NumFunctions(), aux[p].NumFunctions()
				atoms := [3]int{orb[a].Atom, orb[b].Atom, aux[p].Atom}
				for i := 0; i < na; i++ {
					mu := ob.Offsets[a] + i
					for j := 0; j < nb; j++ {
						nu := ob.Offsets[b] + j
						pk := mu*(mu+1)/2 + nu
						if nu > mu {
							pk = nu*(nu+1)/2 + mu
						}
						for k := 0; k < np; k++ {
							gv := G[(ab.Offsets[p]+k)*npair+pk]
							for s := 0; s < 3; s++ {
								for x := 0; x < 3; x++ {
									ref3[atoms[s]][x] += gv * d[3*s+x][(i*nb+j)*np+k]
								}
							}
						}
					}
				}
			}
		}
	}
	ref2 := make([][3]float64, natoms)
	for p := range aux {
		for q := range aux {
			d, err := libintref.TwoCentreDeriv1(derivLibintShell(aux[p]), derivLibintShell(aux[q]))
			if err != nil {
				t.Fatal(err)
			}
			np, nq := aux[p].NumFunctions(), aux[q].NumFunctions()
			atoms := [2]int{aux[p].Atom, aux[q].Atom}
			for i := 0; i < np; i++ {
				for j := 0; j < nq; j++ {
					hv := H[(ab.Offsets[p]+i)*naux+ab.Offsets[q]+j]
					for s := 0; s < 2; s++ {
						for x := 0; x < 3; x++ {
							ref2[atoms[s]][x] += hv * d[3*s+x][i*nq+j]
						}
					}
				}
			}
		}
	}
	for _, c := range []struct {
		name     string
		got, ref [][3]float64
	}{
		{"three-centre", tc.Gradient(G, natoms, 2), ref3},
		{"two-centre", tc.TwoCentreGradient(H, natoms, 2), ref2},
	} {
		var got, want []float64
		for a := 0; a < natoms; a++ {
			got = append(got, c.got[a][:]...)
			want = append(want, c.ref[a][:]...)
		}
		worst := threeLibintCompare(t, c.name+" gradient", got, want, 1e-11)
		t.Logf("%s gradient: largest scaled deviation from libint2 %.2g (gradient %v)", c.name, worst, want)
	}
}
