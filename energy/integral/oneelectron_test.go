package integral

import (
	"math"
	"testing"

	"poise/energy/basis"
)

// STO-3G for H and O: W. J. Hehre, R. F. Stewart and J. A. Pople,
// J. Chem. Phys. 51, 2657 (1969) (values as distributed with the published
// basis-set libraries).
var (
	sto3gH1s = [2][]float64{
		{3.425250914, 0.6239137298, 0.168855404},
		{0.1543289673, 0.5353281423, 0.4446345422},
	}
	sto3gO1s = [2][]float64{
		{130.7093214, 23.80886605, 6.443608313},
		{0.1543289673, 0.5353281423, 0.4446345422},
	}
	sto3gO2sp = [3][]float64{
		{5.033151319, 1.169596125, 0.38038896},
		{-0.09996722919, 0.3995128261, 0.7001154689},
		{0.155916275, 0.6076837186, 0.3919573931},
	}
)

// ccpVTZOxygen returns the shells of oxygen in cc-pVTZ
// (T. H. Dunning, J. Chem. Phys. 90, 1007 (1989)) at c, spherical d and f.
func ccpVTZOxygen(c [3]float64) []basis.Shell {
	se := []float64{15330.0, 2299.0, 522.4, 147.3, 47.55, 16.76, 6.207, 1.752, 0.6882, 0.2384}
	pe := []float64{34.46, 7.749, 2.28, 0.7156, 0.214}
	return []basis.Shell{
		{L: 0, Center: c, Exponents: se, Coefficients: []float64{0.000508, 0.003929, 0.020243, 0.079181, 0.230687, 0.433118, 0.35026, 0.042728, -0.008154, 0.002381}},
		{L: 0, Center: c, Exponents: se, Coefficients: []float64{-0.000115, -0.000895, -0.004636, -0.018724, -0.058463, -0.136463, -0.17574, 0.160934, 0.603418, 0.378765}},
		{L: 0, Center: c, Exponents: []float64{1.752}, Coefficients: []float64{1}},
		{L: 0, Center: c, Exponents: []float64{0.2384}, Coefficients: []float64{1}},
		{L: 1, Center: c, Exponents: pe, Coefficients: []float64{0.015928, 0.09974, 0.310492, 0.491026, 0.336337}},
		{L: 1, Center: c, Exponents: []float64{0.7156}, Coefficients: []float64{1}},
		{L: 1, Center: c, Exponents: []float64{0.214}, Coefficients: []float64{1}},
		{L: 2, Pure: true, Center: c, Exponents: []float64{2.314}, Coefficients: []float64{1}},
		{L: 2, Pure: true, Center: c, Exponents: []float64{0.645}, Coefficients: []float64{1}},
		{L: 3, Pure: true, Center: c, Exponents: []float64{1.428}, Coefficients: []float64{1}},
	}
}

// waterSTO3G returns water in STO-3G at R(OH) = 1.809 bohr, ∠HOH = 104.52°
// (the geometry of A. Szabo and N. S. Ostlund, "Modern Quantum Chemistry",
// section 3.6), with charges and positions of the nuclei.
func waterSTO3G() ([]basis.Shell, []float64, [][3]float64) {
	r, th := 1.809, 104.52*math.Pi/180
	O := [3]float64{0, 0, 0}
	H1 := [3]float64{r * math.Sin(th/2), 0, r * math.Cos(th/2)}
	H2 := [3]float64{-r * math.Sin(th/2), 0, r * math.Cos(th/2)}
	sh := []basis.Shell{
		{L: 0, Center: O, Atom: 0, Exponents: sto3gO1s[0], Coefficients: sto3gO1s[1]},
		{L: 0, Center: O, Atom: 0, Exponents: sto3gO2sp[0], Coefficients: sto3gO2sp[1]},
		{L: 1, Center: O, Atom: 0, Exponents: sto3gO2sp[0], Coefficients: sto3gO2sp[2]},
		{L: 0, Center: H1, Atom: 1, Exponents: sto3gH1s[0], Coefficients: sto3gH1s[1]},
		{L: 0, Center: H2, Atom: 2, Exponents: sto3gH1s[0], Coefficients: sto3gH1s[1]},
	}
	return sh, []float64{8, 1, 1}, [][3]float64{O, H1, H2}
}

