package integral

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mathext"
)

// boysReference evaluates F_m(t) for t ≥ 1 through gonum's regularized
// lower incomplete gamma function: F_m(t) = Γ(m+½)·P(m+½, t) / (2 t^{m+½})
// (the definition of F_m after the substitution x = t u²). Below t = 1,
// where gonum's P(a, x) for large a carries relative errors of several
// 1e−14, it sums the expansion of e^{−tu²} under the integral,
// F_m(t) = Σ_k (−t)^k / (k!·(2m+2k+1)), whose terms fall monotonically
// there (textbook; e.g. Helgaker, Jørgensen & Olsen, "Molecular
// Electronic-Structure Theory", section 9.8, from memory).
func boysReference(m int, t float64) float64 {
	if t < 1 {
		var sum float64
		term := 1.0 // (−t)^k/k!
		for k := 0; k < 60; k++ {
			sum += term / float64(2*m+2*k+1)
			term *= -t / float64(k+1)
		}
		return sum
	}
	a := float64(m) + 0.5
	return 0.5 * math.Gamma(a) * (mathext.GammaIncReg(a, t) / math.Pow(t, a))
}

func TestBoysAgainstIncompleteGamma(t *testing.T) {
	ts := []float64{0, 1e-14, 1e-9, 1e-6, 1e-4, 0.01, 0.05, 0.0499999, 0.07, 0.1, 0.15,
		0.5, 1, 1.234567, 2.5, 5, 7.77, 10, 12.3456, 17.5, 20, 25.05, 30, 33.3,
		35.9, 35.95, 35.999999, 36, 36.0000001, 40, 50, 75, 100, 117, 250, 1e3, 1e4, 1e6}
	rng := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 300; i++ {
		ts = append(ts, 45*rng.Float64())
	}
	for i := 0; i < 50; i++ {
		ts = append(ts, math.Exp(-20+26*rng.Float64()))
	}
	out := make([]float64, BoysMaxOrder+1)
	worst := 0.0
	for _, x := range ts {
		for _, mmax := range []int{0, 1, 2, 3, 4, 8, 13, 22, 27, BoysMaxOrder} {
			for i := range out {
				out[i] = math.NaN()
			}
			Boys(mmax, x, out)
			for m := 0; m <= mmax; m++ {
				want := boysReference(m, x)
				rel := math.Abs(out[m]-want) / want
				if rel > worst {
					worst = rel
				}
				if !(rel <= 3e-14) {
					t.Errorf("F_%d(%g) with mmax=%d: got %.17g, want %.17g (rel. err. %.2g)", m, x, mmax, out[m], want, rel)
				}
			}
		}
	}
	t.Logf("largest relative deviation from the incomplete gamma reference: %.3g", worst)
}

// F_m(0) = 1/(2m+1) exactly (elementary integral).
func TestBoysAtZero(t *testing.T) {
	out := make([]float64, BoysMaxOrder+1)
	Boys(BoysMaxOrder, 0, out)
	for m, v := range out {
		if want := 1 / float64(2*m+1); math.Abs(v-want) > 1e-16*want {
			t.Errorf("F_%d(0) = %.17g, want %.17g", m, v, want)
		}
	}
}

func BenchmarkBoys(b *testing.B) {
	ts := make([]float64, 1024)
	rng := rand.New(rand.NewPCG(3, 4))
	for i := range ts {
		ts[i] = 40 * rng.Float64()
	}
	out := make([]float64, BoysMaxOrder+1)
	for _, mmax := range []int{0, 2, 4, 8, 16, 22} {
		b.Run("m="+itoa(mmax), func(b *testing.B) {
			for i := 0; b.Loop(); i++ {
				Boys(mmax, ts[i&1023], out)
			}
		})
	}
}

func itoa(n int) string {
	if n < 10 {
		return string(rune('0' + n))
	}
	return itoa(n/10) + string(rune('0'+n%10))
}
