package integral

import (
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
)

// threeBoysF0 is F₀(t) = ½√(π/t)·erf(√t) (closed form, e.g. Helgaker,
// Jørgensen & Olsen, "Molecular Electronic-Structure Theory", eq. 9.8.9,
// from memory), evaluated with math.Erf, independent of boys.go.
func threeBoysF0(t float64) float64 {
	if t < 1e-12 {
		return 1 - t/3
	}
	return 0.5 * math.Sqrt(math.Pi/t) * math.Erf(math.Sqrt(t))
}

// TestTwoCentreClosedForm checks (a|b) and (ab|c) for single s primitives
// against the closed forms for unnormalized s Gaussians (Helgaker,
// Jørgensen & Olsen, ch. 9, from memory; it is the (ss|ss) formula of
// Boys 1950 with a zero exponent on one function of each pair):
//
//	(a|b)  = 2π^{5/2}/(αβ√(α+β)) F₀(αβ/(α+β)·|AB|²)
//	(ab|c) = 2π^{5/2}/(pγ√(p+γ)) e^{−αβ/p·|AB|²} F₀(pγ/(p+γ)·|PC|²),
//	         p = α+β, P = (αA+βB)/p,
//
// times the normalization (2α/π)^{3/4} of each function.
func TestTwoCentreClosedForm(t *testing.T) {
	cases := []struct {
		name       string
		al, be, ga float64
		A, B, C    [3]float64
	}{
		{"apart", 0.8, 1.7, 0.35, [3]float64{0, 0, 0}, [3]float64{0.3, -0.4, 1.2}, [3]float64{-1.1, 0.5, 2.0}},
		{"same centre", 2.5, 0.4, 9.0, [3]float64{0.1, 0.2, 0.3}, [3]float64{0.1, 0.2, 0.3}, [3]float64{0.1, 0.2, 0.3}},
		{"far", 0.2, 0.1, 0.05, [3]float64{0, 0, 0}, [3]float64{0, 0, 7}, [3]float64{12, 0, 0}},
		{"tight", 40, 25, 60, [3]float64{0, 0, 0}, [3]float64{0.2, 0, 0}, [3]float64{0, 0.3, 0}},
	}
	norm := func(a float64) float64 { return math.Pow(2*a/math.Pi, 0.75) }
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			sa := basis.Shell{L: 0, Center: c.A, Exponents: []float64{c.al}, Coefficients: []float64{1}, Atom: 0}
			sb := basis.Shell{L: 0, Center: c.B, Exponents: []float64{c.be}, Coefficients: []float64{1}, Atom: 1}
			sc := basis.Shell{L: 0, Center: c.C, Exponents: []float64{c.ga}, Coefficients: []float64{1}, Atom: 2}
			orb := NewBasis([]basis.Shell{sa, sb})
			aux := NewBasis([]basis.Shell{sa, sb, sc})
			tc := NewThreeCentre(orb, aux)
			r2 := func(x, y [3]float64) float64 {
				var s float64
				for k := range x {
					s += (x[k] - y[k]) * (x[k] - y[k])
				}
				return s
			}
			// Two-centre (a|b), (a|c), (b|b).
			m := tc.TwoCentre(2)
			two := func(a, b float64, X, Y [3]float64) float64 {
				return norm(a) * norm(b) * 2 * math.Pow(math.Pi, 2.5) / (a * b * math.Sqrt(a+b)) * threeBoysF0(a*b/(a+b)*r2(X, Y))
			}
			for _, x := range []struct {
				i, j int
				a, b float64
				X, Y [3]float64
			}{{0, 1, c.al, c.be, c.A, c.B}, {0, 2, c.al, c.ga, c.A, c.C}, {1, 1, c.be, c.be, c.B, c.B}} {
				want := two(x.a, x.b, x.X, x.Y)
				if got := m[x.i*3+x.j]; math.Abs(got-want) > 1e-13*math.Max(1, math.Abs(want)) {
					t.Errorf("(%d|%d) = %.16g, closed form %.16g", x.i, x.j, got, want)
				}
				if m[x.i*3+x.j] != m[x.j*3+x.i] {
					t.Errorf("metric not symmetric at (%d,%d)", x.i, x.j)
				}
			}
			// Three-centre (ab|c).
			p := c.al + c.be
			var P [3]float64
			for k := range P {
				P[k] = (c.al*c.A[k] + c.be*c.B[k]) / p
			}
			want := norm(c.al) * norm(c.be) * norm(c.ga) * 2 * math.Pow(math.Pi, 2.5) / (p * c.ga * math.Sqrt(p+c.ga)) *
				math.Exp(-c.al*c.be/p*r2(c.A, c.B)) * threeBoysF0(p*c.ga/(p+c.ga)*r2(P, c.C))
			w := tc.NewWorkspace()
			for _, ab := range [][2]int{{0, 1}, {1, 0}} {
				if got := tc.Block(w, ab[0], ab[1], 2)[0]; math.Abs(got-want) > 1e-13*math.Max(1, math.Abs(want)) {
					t.Errorf("(%d%d|c) = %.16g, closed form %.16g", ab[0], ab[1], got, want)
				}
			}
		})
	}
}

