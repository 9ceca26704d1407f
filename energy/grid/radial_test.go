package grid

import (
	"math"
	"testing"
)

// TestRadialM4 integrates radial functions with closed-form integrals: to
// 1e-9 relative for the exponential and Gaussian densities of valence
// shells, and to 1e-6 relative (the accuracy the levels aim at) at the
// ends of the exponent range of a 6-31G*-type density: a diffuse Gaussian
// (density exponent 0.05 bohr⁻²) and the tightest oxygen core primitive
// squared (density exponent ≈ 1.1e4 bohr⁻²)
// (analytic; I. S. Gradshteyn, I. M. Ryzhik, 3.381.4 and 3.326.2):
// ∫₀^∞ r² e^{−βr} dr = 2/β³ and ∫₀^∞ r² e^{−αr²} dr = √π/(4 α^{3/2}).
func TestRadialM4(t *testing.T) {
	for _, tc := range []struct {
		name string
		n    int
		xi   float64
		f    func(r float64) float64
		want float64
		tol  float64
	}{
		{"H 1s density", 55, xi(1), func(r float64) float64 { return math.Exp(-2 * r) }, 2 / 8.0, 1e-9},
		{"O core", 70, xi(8), func(r float64) float64 { return math.Exp(-15.4 * r) }, 2 / math.Pow(15.4, 3), 1e-9},
		{"valence Gaussian", 70, xi(6), func(r float64) float64 { return math.Exp(-0.2 * r * r) }, math.Sqrt(math.Pi) / (4 * math.Pow(0.2, 1.5)), 1e-9},
		{"diffuse Gaussian", 70, xi(6), func(r float64) float64 { return math.Exp(-0.05 * r * r) }, math.Sqrt(math.Pi) / (4 * math.Pow(0.05, 1.5)), 1e-6},
		{"oxygen core Gaussian", 70, xi(8), func(r float64) float64 { return math.Exp(-1.1e4 * r * r) }, math.Sqrt(math.Pi) / (4 * math.Pow(1.1e4, 1.5)), 1e-6},
		{"tight Gaussian", 70, xi(6), func(r float64) float64 { return math.Exp(-1000 * r * r) }, math.Sqrt(math.Pi) / (4 * math.Pow(1000, 1.5)), 1e-9},
		{"Kr row", 90, xi(36), func(r float64) float64 { return math.Exp(-70 * r) }, 2 / math.Pow(70, 3), 1e-9},
	} {
		t.Run(tc.name, func(t *testing.T) {
			r, w := radialM4(tc.n, tc.xi)
			s := 0.0
			for i := range r {
				s += w[i] * tc.f(r[i])
				if i > 0 && r[i] <= r[i-1] {
					t.Fatalf("radii not increasing at %d", i)
				}
			}
			if rel := math.Abs(s-tc.want) / tc.want; rel > tc.tol {
				t.Errorf("∫ = %.15g, want %.15g (relative error %.2e > %.0e)", s, tc.want, rel, tc.tol)
			}
		})
	}
}

// TestElementData checks the element tables cover H–Xe with positive values.
func TestElementData(t *testing.T) {
	if len(braggSlaterAngstrom) != maxZ+1 {
		t.Fatalf("Bragg–Slater table has %d entries, want %d", len(braggSlaterAngstrom), maxZ+1)
	}
	if len(taXi) != 37 {
		t.Fatalf("ξ table has %d entries, want H–Kr", len(taXi))
	}
	for z := 1; z <= maxZ; z++ {
		if braggSlaterAngstrom[z] <= 0 || xi(z) <= 0 {
			t.Errorf("Z=%d: radius %g, ξ %g", z, braggSlaterAngstrom[z], xi(z))
		}
	}
}