// Every basis function is normalized to one (the convention of
// basis.Shell), and the functions of one spherical shell are orthogonal.
func TestOverlapUnitDiagonal(t *testing.T) {
	water, _, _ := waterSTO3G()
	var high []basis.Shell
	for l := 0; l <= 6; l++ {
		for _, pure := range []bool{false, true} {
			high = append(high, basis.Shell{L: l, Pure: pure, Center: [3]float64{0.3, -0.2, 0.1},
				Exponents: []float64{4.2, 1.1, 0.31}, Coefficients: []float64{0.2, 0.6, 0.4}})
		}
	}
	ccpvtz := ccpVTZOxygen([3]float64{0, 0, 0.5})
	var ccpvtzCart []basis.Shell
	for _, s := range ccpvtz {
		s.Pure = false
		ccpvtzCart = append(ccpvtzCart, s)
	}
	tests := []struct {
		name   string
		shells []basis.Shell
	}{
		{"water STO-3G", water},
		{"O cc-pVTZ", ccpvtz},
		{"O cc-pVTZ Cartesian", ccpvtzCart},
		{"l=0..6", high},
	}
	for _, tc := range tests {
		b := NewBasis(tc.shells)
		S := b.Overlap()
		n := b.NBF
		for i := 0; i < n; i++ {
			if math.Abs(S[i*n+i]-1) > 1e-13 {
				t.Errorf("%s: S[%d][%d] = %.16g, want 1", tc.name, i, i, S[i*n+i])
			}
		}
		for si, s := range b.shells {
			if !s.pure {
				continue
			}
			o := b.Offsets[si]
			for p := 0; p < s.nfunc; p++ {
				for q := 0; q < p; q++ {
					if v := S[(o+p)*n+o+q]; math.Abs(v) > 1e-13 {
						t.Errorf("%s shell %d: S[%d][%d] = %g, want 0", tc.name, si, p, q, v)
					}
				}
			}
		}
	}
}

// Cartesian d functions of one primitive: ⟨xx|yy⟩ = 1/3 and ⟨xy|xy⟩ = 1,
// ⟨xx|xy⟩ = 0 (Gaussian moments (2n−1)!!, textbook).
func TestCartesianDOverlap(t *testing.T) {
	b := NewBasis([]basis.Shell{{L: 2, Exponents: []float64{0.9}, Coefficients: []float64{1}}})
	S := b.Overlap()
	// order xx xy xz yy yz zz
	checks := []struct {
		i, j int
		want float64
	}{{0, 3, 1.0 / 3}, {0, 5, 1.0 / 3}, {3, 5, 1.0 / 3}, {1, 1, 1}, {0, 1, 0}, {1, 4, 0}}
	for _, c := range checks {
		if got := S[c.i*6+c.j]; math.Abs(got-c.want) > 1e-14 {
			t.Errorf("S[%d][%d] = %.16g, want %.16g", c.i, c.j, got, c.want)
		}
	}
}