// threeTestSystem returns orbital and auxiliary shells with random
// exponents on three atoms: orbital s, p, Cartesian d and pure d; auxiliary
// s, p, pure d, f and g, so every centre derivative and both orientations
// of the canonical quartet occur.
func threeTestSystem(seed uint64) (orb, aux []basis.Shell) {
	rng := rand.New(rand.NewPCG(seed, 7))
	centres := [][3]float64{{0, 0, 0}, {0.3, -0.2, 1.9}, {1.6, 0.5, -0.4}}
	mk := func(l int, pure bool, atom int) basis.Shell {
		s := eriRandomShell(rng, l, pure)
		s.Center, s.Atom = centres[atom], atom
		return s
	}
	orb = []basis.Shell{mk(0, false, 0), mk(1, false, 0), mk(2, false, 1), mk(0, false, 2), mk(2, true, 2), mk(1, false, 1)}
	aux = []basis.Shell{mk(0, false, 1), mk(1, false, 2), mk(2, true, 0), mk(3, true, 1), mk(4, true, 2), mk(2, true, 1)}
	return orb, aux
}

// threePackedRandom returns a random packed G (naux × nbf(nbf+1)/2).
func threePackedRandom(rng *rand.Rand, naux, nbf int) []float64 {
	g := make([]float64, naux*nbf*(nbf+1)/2)
	for i := range g {
		g[i] = 2*rng.Float64() - 1
	}
	return g
}

// threeContract returns Σ_P Σ_{μν} G_{P,μν}(μν|P) over all μ, ν from Block.
func threeContract(orb, aux []basis.Shell, G []float64) float64 {
	ob, ab := NewBasis(orb), NewBasis(aux)
	tc := NewThreeCentre(ob, ab)
	w := tc.NewWorkspace()
	nbf := ob.NBF
	npair := nbf * (nbf + 1) / 2
	var s float64
	for a := range orb {
		for b := range orb {
			for p := range aux {
				v := tc.Block(w, a, b, p)
				na, nb, np := orb[a].NumFunctions(), orb[b].NumFunctions(), aux[p].NumFunctions()
				for i := 0; i < na; i++ {
					mu := ob.Offsets[a] + i
					for j := 0; j < nb; j++ {
						nu := ob.Offsets[b] + j
						pk := mu*(mu+1)/2 + nu
						if nu > mu {
							pk = nu*(nu+1)/2 + mu
						}
						for k := 0; k < np; k++ {
							s += G[(ab.Offsets[p]+k)*npair+pk] * v[(i*nb+j)*np+k]
						}
					}
				}
			}
		}
	}
	return s
}

// threeMetricContract returns Σ_PQ H_PQ (P|Q).
func threeMetricContract(orb, aux []basis.Shell, H []float64) float64 {
	m := NewThreeCentre(NewBasis(orb), NewBasis(aux)).TwoCentre(2)
	var s float64
	for i, v := range m {
		s += H[i] * v
	}
	return s
}

