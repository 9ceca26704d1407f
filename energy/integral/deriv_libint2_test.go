//go:build libint2

package integral

import (
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
	"poise/energy/integral/libintref"
)

// Derivative integrals against libint2 (through package libintref, which
// converts libint2's results to poise's conventions). Agreement is
// required to 1e-11·max(1, |reference|).

func derivLibintShell(s basis.Shell) libintref.Shell {
	return libintref.Shell{L: s.L, Pure: s.Pure, Center: s.Center, Exponents: s.Exponents, Coefficients: s.Coefficients}
}

// derivLibintCompare checks got against want and returns the largest
// scaled deviation |got − want|/max(1, |want|).
func derivLibintCompare(t *testing.T, what string, got, want []float64) float64 {
	t.Helper()
	var worst float64
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, reference %d", what, len(got), len(want))
	}
	bad := 0
	for x := range want {
		d := math.Abs(got[x] - want[x])
		worst = math.Max(worst, d/math.Max(1, math.Abs(want[x])))
		if d > 1e-11*math.Max(1, math.Abs(want[x])) || math.IsNaN(got[x]) {
			if bad < 3 {
				t.Errorf("%s: element %d: %.15g, libint2 %.15g (diff %.2g)", what, x, got[x], want[x], d)
			}
			bad++
		}
	}
	return worst
}

// TestLibintERIDerivatives compares ∂(ab|cd)/∂R for all four centres with
// libint2's first-derivative electron-repulsion integrals (libint2 here
// supports l ≤ 4 for derivatives) over random contracted shells,
// Cartesian and spherical, some sharing a centre.
func TestLibintERIDerivatives(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 43))
	var combos [][4]int
	for _, c := range [][4]int{{0, 0, 0, 0}, {1, 0, 0, 0}, {0, 1, 0, 1}, {1, 1, 1, 1}, {2, 0, 1, 0}, {2, 2, 2, 2}, {3, 1, 2, 0}, {0, 3, 3, 1}, {4, 0, 1, 2}, {1, 4, 0, 0}, {3, 3, 2, 2}, {4, 4, 1, 0}} {
		combos = append(combos, c)
	}
	for n := 0; n < 12; n++ {
		combos = append(combos, [4]int{rng.IntN(4), rng.IntN(4), rng.IntN(4), rng.IntN(4)})
	}
	var worst, largest float64
	for ci, ls := range combos {
		for _, pure := range []bool{false, true} {
			var shells []basis.Shell
			for x := 0; x < 4; x++ {
				shells = append(shells, eriRandomShell(rng, ls[x], pure && ls[x] >= 2))
			}
			if ci%3 == 1 {
				shells[1].Center = shells[0].Center // a shared centre
			}
			b := NewBasis(shells)
			e := NewERI(b)
			d := newERIDeriv(e)
			got := derivQuartetBlocks(e, d, d.newWork(), e.NewWorkspace(), 0, 1, 2, 3)
			ref, err := libintref.ERIDeriv1(derivLibintShell(shells[0]), derivLibintShell(shells[1]), derivLibintShell(shells[2]), derivLibintShell(shells[3]))
			if err != nil {
				t.Fatal(err)
			}
			for s := 0; s < 12; s++ {
				for _, v := range ref[s] {
					largest = math.Max(largest, math.Abs(v))
				}
				worst = math.Max(worst, derivLibintCompare(t, "ERI deriv l="+string(rune('0'+ls[0]))+string(rune('0'+ls[1]))+string(rune('0'+ls[2]))+string(rune('0'+ls[3]))+
					map[bool]string{false: " cart", true: " pure"}[pure]+" set "+string(rune('a'+s)), got[s], ref[s]))
			}
		}
	}
	t.Logf("largest |derivative integral| %.3g, largest scaled deviation from libint2 %.2g", largest, worst)
}

// TestLibintOneBodyDerivatives checks the one-electron derivative
// integrals. The libint2 build on the development machines has no
// one-electron derivatives (INCLUDE_ONEBODY 0); when OneBodyDeriv1 is
// available its sets are used directly. Otherwise the reference is the
// exact derivative identity of unit-normalized single-primitive Cartesian
// components, ∂φ̂_r/∂A_k = √(α(2r_k+1))·φ̂_{r+1_k} − r_k√(4α/(2r_k−1))·φ̂_{r−1_k}
// (from N_r² = (2α/π)^{3/2}(4α)^{|r|}/Π(2r_i−1)!!), evaluated with
// libint2's own overlap, kinetic and nuclear-attraction integrals over the
// shifted shells, and ∂/∂C = −(∂/∂A + ∂/∂B) for each charge.
func TestLibintOneBodyDerivatives(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	charges := []float64{8, 1, 2.5}
	centers := [][3]float64{{0.1, -0.2, 0.3}, {1.2, 0.4, -0.5}, {-0.7, 1.1, 0.9}}
	var worst float64
	for la := 0; la <= 4; la++ {
		for lb := 0; lb <= 4; lb++ {
			var shells []basis.Shell
			for _, l := range []int{la, lb} {
				s := basis.Shell{L: l, Exponents: []float64{0.1 * math.Pow(100, rng.Float64())}, Coefficients: []float64{1}}
				for k := 0; k < 3; k++ {
					s.Center[k] = 3 * (rng.Float64() - 0.5)
				}
				shells = append(shells, s)
			}
			b := NewBasis(shells)
			for _, op := range []string{"overlap", "kinetic", "nuclear"} {
				got := derivOneBodyBlocks(b, op, 0, 1, charges, centers)
				ref := derivOneBodyReference(t, op, shells[0], shells[1], charges, centers)
				for s := range ref {
					worst = math.Max(worst, derivLibintCompare(t, op+" l="+string(rune('0'+la))+string(rune('0'+lb))+" set "+string(rune('a'+s)), got[s], ref[s]))
				}
			}
		}
	}
	t.Logf("largest scaled deviation from the libint2-based reference %.2g", worst)
}

