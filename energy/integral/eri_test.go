package integral

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
)

// eriRandomShell returns a contracted shell with 1–3 primitives of
// angular momentum l on a random centre in a 3-bohr box.
func eriRandomShell(rng *rand.Rand, l int, pure bool) basis.Shell {
	np := 1 + rng.IntN(3)
	s := basis.Shell{L: l, Pure: pure}
	for k := 0; k < 3; k++ {
		s.Center[k] = 3 * (rng.Float64() - 0.5)
	}
	for p := 0; p < np; p++ {
		s.Exponents = append(s.Exponents, 0.15*math.Pow(60, rng.Float64()))
		s.Coefficients = append(s.Coefficients, 0.2+rng.Float64())
	}
	return s
}

// eriRefBoys evaluates F_n(t) from the everywhere-convergent series
// F_n(t) = e^{−t} Σ_k (2t)^k / ((2n+1)(2n+3)…(2n+2k+1)) (all terms
// positive; textbook, e.g. Helgaker, Jørgensen & Olsen, "Molecular
// Electronic-Structure Theory", eq. 9.8.13, from memory). Slow; for tests.
func eriRefBoys(n int, t float64) float64 {
	term := 1 / float64(2*n+1)
	sum := term
	for k := 1; k < 100000; k++ {
		term *= 2 * t / float64(2*n+2*k+1)
		sum += term
		if term < 1e-18*sum {
			break
		}
	}
	return math.Exp(-t) * sum
}

// eriRefHermiteE returns the McMurchie–Davidson expansion coefficients
// E^{ij}_t (t = 0 … i+j) of x_A^i x_B^j exp(−α x_A² − β x_B²) in Hermite
// Gaussians about P, without the factor exp(−μX_AB²): L. E. McMurchie and
// E. R. Davidson, J. Comput. Phys. 26, 218 (1978); recurrences as in
// Helgaker, Jørgensen & Olsen, eq. 9.5.6 (from memory).
func eriRefHermiteE(i, j int, p, xpa, xpb float64) [][][]float64 {
	// E[i'][j'][t]
	E := make([][][]float64, i+1)
	for a := range E {
		E[a] = make([][]float64, j+1)
		for b := range E[a] {
			E[a][b] = make([]float64, a+b+2)
		}
	}
	E[0][0][0] = 1
	get := func(a, b, t int) float64 {
		if t < 0 || t > a+b {
			return 0
		}
		return E[a][b][t]
	}
	for a := 0; a <= i; a++ {
		for b := 0; b <= j; b++ {
			if a == 0 && b == 0 {
				continue
			}
			for t := 0; t <= a+b; t++ {
				if a > 0 {
					E[a][b][t] = get(a-1, b, t-1)/(2*p) + xpa*get(a-1, b, t) + float64(t+1)*get(a-1, b, t+1)
				} else {
					E[a][b][t] = get(a, b-1, t-1)/(2*p) + xpb*get(a, b-1, t) + float64(t+1)*get(a, b-1, t+1)
				}
			}
		}
	}
	return E
}

// eriRefPrim is one primitive quartet prepared for the McMurchie–Davidson
// reference: Hermite expansion coefficients of both pairs and the Hermite
// Coulomb integrals R_{tuv} (L. E. McMurchie and E. R. Davidson,
// J. Comput. Phys. 26, 218 (1978); recurrences as in Helgaker, Jørgensen &
// Olsen, eqs. 9.9.18–9.9.20 and 9.9.33, from memory). It is an algorithm
// independent of the one under test.
type eriRefPrim struct {
	eab, ecd [3][][][]float64
	r        [][][]float64 // R^0_{tuv}
	pre      float64       // 2π^{5/2}/(pq√(p+q))·K_AB·K_CD
}