// Closed forms for normalized s primitives on centres A and B (textbook;
// A. Szabo and N. S. Ostlund, "Modern Quantum Chemistry", appendix A,
// from memory):
// S = (4αβ/p²)^{3/4} e^{−μR²}, T = μ(3 − 2μR²) S,
// ⟨a|1/r_C|b⟩ = 2√(p/π) F_0(p|P−C|²) S with F_0(x) = ½√(π/x) erf √x,
// ⟨a|x−O_x|b⟩ = (P−O)_x S, with p = α+β, μ = αβ/p, P = (αA+βB)/p.
func TestSFunctionClosedForms(t *testing.T) {
	cases := []struct {
		alpha, beta float64
		A, B, C, O  [3]float64
	}{
		{0.8, 1.7, [3]float64{0, 0, 0}, [3]float64{0.3, -0.4, 1.2}, [3]float64{0.5, 0.5, -0.5}, [3]float64{0.1, 0.2, 0.3}},
		{13.1, 0.07, [3]float64{1, 2, 3}, [3]float64{-1, 0.5, 2.5}, [3]float64{1, 2, 3}, [3]float64{0, 0, 0}},
		{0.3, 0.3, [3]float64{0, 0, 0}, [3]float64{0, 0, 0}, [3]float64{0, 0, 0}, [3]float64{-2, 1, 0}},
		{2.0, 5.0, [3]float64{0, 0, 0}, [3]float64{0, 0, 4}, [3]float64{30, -20, 10}, [3]float64{1, 1, 1}},
	}
	for ci, c := range cases {
		b := NewBasis([]basis.Shell{
			{L: 0, Center: c.A, Exponents: []float64{c.alpha}, Coefficients: []float64{1}},
			{L: 0, Center: c.B, Exponents: []float64{c.beta}, Coefficients: []float64{1}},
		})
		p := c.alpha + c.beta
		mu := c.alpha * c.beta / p
		var r2, pc2 float64
		var P [3]float64
		for k := 0; k < 3; k++ {
			d := c.A[k] - c.B[k]
			r2 += d * d
			P[k] = (c.alpha*c.A[k] + c.beta*c.B[k]) / p
			pc2 += (P[k] - c.C[k]) * (P[k] - c.C[k])
		}
		S := math.Pow(4*c.alpha*c.beta/(p*p), 0.75) * math.Exp(-mu*r2)
		T := mu * (3 - 2*mu*r2) * S
		x := p * pc2
		f0 := 1.0
		if x > 0 {
			f0 = 0.5 * math.Sqrt(math.Pi/x) * math.Erf(math.Sqrt(x))
		}
		const Z = 3.0
		V := -Z * 2 * math.Sqrt(p/math.Pi) * f0 * S

		check := func(what string, got, want float64) {
			t.Helper()
			if math.Abs(got-want) > 1e-14+1e-13*math.Abs(want) {
				t.Errorf("case %d %s: got %.16g, want %.16g", ci, what, got, want)
			}
		}
		check("overlap", b.Overlap()[1], S)
		check("kinetic", b.Kinetic()[1], T)
		check("nuclear", b.Nuclear([]float64{Z}, [][3]float64{c.C})[1], V)
		d := b.Dipole(c.O)
		for k := 0; k < 3; k++ {
			check("dipole", d[k][1], (P[k]-c.O[k])*S)
		}
	}
}

// Water in STO-3G: all matrices symmetric; S and T positive definite and
// V = −Σ Z/r negative definite (they are Gram-like matrices of positive or
// negative definite operators); rigid translation of molecule and origin
// leaves everything unchanged. Matrix entries from A. Szabo and
// N. S. Ostlund, "Modern Quantum Chemistry" (1996), are not reproduced here;
// the libint2-tagged tests check values.
func TestWaterSTO3GSanity(t *testing.T) {
	sh, Z, R := waterSTO3G()
	b := NewBasis(sh)
	n := b.NBF
	if n != 7 {
		t.Fatalf("water STO-3G has %d functions, want 7", n)
	}
	S, T, V := b.Overlap(), b.Kinetic(), b.Nuclear(Z, R)
	D := b.Dipole([3]float64{})
	mats := map[string][]float64{"S": S, "T": T, "V": V, "Dx": D[0], "Dy": D[1], "Dz": D[2]}
	for name, m := range mats {
		for i := 0; i < n; i++ {
			for j := 0; j < i; j++ {
				if m[i*n+j] != m[j*n+i] {
					t.Errorf("%s not symmetric at (%d,%d)", name, i, j)
				}
			}
		}
	}
	if !isPositiveDefinite(S, n, 1) || !isPositiveDefinite(T, n, 1) || !isPositiveDefinite(V, n, -1) {
		t.Errorf("definiteness violated")
	}

	shift := [3]float64{1.5, -2.25, 0.75}
	moved := make([]basis.Shell, len(sh))
	for i, s := range sh {
		s.Center = [3]float64{s.Center[0] + shift[0], s.Center[1] + shift[1], s.Center[2] + shift[2]}
		moved[i] = s
	}
	movedR := make([][3]float64, len(R))
	for i, r := range R {
		movedR[i] = [3]float64{r[0] + shift[0], r[1] + shift[1], r[2] + shift[2]}
	}
	b2 := NewBasis(moved)
	D2 := b2.Dipole(shift)
	pairs := [][2][]float64{{S, b2.Overlap()}, {T, b2.Kinetic()}, {V, b2.Nuclear(Z, movedR)},
		{D[0], D2[0]}, {D[1], D2[1]}, {D[2], D2[2]}}
	for pi, p := range pairs {
		for i := range p[0] {
			if math.Abs(p[0][i]-p[1][i]) > 1e-12 {
				t.Errorf("matrix %d element %d changes under translation: %.16g vs %.16g", pi, i, p[0][i], p[1][i])
			}
		}
	}
}

