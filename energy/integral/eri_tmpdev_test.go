//go:build eritmp && libint2

package integral

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"poise/energy/basis"
	"poise/energy/integral/libintref"
	"poise/energy/molecule"
)

func TestTmpDev(t *testing.T) {
	cases := []struct{ xyz, basis string }{
		{"2\nHBr\nH 0 0 0\nBr 0 0 1.414\n", "6-31G*"},
		{"2\nHF\nH 0 0 0\nF 0 0 0.917\n", "aug-cc-pVTZ"},
		{"2\nKr2\nKr 0 0 0\nKr 0 0 4.0\n", "6-31G*"},
	}
	rng := rand.New(rand.NewPCG(35, 1))
	for _, c := range cases {
		mol, _ := molecule.ParseXYZ("test.xyz", []byte(c.xyz))
		set, _ := basis.Load(c.basis)
		shells, _ := set.Shells(mol, basis.Default)
		e := NewERI(NewBasis(shells))
		w := e.NewWorkspace()
		n := len(shells)
		var maxAbs, maxRel, maxVal float64
		for trial := 0; trial < 3000; trial++ {
			i, j, k, l := rng.IntN(n), rng.IntN(n), rng.IntN(n), rng.IntN(n)
			got := e.Quartet(w, i, j, k, l)
			want := libintref.ERI(eriToLibint(shells[i]), eriToLibint(shells[j]), eriToLibint(shells[k]), eriToLibint(shells[l]))
			for x := range want {
				d := math.Abs(got[x] - want[x])
				maxAbs = math.Max(maxAbs, d)
				maxVal = math.Max(maxVal, math.Abs(want[x]))
				if math.Abs(want[x]) > 1e-6 {
					maxRel = math.Max(maxRel, d/math.Abs(want[x]))
				}
			}
		}
		t.Logf("%s %s: max abs dev %.3g, max rel dev (|v|>1e-6) %.3g, max |v| %.3g", mol.Formula(), c.basis, maxAbs, maxRel, maxVal)
	}
}

func TestTmpWaterTZ(t *testing.T) {
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	mol, _ := molecule.ReadXYZFile("../../testdata/molecules/water.xyz")
	for _, bn := range []string{"cc-pVTZ", "cc-pVQZ"} {
		set, _ := basis.Load(bn)
		shells, _ := set.Shells(mol, basis.Default)
		ls := make([]libintref.Shell, len(shells))
		for i, s := range shells {
			ls[i] = eriToLibint(s)
		}
		for r := 0; r < 2; r++ {
			c0 := eriThreadCPU()
			e := NewERI(NewBasis(shells))
			_, s1 := eriAllUnique(e, e.NewWorkspace())
			c1 := eriThreadCPU()
			_, s2 := libintref.ERIAllUnique(ls)
			c2 := eriThreadCPU()
			t.Logf("%s: poise %.3f s libint2 %.3f s ratio %.2f (sums %.10g %.10g)", bn, (c1 - c0).Seconds(), (c2 - c1).Seconds(), float64(c1-c0)/float64(c2-c1), s1, s2)
		}
	}
}
