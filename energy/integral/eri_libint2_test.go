//go:build libint2

package integral

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
	"poise/energy/integral/libintref"
	"poise/energy/molecule"
)

func eriToLibint(s basis.Shell) libintref.Shell {
	return libintref.Shell{L: s.L, Pure: s.Pure, Center: s.Center, Exponents: s.Exponents, Coefficients: s.Coefficients}
}

// eriRandomShellSpread is eriRandomShell with centres in a box of the given
// size (bohr), so that both overlapping and distant shells occur.
func eriRandomShellSpread(rng *rand.Rand, l int, pure bool, box float64) basis.Shell {
	s := eriRandomShell(rng, l, pure)
	for k := 0; k < 3; k++ {
		s.Center[k] = box * (rng.Float64() - 0.5)
	}
	return s
}

// eriCheckLibint compares one quartet of shells with libint2.
func eriCheckLibint(t *testing.T, shells [4]basis.Shell) {
	t.Helper()
	e := NewERI(NewBasis(shells[:]))
	w := e.NewWorkspace()
	got := e.Quartet(w, 0, 1, 2, 3)
	want := libintref.ERI(eriToLibint(shells[0]), eriToLibint(shells[1]), eriToLibint(shells[2]), eriToLibint(shells[3]))
	name := fmt.Sprintf("(%s%s|%s%s) pure=%v,%v,%v,%v",
		basis.AngularLetter(shells[0].L), basis.AngularLetter(shells[1].L),
		basis.AngularLetter(shells[2].L), basis.AngularLetter(shells[3].L),
		shells[0].Pure, shells[1].Pure, shells[2].Pure, shells[3].Pure)
	eriCompare(t, name, got, want)
}

// TestERIAgainstLibint2AllClassesToF covers every (la, lb, lc, ld) with
// l ≤ 3, Cartesian and spherical, on random contracted shells: libint2
// 2.7.2 (Debian libint2-dev) is the reference.
func TestERIAgainstLibint2AllClassesToF(t *testing.T) {
	rng := rand.New(rand.NewPCG(2024, 12))
	for la := 0; la <= 3; la++ {
		for lb := 0; lb <= 3; lb++ {
			for lc := 0; lc <= 3; lc++ {
				for ld := 0; ld <= 3; ld++ {
					for _, pure := range []bool{false, true} {
						box := []float64{0.5, 3, 8}[rng.IntN(3)]
						var sh [4]basis.Shell
						for x, l := range [4]int{la, lb, lc, ld} {
							sh[x] = eriRandomShellSpread(rng, l, pure, box)
						}
						eriCheckLibint(t, sh)
					}
				}
			}
		}
	}
}

// TestERIAgainstLibint2HighL samples classes with g and h shells, mixed
// Cartesian and spherical shells, and shells sharing centres.
func TestERIAgainstLibint2HighL(t *testing.T) {
	rng := rand.New(rand.NewPCG(99, 3))
	cases := [][4]int{
		{4, 0, 0, 0}, {0, 4, 0, 0}, {5, 0, 0, 0}, {0, 0, 0, 5}, {4, 4, 0, 0}, {0, 0, 4, 4},
		{4, 1, 2, 0}, {2, 4, 1, 3}, {5, 2, 1, 0}, {1, 5, 0, 2}, {3, 3, 5, 0}, {4, 4, 4, 0},
		{5, 5, 1, 0}, {4, 4, 4, 4}, {5, 5, 5, 5}, {5, 4, 3, 2}, {0, 5, 5, 0}, {2, 2, 5, 5},
	}
	for n := 0; n < 12; n++ {
		var c [4]int
		for x := range c {
			c[x] = rng.IntN(6)
		}
		c[rng.IntN(4)] = 4 + rng.IntN(2)
		cases = append(cases, c)
	}
	for i, c := range cases {
		box := []float64{0.7, 2.5, 6}[i%3]
		var sh [4]basis.Shell
		for x, l := range c {
			sh[x] = eriRandomShellSpread(rng, l, rng.IntN(2) == 0, box)
			if c[0]+c[1]+c[2]+c[3] > 12 {
				// Keep the biggest classes to two primitives.
				sh[x].Exponents, sh[x].Coefficients = sh[x].Exponents[:1], sh[x].Coefficients[:1]
			}
		}
		if i%4 == 1 {
			sh[1].Center = sh[0].Center // one-centre bra
		}
		if i%4 == 2 {
			sh[2].Center, sh[3].Center = sh[0].Center, sh[0].Center
		}
		eriCheckLibint(t, sh)
	}
}

// TestERIAgainstLibint2Benzene compares a sample of shell quartets of
// benzene/6-31G* and the sum over all unique quartets with libint2.
func TestERIAgainstLibint2Benzene(t *testing.T) {
	shells := eriBenzeneShells(t)
	b := NewBasis(shells)
	e := NewERI(b)
	w := e.NewWorkspace()
	ls := make([]libintref.Shell, len(shells))
	for i, s := range shells {
		ls[i] = eriToLibint(s)
	}
	rng := rand.New(rand.NewPCG(6, 31))
	n := len(shells)
	for trial := 0; trial < 1500; trial++ {
		i, j, k, l := rng.IntN(n), rng.IntN(n), rng.IntN(n), rng.IntN(n)
		got := e.Quartet(w, i, j, k, l)
		want := libintref.ERI(ls[i], ls[j], ls[k], ls[l])
		eriCompare(t, fmt.Sprintf("benzene (%d %d|%d %d)", i, j, k, l), got, want)
	}
	count, sum := eriAllUnique(e, w)
	wcount, wsum := libintref.ERIAllUnique(ls)
	if count != wcount {
		t.Errorf("unique integrals: %d, libint2 %d", count, wcount)
	}
	if math.Abs(sum-wsum) > 1e-10*math.Abs(wsum) {
		t.Errorf("sum of unique integrals %.15g, libint2 %.15g", sum, wsum)
	}
}

// TestERIAgainstLibint2Molecules samples quartets of molecules whose basis
// sets stretch the exponent range: HBr in 6-31G* (Br core s exponents near
// 1e5, Cartesian d) and HF in aug-cc-pVTZ (spherical d and f, diffuse
// functions down to about 0.02 bohr⁻²).
func TestERIAgainstLibint2Molecules(t *testing.T) {
	cases := []struct{ xyz, basis string }{
		{"2\nHBr\nH 0 0 0\nBr 0 0 1.414\n", "6-31G*"},
		{"2\nHF\nH 0 0 0\nF 0 0 0.917\n", "aug-cc-pVTZ"},
	}
	rng := rand.New(rand.NewPCG(35, 1))
	for _, c := range cases {
		mol, err := molecule.ParseXYZ("test.xyz", []byte(c.xyz))
		if err != nil {
			t.Fatal(err)
		}
		set, err := basis.Load(c.basis)
		if err != nil {
			t.Fatal(err)
		}
		shells, err := set.Shells(mol, basis.Default)
		if err != nil {
			t.Fatal(err)
		}
		e := NewERI(NewBasis(shells))
		w := e.NewWorkspace()
		n := len(shells)
		for trial := 0; trial < 300; trial++ {
			i, j, k, l := rng.IntN(n), rng.IntN(n), rng.IntN(n), rng.IntN(n)
			got := e.Quartet(w, i, j, k, l)
			want := libintref.ERI(eriToLibint(shells[i]), eriToLibint(shells[j]), eriToLibint(shells[k]), eriToLibint(shells[l]))
			eriCompare(t, fmt.Sprintf("%s/%s (%d %d|%d %d)", mol.Formula(), c.basis, i, j, k, l), got, want)
		}
	}
}
