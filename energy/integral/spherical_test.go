package integral

import (
	"math"
	"testing"
)

// cartesianSelfOverlap is the overlap matrix of the axially normalized
// Cartesian components of one primitive shell with itself:
// ⟨a|b⟩ = Π_k (a_k+b_k−1)!! / (2l−1)!! when every a_k+b_k is even, else 0
// (the Gaussian moments ∫x^{2n}e^{−2αx²}dx = (2n−1)!!/(4α)^n·√(π/2α), a
// textbook result; the α-dependence cancels against the axial norm).
func cartesianSelfOverlap(l int) []float64 {
	comps := cartesianExponents(l)
	n := len(comps)
	s := make([]float64, n*n)
	for i, a := range comps {
		for j, b := range comps {
			v := 1.0
			for k := 0; k < 3; k++ {
				if (a[k]+b[k])%2 != 0 {
					v = 0
					break
				}
				v *= doubleFactorial(a[k] + b[k] - 1)
			}
			s[i*n+j] = v / doubleFactorial(2*l-1)
		}
	}
	return s
}

// The transformed self-overlap of a shell must be the identity: real solid
// harmonics of one l are orthogonal and, by construction, unit-normalized.
func TestSphericalTransformOrthonormal(t *testing.T) {
	for l := 0; l <= maxSphericalL; l++ {
		tr := sphericalTransform(l)
		s := cartesianSelfOverlap(l)
		nc := len(s)
		nc = int(math.Sqrt(float64(nc)) + 0.5)
		np := 2*l + 1
		if len(tr) != np*nc {
			t.Fatalf("l=%d: transform has %d entries, want %d", l, len(tr), np*nc)
		}
		for p := 0; p < np; p++ {
			for q := 0; q < np; q++ {
				var v float64
				for c := 0; c < nc; c++ {
					for d := 0; d < nc; d++ {
						v += tr[p*nc+c] * s[c*nc+d] * tr[q*nc+d]
					}
				}
				want := 0.0
				if p == q {
					want = 1
				}
				if math.Abs(v-want) > 1e-13 {
					t.Errorf("l=%d: (T S Tᵀ)[%d][%d] = %.16g, want %g", l, p, q, v, want)
				}
			}
		}
	}
}

// Explicit low-l harmonics. In terms of unit-normalized Cartesians the real
// solid harmonics are (Schlegel & Frisch, Int. J. Quantum Chem. 54, 83
// (1995), and any table of real spherical harmonics; from memory):
// p: (y, z, x); d: (xy, yz, zz − (xx+yy)/2, xz, √3/2·(xx−yy)).
// Axially normalized xy, xz, yz are √3 times smaller than unit-normalized
// ones, so their coefficients gain a factor √3 here.
func TestSphericalTransformLowL(t *testing.T) {
	s3 := math.Sqrt(3)
	tests := []struct {
		l    int
		want []float64
	}{
		{0, []float64{1}},
		{1, []float64{
			0, 1, 0, // m=−1: y
			0, 0, 1, // m=0: z
			1, 0, 0, // m=+1: x
		}},
		// columns xx xy xz yy yz zz
		{2, []float64{
			0, s3, 0, 0, 0, 0, // m=−2: xy
			0, 0, 0, 0, s3, 0, // m=−1: yz
			-0.5, 0, 0, -0.5, 0, 1, // m=0
			0, 0, s3, 0, 0, 0, // m=+1: xz
			s3 / 2, 0, 0, -s3 / 2, 0, 0, // m=+2
		}},
	}
	for _, tc := range tests {
		got := sphericalTransform(tc.l)
		if len(got) != len(tc.want) {
			t.Fatalf("l=%d: %d entries, want %d", tc.l, len(got), len(tc.want))
		}
		for i := range got {
			if math.Abs(got[i]-tc.want[i]) > 1e-14 {
				t.Errorf("l=%d entry %d: got %.16g, want %.16g", tc.l, i, got[i], tc.want[i])
			}
		}
	}
}
