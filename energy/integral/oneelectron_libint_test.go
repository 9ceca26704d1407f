//go:build libint2

package integral

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
	"poise/energy/integral/libintref"
)

// Reference values in this file come from libint2 (through package
// libintref, which converts them to poise's conventions).

// randomShells returns count random contracted shells for every angular
// momentum 0 … lmax and both kinds (Cartesian and spherical): 1–4
// primitives with exponents log-uniform in [0.05, 50], coefficients
// uniform in [−0.5, 1], centres in a 4-bohr cube.
func randomShells(rng *rand.Rand, lmax, count int) []basis.Shell {
	var out []basis.Shell
	for l := 0; l <= lmax; l++ {
		for _, pure := range []bool{false, true} {
			for c := 0; c < count; c++ {
				np := 1 + rng.IntN(4)
				s := basis.Shell{L: l, Pure: pure}
				for k := 0; k < 3; k++ {
					s.Center[k] = 4*rng.Float64() - 2
				}
				for p := 0; p < np; p++ {
					s.Exponents = append(s.Exponents, 0.05*math.Pow(1000, rng.Float64()))
					s.Coefficients = append(s.Coefficients, 1.5*rng.Float64()-0.5)
				}
				out = append(out, s)
			}
		}
	}
	return out
}

func toRef(s basis.Shell) libintref.Shell {
	return libintref.Shell{L: s.L, Pure: s.Pure, Center: s.Center, Exponents: s.Exponents, Coefficients: s.Coefficients}
}

// compareBlock checks the (i, j) shell block of the nbf×nbf matrix m
// against ref with the tolerance 1e−12 + 1e−10·|ref|.
func compareBlock(t *testing.T, what string, b *Basis, m []float64, i, j int, ref []float64) {
	t.Helper()
	n := b.NBF
	ni, nj := b.shells[i].nfunc, b.shells[j].nfunc
	if len(ref) != ni*nj {
		t.Fatalf("%s (%d,%d): reference has %d values, want %d", what, i, j, len(ref), ni*nj)
	}
	bad := 0
	for p := 0; p < ni; p++ {
		for q := 0; q < nj; q++ {
			got := m[(b.Offsets[i]+p)*n+b.Offsets[j]+q]
			want := ref[p*nj+q]
			if math.Abs(got-want) > 1e-12+1e-10*math.Abs(want) {
				if bad < 3 {
					si, sj := b.Shells[i], b.Shells[j]
					t.Errorf("%s shells %d (l=%d pure=%v) × %d (l=%d pure=%v) element (%d,%d): got %.16g, libint2 %.16g",
						what, i, si.L, si.Pure, j, sj.L, sj.Pure, p, q, got, want)
				}
				bad++
			}
		}
	}
}

func TestOneElectronAgainstLibint2(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 13))
	shells := randomShells(rng, 5, 2)
	b := NewBasis(shells)
	charges := []float64{8, 1, 3.5}
	centers := [][3]float64{{0.1, 0.2, -0.3}, {1.5, -1, 0.7}, {-2, 0.4, 1.9}}
	origin := [3]float64{0.3, -0.7, 0.2}
	S, T, V := b.Overlap(), b.Kinetic(), b.Nuclear(charges, centers)
	D := b.Dipole(origin)
	for i := range shells {
		for j := 0; j <= i; j++ {
			ri, rj := toRef(shells[i]), toRef(shells[j])
			compareBlock(t, "overlap", b, S, i, j, libintref.Overlap(ri, rj))
			compareBlock(t, "kinetic", b, T, i, j, libintref.Kinetic(ri, rj))
			compareBlock(t, "nuclear", b, V, i, j, libintref.Nuclear(ri, rj, charges, centers))
			d := libintref.Dipole(ri, rj, origin)
			for k := 0; k < 3; k++ {
				compareBlock(t, fmt.Sprintf("dipole %c", "xyz"[k]), b, D[k], i, j, d[k])
			}
		}
	}
}

// Shells sharing a centre, and charges sitting on shell centres, are the
// special cases of the recurrences (P−A = 0, P−C = 0, Boys argument 0).
func TestOneElectronCoincidentCentresAgainstLibint2(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 19))
	shells := randomShells(rng, 5, 1)
	for i := range shells {
		shells[i].Center = [3]float64{0.5, -0.25, 1}
	}
	b := NewBasis(shells)
	charges := []float64{6}
	centers := [][3]float64{{0.5, -0.25, 1}}
	origin := [3]float64{0.5, -0.25, 1}
	S, T, V := b.Overlap(), b.Kinetic(), b.Nuclear(charges, centers)
	D := b.Dipole(origin)
	for i := range shells {
		for j := 0; j <= i; j++ {
			ri, rj := toRef(shells[i]), toRef(shells[j])
			compareBlock(t, "overlap", b, S, i, j, libintref.Overlap(ri, rj))
			compareBlock(t, "kinetic", b, T, i, j, libintref.Kinetic(ri, rj))
			compareBlock(t, "nuclear", b, V, i, j, libintref.Nuclear(ri, rj, charges, centers))
			d := libintref.Dipole(ri, rj, origin)
			for k := 0; k < 3; k++ {
				compareBlock(t, fmt.Sprintf("dipole %c", "xyz"[k]), b, D[k], i, j, d[k])
			}
		}
	}
}

// Water in STO-3G, whole matrices against libint2.
func TestWaterSTO3GAgainstLibint2(t *testing.T) {
	sh, Z, R := waterSTO3G()
	b := NewBasis(sh)
	S, T, V := b.Overlap(), b.Kinetic(), b.Nuclear(Z, R)
	for i := range sh {
		for j := range sh {
			ri, rj := toRef(sh[i]), toRef(sh[j])
			compareBlock(t, "overlap", b, S, i, j, libintref.Overlap(ri, rj))
			compareBlock(t, "kinetic", b, T, i, j, libintref.Kinetic(ri, rj))
			compareBlock(t, "nuclear", b, V, i, j, libintref.Nuclear(ri, rj, Z, R))
		}
	}
}

// The Boys function against libint2's Chebyshev interpolation
// (libint2::FmEval_Chebyshev7), relative tolerance 1e−13.
func TestBoysAgainstLibint2(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 29))
	mine := make([]float64, BoysMaxOrder+1)
	ref := make([]float64, BoysMaxOrder+1)
	ts := []float64{0, 1e-12, 0.05, 35.99, 36, 36.01, 117, 118, 500}
	for i := 0; i < 400; i++ {
		ts = append(ts, 60*rng.Float64())
	}
	for _, x := range ts {
		Boys(BoysMaxOrder, x, mine)
		if err := libintref.Boys(BoysMaxOrder, x, ref); err != nil {
			t.Fatal(err)
		}
		for m := range mine {
			if math.Abs(mine[m]-ref[m]) > 1e-13*ref[m] {
				t.Errorf("F_%d(%g): got %.17g, libint2 %.17g", m, x, mine[m], ref[m])
			}
		}
	}
}
