//go:build libint2

package libintref

import (
	"math"
	"testing"
)

// Smoke tests of the shim's conversions against closed forms for s and p
// primitives (textbook Gaussian integrals, e.g. Szabo & Ostlund, "Modern
// Quantum Chemistry", appendix A, from memory).
func TestSFunctionsClosedForm(t *testing.T) {
	a := Shell{L: 0, Center: [3]float64{0, 0, 0}, Exponents: []float64{0.8}, Coefficients: []float64{1}}
	b := Shell{L: 0, Center: [3]float64{0.3, -0.4, 1.2}, Exponents: []float64{1.7}, Coefficients: []float64{1}}
	al, be := 0.8, 1.7
	p := al + be
	r2 := 0.3*0.3 + 0.4*0.4 + 1.2*1.2
	s := math.Pow(4*al*be/(p*p), 0.75) * math.Exp(-al*be/p*r2)
	if got := Overlap(a, b)[0]; math.Abs(got-s) > 1e-14 {
		t.Errorf("overlap %.16g, want %.16g", got, s)
	}
	mu := al * be / p
	if got, want := Kinetic(a, b)[0], s*mu*(3-2*mu*r2); math.Abs(got-want) > 1e-14 {
		t.Errorf("kinetic %.16g, want %.16g", got, want)
	}
	C := [3]float64{0.5, 0.5, -0.5}
	P := [3]float64{be * 0.3 / p, be * -0.4 / p, be * 1.2 / p}
	var pc2 float64
	for k := range P {
		pc2 += (P[k] - C[k]) * (P[k] - C[k])
	}
	x := p * pc2
	f0 := 0.5 * math.Sqrt(math.Pi/x) * math.Erf(math.Sqrt(x))
	if got, want := Nuclear(a, b, []float64{2}, [][3]float64{C})[0], -2*s*2*math.Sqrt(p/math.Pi)*f0; math.Abs(got-want) > 1e-14 {
		t.Errorf("nuclear %.16g, want %.16g", got, want)
	}
	O := [3]float64{0.1, 0.2, 0.3}
	d := Dipole(a, b, O)
	for k := 0; k < 3; k++ {
		if got, want := d[k][0], s*(P[k]-O[k]); math.Abs(got-want) > 1e-14 {
			t.Errorf("dipole %d: %.16g, want %.16g", k, got, want)
		}
	}
	// (ss|ss) with all four on one centre and one exponent α:
	// 2π^{5/2}/(p q √(p+q)) N⁴ with p = q = 2α, N = (2α/π)^{3/4}.
	e := ERI(a, a, a, a)[0]
	want := 2 * math.Pow(math.Pi, 2.5) / (4 * al * al * math.Sqrt(4*al)) * math.Pow(2*al/math.Pi, 3)
	if math.Abs(e-want) > 1e-14 {
		t.Errorf("(ss|ss) %.16g, want %.16g", e, want)
	}
}

// Unit normalization of every function after conversion: the diagonal of
// the self-overlap is one for Cartesian and spherical shells, and the
// Cartesian d block has ⟨xx|yy⟩ = 1/3 (Gaussian moments, textbook).
func TestNormalization(t *testing.T) {
	for l := 0; l <= 5; l++ {
		for _, pure := range []bool{false, true} {
			s := Shell{L: l, Pure: pure, Center: [3]float64{0.1, 0.2, 0.3},
				Exponents: []float64{3.1, 0.7, 0.2}, Coefficients: []float64{0.3, 0.5, 0.4}}
			n := s.NumFunctions()
			S := Overlap(s, s)
			for i := 0; i < n; i++ {
				if math.Abs(S[i*n+i]-1) > 1e-13 {
					t.Errorf("l=%d pure=%v: S[%d][%d] = %.16g", l, pure, i, i, S[i*n+i])
				}
			}
			if l == 2 && !pure {
				if math.Abs(S[0*n+3]-1.0/3) > 1e-14 {
					t.Errorf("⟨xx|yy⟩ = %.16g, want 1/3", S[3])
				}
			}
		}
	}
}

func TestDerivativeAvailability(t *testing.T) {
	s := Shell{L: 1, Center: [3]float64{0, 0, 0.5}, Exponents: []float64{1}, Coefficients: []float64{1}}
	d, err := ERIDeriv1(s, s, s, s)
	if err != nil {
		t.Fatalf("ERI derivatives: %v", err)
	}
	// All shells on one centre: translational invariance makes the sum of
	// the four centre derivatives vanish (and each is zero by symmetry).
	for k := 0; k < 3; k++ {
		for i := range d[k] {
			sum := d[k][i] + d[3+k][i] + d[6+k][i] + d[9+k][i]
			if math.Abs(sum) > 1e-12 {
				t.Errorf("Σ derivatives %d[%d] = %g", k, i, sum)
			}
		}
	}
	if _, err := OneBodyDeriv1(OverlapOperator, s, s, nil, nil); err != nil {
		t.Logf("one-electron derivatives unavailable in this libint2 build: %v", err)
	}
}

// The bulk benchmark entry point covers exactly the unique quartets and
// converts like ERI: its count and checksum equal those accumulated from
// ERI quartet by quartet.
func TestERIAllUniqueMatchesERI(t *testing.T) {
	shells := []Shell{
		{L: 0, Center: [3]float64{0, 0, 0}, Exponents: []float64{3.4, 0.6}, Coefficients: []float64{0.4, 0.7}},
		{L: 1, Center: [3]float64{0, 0, 1.4}, Exponents: []float64{1.1}, Coefficients: []float64{1}},
		{L: 2, Center: [3]float64{0.5, -0.3, 0.2}, Exponents: []float64{0.8}, Coefficients: []float64{1}},
		{L: 2, Pure: true, Center: [3]float64{-0.5, 0.3, 0.9}, Exponents: []float64{1.3, 0.4}, Coefficients: []float64{0.5, 0.6}},
	}
	count, sum := 0, 0.0
	for i := range shells {
		for j := 0; j <= i; j++ {
			for k := 0; k <= i; k++ {
				lmax := k
				if k == i {
					lmax = j
				}
				for l := 0; l <= lmax; l++ {
					v := ERI(shells[i], shells[j], shells[k], shells[l])
					count += len(v)
					for _, x := range v {
						sum += x
					}
				}
			}
		}
	}
	gotCount, gotSum := ERIAllUnique(shells)
	if gotCount != count || math.Abs(gotSum-sum) > 1e-12*math.Abs(sum) {
		t.Errorf("ERIAllUnique = (%d, %.15g), quartet by quartet (%d, %.15g)", gotCount, gotSum, count, sum)
	}
}

// Angular momenta beyond the libint2 build are reported, not fatal.
func TestBeyondBuildLimits(t *testing.T) {
	h := Shell{L: 5, Center: [3]float64{0, 0, 0.5}, Exponents: []float64{1}, Coefficients: []float64{1}}
	s := Shell{L: 0, Exponents: []float64{1}, Coefficients: []float64{1}}
	if _, err := ERIDeriv1(h, s, s, s); err == nil {
		t.Errorf("ERI derivatives with l = 5: no error, but the build stops at l = 4")
	}
}