// TestThreeCentreGradientFiniteDifference compares Gradient and
// TwoCentreGradient with central differences (step derivStep) of the
// contracted integrals from Block and TwoCentre, and checks translational
// invariance (the gradients sum to zero over atoms).
func TestThreeCentreGradientFiniteDifference(t *testing.T) {
	for _, seed := range []uint64{1, 2} {
		orb, aux := threeTestSystem(seed)
		ob, abas := NewBasis(orb), NewBasis(aux)
		tc := NewThreeCentre(ob, abas)
		rng := rand.New(rand.NewPCG(seed, 99))
		G := threePackedRandom(rng, abas.NBF, ob.NBF)
		n := abas.NBF
		H := make([]float64, n*n)
		for i := 0; i < n; i++ {
			for j := 0; j <= i; j++ {
				H[i*n+j] = 2*rng.Float64() - 1
				H[j*n+i] = H[i*n+j]
			}
		}
		g3 := tc.Gradient(G, 3, 1)
		g2 := tc.TwoCentreGradient(H, 3, 1)
		var worst3, worst2 float64
		for a := 0; a < 3; a++ {
			for k := 0; k < 3; k++ {
				fd3 := (threeContract(derivDisplaced(orb, a, k, derivStep), derivDisplaced(aux, a, k, derivStep), G) -
					threeContract(derivDisplaced(orb, a, k, -derivStep), derivDisplaced(aux, a, k, -derivStep), G)) / (2 * derivStep)
				fd2 := (threeMetricContract(derivDisplaced(orb, a, k, derivStep), derivDisplaced(aux, a, k, derivStep), H) -
					threeMetricContract(derivDisplaced(orb, a, k, -derivStep), derivDisplaced(aux, a, k, -derivStep), H)) / (2 * derivStep)
				d3 := math.Abs(g3[a][k]-fd3) / math.Max(1, math.Abs(fd3))
				d2 := math.Abs(g2[a][k]-fd2) / math.Max(1, math.Abs(fd2))
				worst3, worst2 = math.Max(worst3, d3), math.Max(worst2, d2)
				// Central differences with h = 1e-4 are accurate to about
				// h²·f‴ ≈ 1e-8 relative here (common practice).
				if d3 > 1e-6 {
					t.Errorf("seed %d atom %d dir %d: three-centre %.12g, finite difference %.12g", seed, a, k, g3[a][k], fd3)
				}
				if d2 > 1e-6 {
					t.Errorf("seed %d atom %d dir %d: two-centre %.12g, finite difference %.12g", seed, a, k, g2[a][k], fd2)
				}
			}
		}
		t.Logf("seed %d: worst relative deviation from finite differences: three-centre %.2g, two-centre %.2g", seed, worst3, worst2)
		for _, g := range [][][3]float64{g3, g2} {
			var sum [3]float64
			var scale float64
			for a := range g {
				for k := 0; k < 3; k++ {
					sum[k] += g[a][k]
					scale = math.Max(scale, math.Abs(g[a][k]))
				}
			}
			for k := 0; k < 3; k++ {
				if math.Abs(sum[k]) > 1e-10*math.Max(1, scale) {
					t.Errorf("seed %d: gradient sums to %.3g along %d over atoms (largest %.3g)", seed, sum[k], k, scale)
				}
			}
		}
	}
}

// threeWaterBases returns water in 6-31G* and def2-universal-JKFIT.
func threeWaterBases(tb testing.TB) (orb, aux []basis.Shell) {
	tb.Helper()
	mol := derivLoadMolecule(tb, "../../testdata/molecules/water.xyz", "")
	orb = derivShellsFor(tb, mol, basis.Default)
	set, err := basis.Load("def2-universal-jkfit")
	if err != nil {
		tb.Fatal(err)
	}
	aux, err = set.Shells(mol, basis.Default)
	if err != nil {
		tb.Fatal(err)
	}
	return orb, aux
}

// TestThreeCentreGradientThreads requires bit-identical gradients with 1
// and 2 threads (several work chunks).
func TestThreeCentreGradientThreads(t *testing.T) {
	orb, aux := threeWaterBases(t)
	ob, ab := NewBasis(orb), NewBasis(aux)
	tc := NewThreeCentre(ob, ab)
	if len(aux) < 2 {
		t.Fatalf("only %d auxiliary shells: one chunk", len(aux))
	}
	rng := rand.New(rand.NewPCG(5, 6))
	G := threePackedRandom(rng, ab.NBF, ob.NBF)
	n := ab.NBF
	H := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			H[i*n+j] = 2*rng.Float64() - 1
			H[j*n+i] = H[i*n+j]
		}
	}
	a1, a2 := tc.Gradient(G, 3, 1), tc.Gradient(G, 3, 2)
	b1, b2 := tc.TwoCentreGradient(H, 3, 1), tc.TwoCentreGradient(H, 3, 2)
	for a := range a1 {
		if a1[a] != a2[a] {
			t.Errorf("three-centre atom %d: %v with 1 thread, %v with 2", a, a1[a], a2[a])
		}
		if b1[a] != b2[a] {
			t.Errorf("two-centre atom %d: %v with 1 thread, %v with 2", a, b1[a], b2[a])
		}
	}
}
