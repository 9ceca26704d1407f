package dft

import (
	"math"
	"math/rand/v2"
	"testing"

	"poise/energy/basis"
	"poise/energy/grid"
	"poise/energy/integral"
	"poise/energy/xc"
)

// TestEvalDiagonalMatchesGeneral checks the row-by-row evaluation of
// shells with a diagonal transform against the general point-by-point
// path, for l = 0…3 with and without derivatives, including points where
// the radial part vanishes.
func TestEvalDiagonalMatchesGeneral(t *testing.T) {
	r := rand.New(rand.NewPCG(17, 18))
	const np = 37
	for l := 0; l <= 3; l++ {
		for _, gga := range []bool{false, true} {
			comps := integral.CartesianExponents(l)
			nc := len(comps)
			trans := make([]float64, nc*nc)
			for c := 0; c < nc; c++ {
				trans[c*nc+c] = 0.5 + r.Float64()
			}
			bx, by, bz := randomSlice(r, np), randomSlice(r, np), randomSlice(r, np)
			center := [3]float64{0.1, -0.2, 0.3}
			nv := 1
			if gga {
				nv = 4
			}
			var outs [2][]float64
			for k := range outs {
				ws := &workspace{}
				rs := ws.radial(np)
				rr := rand.New(rand.NewPCG(19, uint64(l)))
				for pt := 0; pt < np; pt++ {
					rs.f0[pt], rs.f1[pt] = rr.NormFloat64(), rr.NormFloat64()
					if pt%7 == 3 {
						rs.f0[pt], rs.f1[pt] = 1e-301, -1e-302
					}
				}
				out := make([]float64, nv*nc*np)
				if k == 0 {
					evalDiagonal(out, ws, rs, bx, by, bz, center, comps, trans, 0, np, nc, gga)
				} else {
					evalGeneral(out, ws, rs, bx, by, bz, center, comps, trans, nc, 0, np, nc, gga)
				}
				outs[k] = out
			}
			for i, want := range outs[1] {
				got := outs[0][i]
				if math.Abs(got-want) > 1e-14*math.Max(1, math.Abs(want)) {
					t.Fatalf("l=%d gga=%v: element %d (block %d, function %d, point %d) = %.17g, general %.17g",
						l, gga, i, i/(nc*np), i/np%nc, i%np, got, want)
				}
			}
		}
	}
}

// TestFunctionDerivativesConsistent checks the two evaluators of the basis
// functions against each other on the points of a water grid: the values
// and first derivatives of the gradient's evaluator (point-major, with
// second derivatives) against those of the Kohn–Sham build's evaluator
// (function-major), and the second derivatives against central
// differences of the first (step 1e-4 bohr), for a basis with Cartesian
// d functions (6-31G*) and one with spherical d functions (cc-pVDZ).
func TestFunctionDerivativesConsistent(t *testing.T) {
	m := build(t, water, 0, 1)
	fn, err := xc.Lookup("b3lyp")
	if err != nil {
		t.Fatal(err)
	}
	z := make([]int, len(m.Atoms))
	pos := make([][3]float64, len(m.Atoms))
	for i, a := range m.Atoms {
		z[i], pos[i] = a.Z, a.Position
	}
	g, err := grid.New(z, pos, 1, grid.IdentityFrame(), 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"6-31g*", "cc-pvdz"} {
		set, err := basis.Load(name)
		if err != nil {
			t.Fatal(err)
		}
		sh, err := set.Shells(m, basis.Default)
		if err != nil {
			t.Fatal(err)
		}
		b := integral.NewBasis(sh)
		p := New(fn, g, b, 1)
		for _, bi := range []int{0, len(g.Batches) / 3, len(g.Batches) - 1} {
			bt := g.Batches[bi]
			np := bt.End - bt.Start
			shells := p.batchShells[bi]
			mAll := 0
			for _, si := range shells {
				mAll += b.Shells[si].NumFunctions()
			}
			ref := make([]float64, 4*mAll*np)
			p.evalFunctions(ref, &workspace{}, bt.Start, np, shells, mAll, true)
			eval := func(gx, gy, gz []float64) *gradWorkspace {
				ws := &gradWorkspace{}
				ws.phi = grow(ws.phi, np*mAll)
				for k := range ws.d1 {
					ws.d1[k] = grow(ws.d1[k], np*mAll)
				}
				for k := range ws.d2 {
					ws.d2[k] = grow(ws.d2[k], np*mAll)
				}
				evalFunctionDerivatives(b, ws, bt.Start, np, shells, mAll, true, gx, gy, gz)
				return ws
			}
			ws := eval(g.X, g.Y, g.Z)
			for f := 0; f < mAll; f++ {
				for pt := 0; pt < np; pt++ {
					got := [4]float64{ws.phi[pt*mAll+f], ws.d1[0][pt*mAll+f], ws.d1[1][pt*mAll+f], ws.d1[2][pt*mAll+f]}
					for k := 0; k < 4; k++ {
						want := ref[(k*mAll+f)*np+pt]
						if math.Abs(got[k]-want) > 1e-12*math.Max(1, math.Abs(want)) {
							t.Fatalf("%s batch %d function %d point %d: block %d %.17g, Kohn–Sham evaluator %.17g", name, bi, f, pt, k, got[k], want)
						}
					}
				}
			}
			// Second derivatives: ∂_j(∂_kφ) by central differences.
			const h = 1e-4
			packed := [3][3]int{{0, 1, 2}, {1, 3, 4}, {2, 4, 5}}
			for j := 0; j < 3; j++ {
				shift := func(d float64) *gradWorkspace {
					c := [3][]float64{append([]float64(nil), g.X...), append([]float64(nil), g.Y...), append([]float64(nil), g.Z...)}
					for pt := bt.Start; pt < bt.End; pt++ {
						c[j][pt] += d
					}
					return eval(c[0], c[1], c[2])
				}
				plus, minus := shift(h), shift(-h)
				for k := 0; k < 3; k++ {
					for i := 0; i < np*mAll; i++ {
						fd := (plus.d1[k][i] - minus.d1[k][i]) / (2 * h)
						got := ws.d2[packed[j][k]][i]
						if math.Abs(got-fd) > 1e-6*math.Max(1, math.Abs(fd)) {
							t.Fatalf("%s batch %d element %d: ∂%d∂%dφ = %.12g, central difference %.12g", name, bi, i, j, k, got, fd)
						}
					}
				}
			}
		}
	}
}

// randomSlice is n uniform values in [−1, 1).
func randomSlice(r *rand.Rand, n int) []float64 {
	s := make([]float64, n)
	for i := range s {
		s[i] = 2*r.Float64() - 1
	}
	return s
}