func newERIRefPrim(la, lb, lc, ld int, al, be, ga, de float64, A, B, C, D [3]float64) *eriRefPrim {
	p, q := al+be, ga+de
	var P, Q, pq [3]float64
	kab, kcd := 1.0, 1.0
	r := &eriRefPrim{}
	for x := 0; x < 3; x++ {
		P[x] = (al*A[x] + be*B[x]) / p
		Q[x] = (ga*C[x] + de*D[x]) / q
		pq[x] = P[x] - Q[x]
		kab *= math.Exp(-al * be / p * (A[x] - B[x]) * (A[x] - B[x]))
		kcd *= math.Exp(-ga * de / q * (C[x] - D[x]) * (C[x] - D[x]))
		r.eab[x] = eriRefHermiteE(la, lb, p, P[x]-A[x], P[x]-B[x])
		r.ecd[x] = eriRefHermiteE(lc, ld, q, Q[x]-C[x], Q[x]-D[x])
	}
	alpha := p * q / (p + q)
	r2 := pq[0]*pq[0] + pq[1]*pq[1] + pq[2]*pq[2]
	L := la + lb + lc + ld
	// R^n_{tuv} for t+u+v ≤ L−n, built from n = L down to 0.
	mk := func() [][][]float64 {
		a := make([][][]float64, L+1)
		for t := range a {
			a[t] = make([][]float64, L+1)
			for u := range a[t] {
				a[t][u] = make([]float64, L+1)
			}
		}
		return a
	}
	var prev [][][]float64
	for n := L; n >= 0; n-- {
		cur := mk()
		cur[0][0][0] = math.Pow(-2*alpha, float64(n)) * eriRefBoys(n, alpha*r2)
		get := func(t, u, v int) float64 {
			if t < 0 || u < 0 || v < 0 {
				return 0
			}
			return prev[t][u][v]
		}
		for s := 1; s <= L-n; s++ {
			for t := 0; t <= s; t++ {
				for u := 0; u <= s-t; u++ {
					v := s - t - u
					switch {
					case t > 0:
						cur[t][u][v] = float64(t-1)*get(t-2, u, v) + pq[0]*get(t-1, u, v)
					case u > 0:
						cur[t][u][v] = float64(u-1)*get(t, u-2, v) + pq[1]*get(t, u-1, v)
					default:
						cur[t][u][v] = float64(v-1)*get(t, u, v-2) + pq[2]*get(t, u, v-1)
					}
				}
			}
		}
		prev = cur
	}
	r.r = prev
	r.pre = 2 * math.Pow(math.Pi, 2.5) / (p * q * math.Sqrt(p+q)) * kab * kcd
	return r
}

// value returns the primitive integral over x_A^{a}… (unnormalized).
func (r *eriRefPrim) value(a, b, c, d [3]int) float64 {
	var sum float64
	for t := 0; t <= a[0]+b[0]; t++ {
		for u := 0; u <= a[1]+b[1]; u++ {
			for v := 0; v <= a[2]+b[2]; v++ {
				eab := r.eab[0][a[0]][b[0]][t] * r.eab[1][a[1]][b[1]][u] * r.eab[2][a[2]][b[2]][v]
				if eab == 0 {
					continue
				}
				for tau := 0; tau <= c[0]+d[0]; tau++ {
					for nu := 0; nu <= c[1]+d[1]; nu++ {
						for phi := 0; phi <= c[2]+d[2]; phi++ {
							ecd := r.ecd[0][c[0]][d[0]][tau] * r.ecd[1][c[1]][d[1]][nu] * r.ecd[2][c[2]][d[2]][phi]
							if ecd == 0 {
								continue
							}
							if (tau+nu+phi)%2 == 1 {
								ecd = -ecd
							}
							sum += eab * ecd * r.r[t+tau][u+nu][v+phi]
						}
					}
				}
			}
		}
	}
	return r.pre * sum
}

