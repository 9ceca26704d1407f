package gradient

import (
	"context"
	"math"
	"testing"

	"poise/energy/basis"
	"poise/energy/scf"
)

// Points carry the HOMO–LUMO gap of their SCF: for closed-shell water the
// difference of orbital energies 5 and 4 (from 0) of the same SCF run
// directly, and for the OH radical the smaller of the α and β gaps.
func TestPointGap(t *testing.T) {
	for _, c := range []struct {
		name  string
		atoms []atomSpec
		mult  int
	}{{"water", waterDistorted, 1}, {"hydroxyl", hydroxyl, 2}} {
		m := makeMol(t, c.atoms, 0, c.mult)
		s := surface(t, m, "hf", "sto-3g", basis.Default, 0, scf.Options{})
		var p Point
		if err := s.Evaluate(context.Background(), Coordinates(m), Request{}, &p); err != nil {
			t.Fatal(err)
		}
		set, _ := basis.Load("sto-3g")
		shells, err := set.Shells(m, basis.Default)
		if err != nil {
			t.Fatal(err)
		}
		res, err := scf.Run(context.Background(), m, shells, scf.Options{Threads: 2})
		if err != nil {
			t.Fatal(err)
		}
		want := math.Inf(1)
		for sp, e := range res.OrbitalEnergies {
			n := res.NumAlpha
			if sp == 1 {
				n = res.NumBeta
			}
			want = math.Min(want, e[n]-e[n-1])
		}
		if !(p.GapHartree > 0) || math.Abs(p.GapHartree-want) > 1e-6 {
			t.Errorf("%s: gap %.6f Eh, orbital energies give %.6f", c.name, p.GapHartree, want)
		}
	}
}
