package grid

import (
	"fmt"
	"math"
	"os"
	"testing"

	"poise/energy/units"
)

func TestExplore(t *testing.T) {
	if os.Getenv("GRID_EXPLORE") == "" {
		t.Skip()
	}
	ref := LevelSpec{Level: 9, Radial: [5]int{200, 250, 250, 250, 250}, Angular: [3]int{5810, 5810, 5810}}
	b := 1.087 * units.AngstromBohr
	s := b / math.Sqrt(3)
	methane := func() ([]int, [][3]float64, [][2]int) {
		return []int{6, 1, 1, 1, 1}, [][3]float64{{0, 0, 0}, {s, s, s}, {-s, -s, s}, {-s, s, -s}, {s, -s, -s}}, [][2]int{{0, 1}, {0, 2}, {0, 3}, {0, 4}}
	}
	hcn := func() ([]int, [][3]float64, [][2]int) {
		return []int{1, 6, 7}, [][3]float64{{0, 0, -1.066 * units.AngstromBohr}, {0, 0, 0}, {0, 0, 1.153 * units.AngstromBohr}}, [][2]int{{0, 1}, {1, 2}}
	}
	for _, mol := range []string{"water", "benzene", "methane", "hcn"} {
		var z []int
		var pos [][3]float64
		var bonds [][2]int
		switch mol {
		case "water":
			z, pos, bonds = water()
		case "benzene":
			z, pos, bonds = benzene()
		case "methane":
			z, pos, bonds = methane()
		case "hcn":
			z, pos, bonds = hcn()
		}
		m := newModel(z, pos, bonds, 0.3, 1.2)
		var lref float64
		if mol == "water" {
			g, _ := build(z, pos, ref, IdentityFrame(), 2)
			_, lref = m.integrals(g)
		} else {
			g, _ := build(z, pos, levels[4], IdentityFrame(), 2)
			_, lref = m.integrals(g)
		}
		fmt.Printf("%s ref lda %.12f count %.3f\n", mol, lref, m.count)
		prev := 0.0
		for _, spec := range levels {
			g, _ := build(z, pos, spec, IdentityFrame(), 2)
			n, l := m.integrals(g)
			f0, _ := StandardFrame(z, pos)
			g0, _ := build(z, pos, spec, f0, 2)
			n0, l0 := m.integrals(g0)
			var lmin, lmax = math.Inf(1), math.Inf(-1)
			var nmin, nmax = math.Inf(1), math.Inf(-1)
			var smax, snmax float64
			for _, e := range testRotations {
				rp := rotate(pos, rotation(e[0], e[1], e[2]), [3]float64{0.1, -0.2, 0.3})
				mr := newModel(z, rp, bonds, 0.3, 1.2)
				gr, _ := build(z, rp, spec, IdentityFrame(), 2)
				nr, lr := mr.integrals(gr)
				lmin, lmax = math.Min(lmin, lr), math.Max(lmax, lr)
				nmin, nmax = math.Min(nmin, nr-m.count), math.Max(nmax, nr-m.count)
				f, _ := StandardFrame(z, rp)
				gs, _ := build(z, rp, spec, f, 2)
				ns, ls := mr.integrals(gs)
				smax = math.Max(smax, math.Abs(ls-l0)/lref)
				snmax = math.Max(snmax, math.Abs(ns-n0))
			}
			fmt.Printf("  L%d npts %7d dN(id) %9.2e dN(std) %9.2e dN(rot,id) [%9.2e,%9.2e] dLDA(ref) %9.2e dLDA(prev) %9.2e rotspread(id) %9.2e  std-frame rot: lda %9.2e N %9.2e\n",
				spec.Level, g.NumPoints(), n-m.count, n0-m.count, nmin, nmax, (l-lref)/lref, (l-prev)/lref, (lmax-lmin)/math.Abs(lref), smax, snmax)
			prev = l
		}
	}
}