// eriRefQuartet returns (ij|kl) over final functions by the
// McMurchie–Davidson reference, contracted with the prepared coefficients
// and mapped with each shell's transformation matrix.
func eriRefQuartet(b *Basis, sh [4]int) []float64 {
	var s [4]*shellData
	var comps [4][][3]int
	for x := 0; x < 4; x++ {
		s[x] = &b.shells[sh[x]]
		comps[x] = cartesianExponents(s[x].l)
	}
	nc := [4]int{len(comps[0]), len(comps[1]), len(comps[2]), len(comps[3])}
	cart := make([]float64, nc[0]*nc[1]*nc[2]*nc[3])
	for p, al := range s[0].exps {
		for q, be := range s[1].exps {
			for r, ga := range s[2].exps {
				for u, de := range s[3].exps {
					c := s[0].coefs[p] * s[1].coefs[q] * s[2].coefs[r] * s[3].coefs[u]
					ref := newERIRefPrim(s[0].l, s[1].l, s[2].l, s[3].l, al, be, ga, de,
						s[0].center, s[1].center, s[2].center, s[3].center)
					idx := 0
					for _, ca := range comps[0] {
						for _, cb := range comps[1] {
							for _, cc := range comps[2] {
								for _, cd := range comps[3] {
									cart[idx] += c * ref.value(ca, cb, cc, cd)
									idx++
								}
							}
						}
					}
				}
			}
		}
	}
	// Transform each index in turn.
	dims := nc
	src := cart
	for x := 0; x < 4; x++ {
		pre, post := 1, 1
		for y := 0; y < x; y++ {
			pre *= dims[y]
		}
		for y := x + 1; y < 4; y++ {
			post *= dims[y]
		}
		nf := s[x].nfunc
		dst := make([]float64, pre*nf*post)
		for pi := 0; pi < pre; pi++ {
			for f := 0; f < nf; f++ {
				for c := 0; c < dims[x]; c++ {
					m := s[x].trans[f*dims[x]+c]
					for qi := 0; qi < post; qi++ {
						dst[(pi*nf+f)*post+qi] += m * src[(pi*dims[x]+c)*post+qi]
					}
				}
			}
		}
		dims[x] = nf
		src = dst
	}
	return src
}

// eriCompare reports values that differ by more than 1e-12 + 1e-10·|ref|.
func eriCompare(t *testing.T, name string, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, want %d", name, len(got), len(want))
	}
	bad := 0
	for i := range want {
		if d := math.Abs(got[i] - want[i]); d > 1e-12+1e-10*math.Abs(want[i]) || math.IsNaN(got[i]) {
			if bad < 5 {
				t.Errorf("%s: [%d] = %.15g, want %.15g (diff %.3g)", name, i, got[i], want[i], d)
			}
			bad++
		}
	}
	if bad > 5 {
		t.Errorf("%s: %d values off in all", name, bad)
	}
}