// isPositiveDefinite reports whether sign·m has a Cholesky factorization.
func isPositiveDefinite(m []float64, n int, sign float64) bool {
	a := make([]float64, len(m))
	for i := range m {
		a[i] = sign * m[i]
	}
	for j := 0; j < n; j++ {
		d := a[j*n+j]
		for k := 0; k < j; k++ {
			d -= a[j*n+k] * a[j*n+k]
		}
		if d <= 0 {
			return false
		}
		d = math.Sqrt(d)
		a[j*n+j] = d
		for i := j + 1; i < n; i++ {
			s := a[i*n+j]
			for k := 0; k < j; k++ {
				s -= a[i*n+k] * a[j*n+k]
			}
			a[i*n+j] = s / d
		}
	}
	return true
}

func BenchmarkOneElectronCCpVTZ(b *testing.B) {
	var sh []basis.Shell
	sh = append(sh, ccpVTZOxygen([3]float64{0, 0, 0})...)
	sh = append(sh, ccpVTZOxygen([3]float64{0, 0, 2.3})...)
	bs := NewBasis(sh)
	Z := []float64{8, 8}
	R := [][3]float64{{0, 0, 0}, {0, 0, 2.3}}
	for b.Loop() {
		bs.Overlap()
		bs.Kinetic()
		bs.Nuclear(Z, R)
	}
}

// Every function of every element of every basis set in poise's library
// is normalized to one, both as published (spherical or Cartesian) and
// with the other convention: a check of the contraction renormalization
// against the published contraction coefficients of each set.
func TestOverlapUnitDiagonalLibrary(t *testing.T) {
	for _, info := range basis.List() {
		set, err := basis.Load(info.Name)
		if err != nil {
			t.Fatalf("%s: %v", info.Name, err)
		}
		for _, Z := range set.Elements() {
			shells, _, _ := set.ElementShells(Z)
			for _, flip := range []bool{false, true} {
				sh := append([]basis.Shell(nil), shells...)
				if flip {
					for i := range sh {
						sh[i].Pure = !sh[i].Pure && sh[i].L >= 2
					}
				}
				// Only the diagonal shell blocks are needed.
				b := NewBasis(sh)
				w := newOneWork(b.MaxL)
				nc := len(cartesianExponents(b.MaxL))
				cart, tmp, fin := make([]float64, nc*nc), make([]float64, nc*nc), make([]float64, nc*nc)
				for i := range b.shells {
					s := &b.shells[i]
					w.overlapBlock(s, s, cart)
					transformPair(s, s, cart, tmp, fin)
					for p := 0; p < s.nfunc; p++ {
						if v := fin[p*s.nfunc+p]; math.Abs(v-1) > 1e-12 {
							t.Errorf("%s Z=%d (flip %v) shell %d: ⟨%d|%d⟩ = %.16g, want 1", info.Name, Z, flip, i, p, p, v)
						}
					}
				}
			}
		}
	}
}
