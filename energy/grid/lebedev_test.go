package grid

import (
	"math"
	"testing"
)

// doubleFactorial returns n!! for odd n ≥ −1.
func doubleFactorial(n int) float64 {
	f := 1.0
	for k := n; k > 1; k -= 2 {
		f *= float64(k)
	}
	return f
}

// sphereAverage is the exact mean of x^a y^b z^c over the unit sphere: zero
// if any exponent is odd, else (a−1)!!(b−1)!!(c−1)!!/(a+b+c+1)!!
// (G. B. Folland, Amer. Math. Monthly 108, 446 (2001); analytic).
func sphereAverage(a, b, c int) float64 {
	if a%2 == 1 || b%2 == 1 || c%2 == 1 {
		return 0
	}
	return doubleFactorial(a-1) * doubleFactorial(b-1) * doubleFactorial(c-1) / doubleFactorial(a+b+c+1)
}

// TestLebedevRules checks every embedded rule against the exact sphere
// averages of all monomials up to its algebraic degree (degrees from
// V. I. Lebedev, D. N. Laikov, Doklady Mathematics 59, 477 (1999)), and that
// the rules used by the levels are all embedded.
func TestLebedevRules(t *testing.T) {
	degree := map[int]int{26: 7, 38: 9, 50: 11, 86: 15, 110: 17, 194: 23, 302: 29, 590: 41, 770: 47, 1202: 59}
	used := map[int]bool{}
	for _, l := range levels {
		for _, n := range l.Angular {
			used[n] = true
		}
	}
	for n := range used {
		if _, ok := degree[n]; !ok {
			t.Errorf("level uses a %d-point rule that this test does not know", n)
		}
	}
	for n, deg := range degree {
		r, err := loadLebedev(n)
		if err != nil {
			t.Fatal(err)
		}
		// Powers x^k, y^k, z^k per point.
		pw := func(v []float64) [][]float64 {
			p := make([][]float64, deg+1)
			for k := range p {
				p[k] = make([]float64, len(v))
				for i, x := range v {
					p[k][i] = math.Pow(x, float64(k))
				}
			}
			return p
		}
		px, py, pz := pw(r.x), pw(r.y), pw(r.z)
		maxErr := 0.0
		for a := 0; a <= deg; a++ {
			for b := 0; a+b <= deg; b++ {
				for c := 0; a+b+c <= deg; c++ {
					s := 0.0
					for i, w := range r.w {
						s += w * px[a][i] * py[b][i] * pz[c][i]
					}
					maxErr = math.Max(maxErr, math.Abs(s-sphereAverage(a, b, c)))
				}
			}
		}
		if maxErr > 1e-12 {
			t.Errorf("%d-point rule: largest monomial error %.2e up to degree %d", n, maxErr, deg)
		}
	}
}

func TestParseLebedevErrors(t *testing.T) {
	for _, tc := range []struct{ name, in string }{
		{"empty", "# nothing\n"},
		{"columns", "1 0 0\n"},
		{"number", "1 0 0 x\n"},
		{"offSphere", "1 1 0 1\n"},
		{"weights", "1 0 0 0.5\n"},
		{"nan", "NaN 0 0 1\n"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := parseLebedev([]byte(tc.in)); err == nil {
				t.Errorf("no error for %q", tc.in)
			}
		})
	}
	if _, err := loadLebedev(7); err == nil {
		t.Error("no error for a rule that is not embedded")
	}
}

func FuzzParseLebedev(f *testing.F) {
	f.Add([]byte("# c\n1 0 0 0.5\n-1 0 0 0.5\n"))
	f.Add([]byte("1 0 0 1\n"))
	f.Add([]byte("0 0 1 2\n0 0 -1 -1\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		r, err := parseLebedev(data)
		if err != nil {
			return
		}
		if r.n == 0 || len(r.x) != r.n || len(r.w) != r.n {
			t.Fatalf("inconsistent rule: n=%d", r.n)
		}
		sum := 0.0
		for i := range r.w {
			sum += r.w[i]
			if n2 := r.x[i]*r.x[i] + r.y[i]*r.y[i] + r.z[i]*r.z[i]; math.Abs(n2-1) > 1e-12 {
				t.Fatalf("point %d off the sphere", i)
			}
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Fatalf("weights sum to %g", sum)
		}
	})
}