// TestERISSSSClosedForm checks contracted s-type integrals against the
// closed formula (ss|ss) = 2π^{5/2}/(pq√(p+q)) K_AB K_CD F₀(T) with
// F₀(T) = ½√(π/T) erf(√T) (A. Szabo and N. S. Ostlund, "Modern Quantum
// Chemistry", eq. (A.41), from memory), using math.Erf rather than Boys.
func TestERISSSSClosedForm(t *testing.T) {
	shells := []basis.Shell{
		{L: 0, Center: [3]float64{0, 0, 0}, Exponents: []float64{3.4, 0.62, 0.17}, Coefficients: []float64{0.15, 0.54, 0.44}},
		{L: 0, Center: [3]float64{0, 0, 1.4}, Exponents: []float64{1.1, 0.2}, Coefficients: []float64{0.4, 0.7}},
		{L: 0, Center: [3]float64{0.3, -1.2, 0.5}, Exponents: []float64{0.8}, Coefficients: []float64{1}},
		{L: 0, Center: [3]float64{30, 0, 0}, Exponents: []float64{0.5}, Coefficients: []float64{1}},
	}
	b := NewBasis(shells)
	e := NewERI(b)
	w := e.NewWorkspace()
	norm := func(a float64) float64 { return math.Pow(2*a/math.Pi, 0.75) }
	dist2 := func(x, y [3]float64) float64 {
		return (x[0]-y[0])*(x[0]-y[0]) + (x[1]-y[1])*(x[1]-y[1]) + (x[2]-y[2])*(x[2]-y[2])
	}
	closed := func(sh [4]int) float64 {
		// Contraction normalization from the self-overlap Σ c_p c_q (π/(α_p+α_q))^{3/2}.
		cn := func(s basis.Shell) []float64 {
			c := make([]float64, len(s.Exponents))
			var ov float64
			for p, a := range s.Exponents {
				c[p] = s.Coefficients[p] * norm(a)
			}
			for p, a := range s.Exponents {
				for q, bq := range s.Exponents {
					ov += c[p] * c[q] * math.Pow(math.Pi/(a+bq), 1.5)
				}
			}
			for p := range c {
				c[p] /= math.Sqrt(ov)
			}
			return c
		}
		S := [4]basis.Shell{shells[sh[0]], shells[sh[1]], shells[sh[2]], shells[sh[3]]}
		C := [4][]float64{cn(S[0]), cn(S[1]), cn(S[2]), cn(S[3])}
		var v float64
		for p, a := range S[0].Exponents {
			for q, bb := range S[1].Exponents {
				for r, c := range S[2].Exponents {
					for u, d := range S[3].Exponents {
						pp, qq := a+bb, c+d
						var P, Q [3]float64
						for x := 0; x < 3; x++ {
							P[x] = (a*S[0].Center[x] + bb*S[1].Center[x]) / pp
							Q[x] = (c*S[2].Center[x] + d*S[3].Center[x]) / qq
						}
						T := pp * qq / (pp + qq) * dist2(P, Q)
						f0 := 1.0
						if T > 0 {
							f0 = 0.5 * math.Sqrt(math.Pi/T) * math.Erf(math.Sqrt(T))
						}
						v += C[0][p] * C[1][q] * C[2][r] * C[3][u] *
							2 * math.Pow(math.Pi, 2.5) / (pp * qq * math.Sqrt(pp+qq)) *
							math.Exp(-a*bb/pp*dist2(S[0].Center, S[1].Center)-c*d/qq*dist2(S[2].Center, S[3].Center)) * f0
					}
				}
			}
		}
		return v
	}
	for i := 0; i < 4; i++ {
		for j := 0; j < 4; j++ {
			for k := 0; k < 4; k++ {
				for l := 0; l < 4; l++ {
					sh := [4]int{i, j, k, l}
					got := e.Quartet(w, i, j, k, l)[0]
					want := closed(sh)
					if d := math.Abs(got - want); d > 1e-13+1e-12*math.Abs(want) {
						t.Errorf("(%d%d|%d%d) = %.15g, want %.15g", i, j, k, l, got, want)
					}
				}
			}
		}
	}
}

// TestERIH2STO3G compares with the two-electron integrals of H₂ in STO-3G
// at R = 1.4 bohr printed by A. Szabo and N. S. Ostlund, "Modern Quantum
// Chemistry" (Dover 1996), eq. (3.235) (from memory; four decimals):
// (11|11) = 0.7746, (11|22) = 0.5697, (21|11) = 0.4441, (21|21) = 0.2970.
// The STO-3G exponents and coefficients (ζ = 1.24) are from
// /work/shared/basis/sto-3g.json (Hehre, Stewart and Pople, J. Chem. Phys.
// 51, 2657 (1969)).
func TestERIH2STO3G(t *testing.T) {
	exps := []float64{3.425250914, 0.6239137298, 0.168855404}
	coefs := []float64{0.1543289673, 0.5353281423, 0.4446345422}
	shells := []basis.Shell{
		{L: 0, Center: [3]float64{0, 0, 0}, Exponents: exps, Coefficients: coefs},
		{L: 0, Center: [3]float64{0, 0, 1.4}, Exponents: exps, Coefficients: coefs},
	}
	e := NewERI(NewBasis(shells))
	w := e.NewWorkspace()
	cases := []struct {
		i, j, k, l int
		want       float64
	}{
		{0, 0, 0, 0, 0.7746},
		{0, 0, 1, 1, 0.5697},
		{1, 0, 0, 0, 0.4441},
		{1, 0, 1, 0, 0.2970},
		{1, 1, 1, 1, 0.7746},
	}
	for _, c := range cases {
		got := e.Quartet(w, c.i, c.j, c.k, c.l)[0]
		if math.Abs(got-c.want) > 0.6e-4 {
			t.Errorf("(%d%d|%d%d) = %.6f, want %.4f", c.i+1, c.j+1, c.k+1, c.l+1, got, c.want)
		}
	}
}

