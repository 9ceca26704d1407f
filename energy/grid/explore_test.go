package grid

import (
	"fmt"
	"math"
	"os"
	"testing"
)

func TestExplore(t *testing.T) {
	if os.Getenv("GRID_EXPLORE") == "" {
		t.Skip()
	}
	ref := LevelSpec{Level: 9, Radial: [5]int{200, 250, 250, 250, 250}, Angular: [3]int{5810, 5810, 5810}}
	for _, mol := range []string{"water", "benzene"} {
		var z []int
		var pos [][3]float64
		var bonds [][2]int
		if mol == "water" {
			z, pos, bonds = water()
		} else {
			z, pos, bonds = benzene()
		}
		m := newModel(z, pos, bonds, 0.3, 1.2)
		for _, scheme := range []int{schemeBecke, schemeSSF} {
			g, _ := build(z, pos, ref, IdentityFrame(), 2, scheme)
			_, lref := m.integrals(g)
			fmt.Printf("%s scheme %d ref npts %d lda %.12f count %.3f\n", mol, scheme, g.NumPoints(), lref, m.count)
			for _, spec := range levels {
				g, _ := build(z, pos, spec, IdentityFrame(), 2, scheme)
				n, l := m.integrals(g)
				// rotations with lab-fixed grid
				var lmin, lmax = math.Inf(1), math.Inf(-1)
				var smax float64
				for _, e := range testRotations {
					rp := rotate(pos, rotation(e[0], e[1], e[2]), [3]float64{0.1, -0.2, 0.3})
					mr := newModel(z, rp, bonds, 0.3, 1.2)
					gr, _ := build(z, rp, spec, IdentityFrame(), 2, scheme)
					_, lr := mr.integrals(gr)
					lmin = math.Min(lmin, lr)
					lmax = math.Max(lmax, lr)
					f, _ := StandardFrame(z, rp)
					gs, _ := build(z, rp, spec, f, 2, scheme)
					_, ls := mr.integrals(gs)
					smax = math.Max(smax, math.Abs(ls-l))
				}
				fmt.Printf("  L%d npts %7d dN %9.2e  dLDA(ref) %9.2e  rotspread %9.2e  (std vs id %9.2e)\n",
					spec.Level, g.NumPoints(), n-m.count, (l-lref)/lref, (lmax-lmin)/math.Abs(lref), smax/lref)
			}
		}
	}
}
