package dft

import (
	"context"
	"fmt"
	"math"
	"testing"

	"poise/energy/basis"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/molecule"
	"poise/energy/xc"
)

// xcEnergyAt returns E_xc for the fixed densities dens with the molecule's
// atoms (and their basis functions) at pos, integrated on the grid g.
func xcEnergyAt(t *testing.T, m *molecule.Molecule, set *basis.Set, conv basis.Convention, fn *xc.Functional,
	pos [][3]float64, g *grid.Grid, dens [][]float64) (float64, *Potential) {
	t.Helper()
	mm := m.Clone()
	for i := range mm.Atoms {
		mm.Atoms[i].Position = pos[i]
	}
	sh, err := set.Shells(mm, conv)
	if err != nil {
		t.Fatal(err)
	}
	b := integral.NewBasis(sh)
	p := New(fn, g, b, 2)
	v := make([][]float64, len(dens))
	for s := range v {
		v[s] = make([]float64, b.NBF*b.NBF)
	}
	e, _, err := p.Build(context.Background(), dens, v)
	if err != nil {
		t.Fatal(err)
	}
	return e, p
}

// TestXCGradientFixedGrid checks the exchange–correlation gradient formula
// against central differences of the quadrature energy for fixed densities
// on a fixed grid (points and weights), where the two are the same function
// of the nuclear positions (the reference is the definition of the
// derivative; step 1e-4 bohr, truncation error ~1e-9 Eh/bohr).
func TestXCGradientFixedGrid(t *testing.T) {
	cases := []struct {
		method, basis string
		conv          basis.Convention
		mult          int
		unrestricted  bool
	}{
		{"lda", "6-31g*", basis.Default, 1, false},
		{"b3lyp", "6-31g*", basis.Default, 1, false},
		{"pbe", "cc-pvdz", basis.Default, 1, true},
		{"b3lyp", "3-21g", basis.Default, 2, true},
	}
	for _, c := range cases {
		t.Run(fmt.Sprintf("%s/%s/mult%d", c.method, c.basis, c.mult), func(t *testing.T) {
			atoms := water
			charge := 0
			if c.mult == 2 {
				charge = 1
			}
			m := build(t, atoms, charge, c.mult)
			// Distort so that no component vanishes by symmetry.
			m.Atoms[1].Position[0] += 0.11
			m.Atoms[2].Position[2] += 0.07
			fn, err := xc.Lookup(c.method)
			if err != nil {
				t.Fatal(err)
			}
			set, err := basis.Load(c.basis)
			if err != nil {
				t.Fatal(err)
			}
			dens := testDensities(t, m, set, c.conv, c.unrestricted)
			pos := make([][3]float64, len(m.Atoms))
			for i := range pos {
				pos[i] = m.Atoms[i].Position
			}
			z := make([]int, len(m.Atoms))
			for i := range z {
				z[i] = m.Atoms[i].Z
			}
			gr, err := grid.New(z, pos, 1, grid.IdentityFrame(), 2)
			if err != nil {
				t.Fatal(err)
			}
			_, p := xcEnergyAt(t, m, set, c.conv, fn, pos, gr, dens)
			g, err := p.Gradient(context.Background(), dens, len(m.Atoms))
			if err != nil {
				t.Fatal(err)
			}
			const h = 1e-4
			for a := range pos {
				for k := 0; k < 3; k++ {
					pp := append([][3]float64(nil), pos...)
					pp[a][k] += h
					ep, _ := xcEnergyAt(t, m, set, c.conv, fn, pp, gr, dens)
					pp[a][k] -= 2 * h
					em, _ := xcEnergyAt(t, m, set, c.conv, fn, pp, gr, dens)
					fd := (ep - em) / (2 * h)
					if d := math.Abs(fd - g[a][k]); d > 1e-8 {
						t.Errorf("atom %d %c: analytic %.10f, central difference %.10f, off by %.2e", a, "xyz"[k], g[a][k], fd, d)
					}
				}
			}
		})
	}
}

// testDensities returns SCF-like densities: the converged Hartree–Fock
// density of the molecule would do, but any symmetric positive density with
// the right electron count tests the formula; the superposition of a few
// orbitals of the core Hamiltonian is cheap and not symmetric.
func testDensities(t *testing.T, m *molecule.Molecule, set *basis.Set, conv basis.Convention, unrestricted bool) [][]float64 {
	t.Helper()
	sh, err := set.Shells(m, conv)
	if err != nil {
		t.Fatal(err)
	}
	b := integral.NewBasis(sh)
	n := b.NBF
	// A smooth symmetric positive semi-definite matrix: D = Σ_i c_i c_iᵀ
	// with pseudo-random coefficient vectors scaled to modest size.
	mk := func(seed, norb int) []float64 {
		d := make([]float64, n*n)
		x := uint64(seed*7919 + 17)
		for i := 0; i < norb; i++ {
			c := make([]float64, n)
			for mu := range c {
				x = x*6364136223846793005 + 1442695040888963407
				c[mu] = (float64(x>>11)/float64(1<<53) - 0.5) * 0.6
			}
			for mu := 0; mu < n; mu++ {
				for nu := 0; nu < n; nu++ {
					d[mu*n+nu] += c[mu] * c[nu]
				}
			}
		}
		return d
	}
	if unrestricted {
		return [][]float64{mk(1, m.NumAlpha()), mk(2, m.NumBeta())}
	}
	d := mk(3, m.NumAlpha())
	for i := range d {
		d[i] *= 2
	}
	return [][]float64{d}
}