// eriPermutations are the 8 orderings of (ij|kl) that leave a real
// integral unchanged.
var eriPermutations = [8][4]int{
	{0, 1, 2, 3}, {1, 0, 2, 3}, {0, 1, 3, 2}, {1, 0, 3, 2},
	{2, 3, 0, 1}, {3, 2, 0, 1}, {2, 3, 1, 0}, {3, 2, 1, 0},
}

// TestERIPermutationalSymmetry checks (ij|kl) = (ji|kl) = (ij|lk) = (kl|ij)
// … for shell quartets in every order, Cartesian and spherical.
func TestERIPermutationalSymmetry(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	var shells []basis.Shell
	for _, l := range []int{0, 1, 2, 3, 2, 1} {
		shells = append(shells, eriRandomShell(rng, l, rng.IntN(2) == 0))
	}
	for _, l := range []int{4, 5} {
		s := eriRandomShell(rng, l, l == 4)
		s.Exponents, s.Coefficients = s.Exponents[:1], s.Coefficients[:1]
		shells = append(shells, s)
	}
	b := NewBasis(shells)
	e := NewERI(b)
	w := e.NewWorkspace()
	n := len(shells)
	for trial := 0; trial < 40; trial++ {
		q := [4]int{rng.IntN(n), rng.IntN(n), rng.IntN(n), rng.IntN(n)}
		if trial < 10 {
			q = [4]int{rng.IntN(6), rng.IntN(6), rng.IntN(6), rng.IntN(6)}
		}
		ref := append([]float64(nil), e.Quartet(w, q[0], q[1], q[2], q[3])...)
		nf := [4]int{}
		for x := 0; x < 4; x++ {
			nf[x] = shells[q[x]].NumFunctions()
		}
		for _, perm := range eriPermutations[1:] {
			got := e.Quartet(w, q[perm[0]], q[perm[1]], q[perm[2]], q[perm[3]])
			// got is indexed by functions of shells q[perm[0..3]].
			var pd [4]int
			for x := 0; x < 4; x++ {
				pd[x] = nf[perm[x]]
			}
			var idx [4]int
			for idx[0] = 0; idx[0] < nf[0]; idx[0]++ {
				for idx[1] = 0; idx[1] < nf[1]; idx[1]++ {
					for idx[2] = 0; idx[2] < nf[2]; idx[2]++ {
						for idx[3] = 0; idx[3] < nf[3]; idx[3]++ {
							r := ref[((idx[0]*nf[1]+idx[1])*nf[2]+idx[2])*nf[3]+idx[3]]
							g := got[((idx[perm[0]]*pd[1]+idx[perm[1]])*pd[2]+idx[perm[2]])*pd[3]+idx[perm[3]]]
							if math.Abs(g-r) > 1e-13+1e-12*math.Abs(r) {
								t.Fatalf("quartet %v perm %v at %v: %.15g vs %.15g", q, perm, idx, g, r)
							}
						}
					}
				}
			}
		}
	}
}

// TestERIAgainstHermiteReference compares with the McMurchie–Davidson
// reference for every class with l ≤ 2 on each centre, Cartesian and
// spherical, and a few higher classes.
func TestERIAgainstHermiteReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	type cls struct {
		l    [4]int
		pure bool
	}
	var classes []cls
	for la := 0; la <= 2; la++ {
		for lb := 0; lb <= 2; lb++ {
			for lc := 0; lc <= 2; lc++ {
				for ld := 0; ld <= 2; ld++ {
					classes = append(classes, cls{[4]int{la, lb, lc, ld}, (la+lb+lc+ld)%2 == 0})
				}
			}
		}
	}
	classes = append(classes,
		cls{[4]int{3, 0, 1, 2}, true}, cls{[4]int{3, 3, 1, 0}, false}, cls{[4]int{0, 3, 3, 2}, true},
		cls{[4]int{4, 1, 0, 0}, true}, cls{[4]int{2, 0, 4, 1}, false}, cls{[4]int{5, 0, 1, 0}, true},
		cls{[4]int{0, 0, 0, 5}, false})
	for _, c := range classes {
		var shells []basis.Shell
		for x := 0; x < 4; x++ {
			s := eriRandomShell(rng, c.l[x], c.pure)
			if c.l[0]+c.l[1]+c.l[2]+c.l[3] > 6 {
				s.Exponents, s.Coefficients = s.Exponents[:1], s.Coefficients[:1]
			}
			shells = append(shells, s)
		}
		b := NewBasis(shells)
		e := NewERI(b)
		w := e.NewWorkspace()
		got := e.Quartet(w, 0, 1, 2, 3)
		want := eriRefQuartet(b, [4]int{0, 1, 2, 3})
		eriCompare(t, fmt.Sprintf("class %v pure %v", c.l, c.pure), got, want)
	}
}