// derivOneBodyReference returns the libint2 reference sets (see
// TestLibintOneBodyDerivatives) for single-primitive Cartesian shells.
func derivOneBodyReference(t *testing.T, op string, a, b basis.Shell, charges []float64, centers [][3]float64) [][]float64 {
	ra, rb := derivLibintShell(a), derivLibintShell(b)
	libOp := map[string]libintref.OneBodyOperator{"overlap": libintref.OverlapOperator, "kinetic": libintref.KineticOperator, "nuclear": libintref.NuclearOperator}[op]
	if sets, err := libintref.OneBodyDeriv1(libOp, ra, rb, charges, centers); err == nil {
		return sets
	}
	integral := func(x, y libintref.Shell, q []float64, r [][3]float64) []float64 {
		switch op {
		case "overlap":
			return libintref.Overlap(x, y)
		case "kinetic":
			return libintref.Kinetic(x, y)
		}
		return libintref.Nuclear(x, y, q, r)
	}
	na, nb := basisNCart(a.L), basisNCart(b.L)
	// braDeriv returns ⟨∂_k x|O|y⟩ (nx×ny) for single-primitive x.
	braDeriv := func(x, y libintref.Shell, q []float64, r [][3]float64) [3][]float64 {
		alpha := x.Exponents[0]
		up := x
		up.L++
		upv := integral(up, y, q, r)
		var dnv []float64
		if x.L > 0 {
			dn := x
			dn.L--
			dnv = integral(dn, y, q, r)
		}
		ny := y.NumFunctions()
		var out [3][]float64
		for k := 0; k < 3; k++ {
			out[k] = make([]float64, x.NumFunctions()*ny)
			for ri, e := range cartesianExponents(x.L) {
				p := e
				p[k]++
				fu := math.Sqrt(alpha * float64(2*e[k]+1))
				for c := 0; c < ny; c++ {
					v := fu * upv[componentIndex(p[1], p[2])*ny+c]
					if e[k] > 0 {
						m := e
						m[k]--
						v -= float64(e[k]) * math.Sqrt(4*alpha/float64(2*e[k]-1)) * dnv[componentIndex(m[1], m[2])*ny+c]
					}
					out[k][ri*ny+c] = v
				}
			}
		}
		return out
	}
	terms := 1
	nsets := 6
	if op == "nuclear" {
		terms = len(charges)
		nsets += 3 * len(charges)
	}
	sets := make([][]float64, nsets)
	for s := range sets {
		sets[s] = make([]float64, na*nb)
	}
	for c := 0; c < terms; c++ {
		var q []float64
		var r [][3]float64
		if op == "nuclear" {
			q, r = charges[c:c+1], centers[c:c+1]
		}
		da := braDeriv(ra, rb, q, r)
		db := braDeriv(rb, ra, q, r) // nb×na
		for k := 0; k < 3; k++ {
			for i := 0; i < na; i++ {
				for j := 0; j < nb; j++ {
					x, y := da[k][i*nb+j], db[k][j*na+i]
					sets[k][i*nb+j] += x
					sets[3+k][i*nb+j] += y
					if op == "nuclear" {
						sets[6+3*c+k][i*nb+j] = -(x + y)
					}
				}
			}
		}
	}
	return sets
}

// TestLibintERIDerivativesWater compares every unique shell quartet of
// water/6-31G* (spherical d, tight core exponents) with libint2.
func TestLibintERIDerivativesWater(t *testing.T) {
	mol := derivLoadMolecule(t, "../../testdata/molecules/water.xyz", "")
	shells := derivShellsFor(t, mol, basis.Spherical)
	b := NewBasis(shells)
	e := NewERI(b)
	d := newERIDeriv(e)
	dw, w := d.newWork(), e.NewWorkspace()
	ref := make([]libintref.Shell, len(shells))
	for i, s := range shells {
		ref[i] = derivLibintShell(s)
	}
	var worst, largest float64
	n := len(shells)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			for k := 0; k <= i; k++ {
				lmax := k
				if k == i {
					lmax = j
				}
				for l := 0; l <= lmax; l++ {
					got := derivQuartetBlocks(e, d, dw, w, i, j, k, l)
					want, err := libintref.ERIDeriv1(ref[i], ref[j], ref[k], ref[l])
					if err != nil {
						t.Fatal(err)
					}
					for s := 0; s < 12; s++ {
						for _, v := range want[s] {
							largest = math.Max(largest, math.Abs(v))
						}
						worst = math.Max(worst, derivLibintCompare(t, "water quartet", got[s], want[s]))
					}
				}
			}
		}
	}
	t.Logf("largest |derivative integral| %.3g, largest scaled deviation from libint2 %.2g", largest, worst)
}