// TestERIQuartetNoAllocs checks that Quartet does not allocate after
// warm-up.
func TestERIQuartetNoAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	shells := []basis.Shell{eriRandomShell(rng, 2, true), eriRandomShell(rng, 1, false), eriRandomShell(rng, 0, false), eriRandomShell(rng, 3, false)}
	e := NewERI(NewBasis(shells))
	w := e.NewWorkspace()
	allocs := testing.AllocsPerRun(3, func() {
		for i := 0; i < 4; i++ {
			for j := 0; j < 4; j++ {
				e.Quartet(w, i, j, 3-i, (j+1)%4)
			}
		}
	})
	if allocs != 0 {
		t.Errorf("Quartet allocates %v times per run", allocs)
	}
}

// TestERISchwarz checks the bound |(ij|kl)| ≤ Q_ij Q_kl and the matrix form.
func TestERISchwarz(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 9))
	var shells []basis.Shell
	for _, l := range []int{0, 1, 2, 0, 1} {
		shells = append(shells, eriRandomShell(rng, l, l == 2))
	}
	e := NewERI(NewBasis(shells))
	w := e.NewWorkspace()
	n := e.NumShells()
	m := e.SchwarzMatrix()
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if m[i*n+j] != e.Schwarz(i, j) || m[i*n+j] != m[j*n+i] || !(m[i*n+j] > 0) {
				t.Fatalf("Schwarz matrix entry (%d,%d) = %g inconsistent", i, j, m[i*n+j])
			}
			for k := 0; k < n; k++ {
				for l := 0; l < n; l++ {
					bound := e.Schwarz(i, j) * e.Schwarz(k, l)
					for _, v := range e.Quartet(w, i, j, k, l) {
						if math.Abs(v) > bound*(1+1e-12) {
							t.Fatalf("(%d%d|%d%d): |%g| > bound %g", i, j, k, l, v, bound)
						}
					}
				}
			}
		}
	}
}

// TestERITensor checks Tensor against Quartet for a small basis.
func TestERITensor(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 4))
	shells := []basis.Shell{eriRandomShell(rng, 0, false), eriRandomShell(rng, 1, false), eriRandomShell(rng, 2, true)}
	b := NewBasis(shells)
	e := NewERI(b)
	w := e.NewWorkspace()
	T := e.Tensor()
	nbf := b.NBF
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			for k := 0; k < 3; k++ {
				for l := 0; l < 3; l++ {
					v := e.Quartet(w, i, j, k, l)
					idx := 0
					for a := b.Offsets[i]; a < b.Offsets[i]+shells[i].NumFunctions(); a++ {
						for bb := b.Offsets[j]; bb < b.Offsets[j]+shells[j].NumFunctions(); bb++ {
							for c := b.Offsets[k]; c < b.Offsets[k]+shells[k].NumFunctions(); c++ {
								for d := b.Offsets[l]; d < b.Offsets[l]+shells[l].NumFunctions(); d++ {
									x := T[((a*nbf+bb)*nbf+c)*nbf+d]
									if math.Abs(x-v[idx]) > 1e-14+1e-13*math.Abs(x) {
										t.Fatalf("tensor (%d%d|%d%d) = %g, quartet %g", a, bb, c, d, x, v[idx])
									}
									idx++
								}
							}
						}
					}
				}
			}
		}
	}
}

// TestERIBoysInline checks the Taylor table and the asymptotic branch of
// the generated code against Boys over the whole range of t.
func TestERIBoysInline(t *testing.T) {
	var got, want [eriBoysMaxM + 1]float64
	for i := 0; i <= 20000; i++ {
		x := float64(i) * 0.00731
		if i > 15000 {
			x = eriBoysTMax + float64(i-15000)*0.37
		}
		eriBoysInline(eriBoysMaxM, x, got[:])
		Boys(eriBoysMaxM, x, want[:])
		for m := range want {
			if math.Abs(got[m]-want[m]) > 4e-15*want[m] {
				t.Fatalf("F_%d(%g) = %.17g, Boys %.17g", m, x, got[m], want[m])
			}
		}
	}
}

// TestERIGeneratedMatchesGeneric compares every class with straight-line
// code against the table-driven code on random contracted shells.
func TestERIGeneratedMatchesGeneric(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 19))
	n := 0
	for cls, f := range eriGenTable {
		if f == nil {
			continue
		}
		n++
		ld := cls % (eriMaxL + 1)
		lc := cls / (eriMaxL + 1) % (eriMaxL + 1)
		lb := cls / ((eriMaxL + 1) * (eriMaxL + 1)) % (eriMaxL + 1)
		la := cls / ((eriMaxL + 1) * (eriMaxL + 1) * (eriMaxL + 1))
		if eriClass(la, lb, lc, ld) != cls {
			t.Fatalf("class index %d does not decode", cls)
		}
		// The boxes of side 0.5 to 12 bohr mix the Taylor and the
		// asymptotic branch of the Boys function; with both pairs compact
		// and the ket 40 bohr away (box −0.5) every primitive quartet is
		// asymptotic (t ≥ ρ_min·39² ≥ 0.075·39² > eriBoysTMax).
		for _, box := range []float64{0.5, 4, 12, -0.5} {
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
			w := e.NewWorkspace()
			bra, ket := e.pair(0, 1), e.pair(2, 3)
			if bra.la != la || bra.lb != lb || ket.la != lc || ket.lb != ld || ket.key() > bra.key() {
				t.Fatalf("class (%d%d|%d%d) is not canonical", la, lb, lc, ld)
			}
			got := append([]float64(nil), f(w, bra, ket)...)
			want := e.generic(w, bra, ket)
			eriCompare(t, fmt.Sprintf("generated (%d%d|%d%d) box %g", la, lb, lc, ld, box), got, want)
		}
	}
	if n == 0 {
		t.Fatal("no generated classes")
	}
}

// TestERIConcurrent evaluates quartets from several goroutines, each with
// its own workspace, and compares with a serial evaluation.
func TestERIConcurrent(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 29))
	var shells []basis.Shell
	for _, l := range []int{0, 1, 2, 0, 1, 3} {
		shells = append(shells, eriRandomShell(rng, l, l == 3))
	}
	e := NewERI(NewBasis(shells))
	ns := len(shells)
	serial := make(map[[4]int][]float64)
	w0 := e.NewWorkspace()
	for i := 0; i < ns; i++ {
		for j := 0; j < ns; j++ {
			for k := 0; k < ns; k++ {
				for l := 0; l < ns; l++ {
					serial[[4]int{i, j, k, l}] = append([]float64(nil), e.Quartet(w0, i, j, k, l)...)
				}
			}
		}
	}
	const workers = 4
	errs := make(chan error, workers)
	for g := 0; g < workers; g++ {
		go func(g int) {
			w := e.NewWorkspace()
			for rep := 0; rep < 3; rep++ {
				for i := 0; i < ns; i++ {
					for j := 0; j < ns; j++ {
						k, l := (i+g)%ns, (j+rep)%ns
						v := e.Quartet(w, i, j, k, l)
						for idx, x := range serial[[4]int{i, j, k, l}] {
							if v[idx] != x {
								errs <- fmt.Errorf("goroutine %d: (%d%d|%d%d)[%d] = %g, serial %g", g, i, j, k, l, idx, v[idx], x)
								return
							}
						}
					}
				}
			}
			errs <- nil
		}(g)
	}
	for g := 0; g < workers; g++ {
		if err := <-errs; err != nil {
			t.Error(err)
		}
	}
}
