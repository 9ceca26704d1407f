package integral

import (
	"math"
	"math/rand/v2"
	"os"
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
)

// Tests of the contracted derivative integrals against central finite
// differences of the corresponding contracted quantities (Tr[W S], Tr[D T],
// Tr[D V], the two-electron energy from the full integral tensor). The
// finite-difference reference is independent of the analytic derivative
// code: it only uses the (separately tested) integrals at displaced
// geometries.

// derivStep is the finite-difference step in bohr.
const derivStep = 1e-4

// derivMolecules are the test systems: water from testdata (planar, C2v)
// and a distorted formaldehyde without symmetry (two atoms with d shells in
// 6-31G*), so that no gradient component vanishes by symmetry.
var derivMolecules = []struct{ name, file, xyz string }{
	{name: "water", file: "../../testdata/molecules/water.xyz"},
	{name: "formaldehyde-distorted", xyz: "4\nH2CO, distorted\n" +
		"C  0.010 -0.020  0.000\n" +
		"O  0.030  0.040  1.210\n" +
		"H  0.950  0.060 -0.570\n" +
		"H -0.900  0.110 -0.600\n"},
}

func derivLoadMolecule(t testing.TB, file, xyz string) *molecule.Molecule {
	t.Helper()
	data := []byte(xyz)
	name := "inline"
	if file != "" {
		var err error
		data, err = os.ReadFile(file)
		if err != nil {
			t.Fatal(err)
		}
		name = file
	}
	mol, err := molecule.ParseXYZ(name, data)
	if err != nil {
		t.Fatal(err)
	}
	return mol
}

// derivShellsFor places 6-31G* on mol with the given convention.
func derivShellsFor(t testing.TB, mol *molecule.Molecule, conv basis.Convention) []basis.Shell {
	t.Helper()
	set, err := basis.Load("6-31g*")
	if err != nil {
		t.Fatal(err)
	}
	shells, err := set.Shells(mol, conv)
	if err != nil {
		t.Fatal(err)
	}
	return shells
}

// displaced returns a copy of shells with every shell of atom a moved by
// h along direction k.
func derivDisplaced(shells []basis.Shell, a, k int, h float64) []basis.Shell {
	out := append([]basis.Shell(nil), shells...)
	for i := range out {
		if out[i].Atom == a {
			out[i].Center[k] += h
		}
	}
	return out
}

// randomSymmetric returns an n×n symmetric matrix with entries in
// [−scale, scale].
func derivRandomSymmetric(rng *rand.Rand, n int, scale float64) []float64 {
	m := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			v := scale * (2*rng.Float64() - 1)
			m[i*n+j], m[j*n+i] = v, v
		}
	}
	return m
}

func derivDot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// fdGradient returns the central finite difference of f with respect to
// every coordinate of natoms atoms; f receives the atom, the direction and
// the signed displacement. It uses the fourth-order central stencil
// f' ≈ (f(−2h) − 8f(−h) + 8f(h) − f(2h))/(12h) (textbook numerical
// analysis, from memory): the truncation error h²f‴/6 of the two-point
// formula reaches 1e-8 at h = 1e-4 bohr for tight core functions, while
// that of this stencil, h⁴f⁽⁵⁾/30, stays far below.
func derivFD(natoms int, f func(a, k int, h float64) float64) [][3]float64 {
	g := make([][3]float64, natoms)
	h := derivStep
	for a := 0; a < natoms; a++ {
		for k := 0; k < 3; k++ {
			g[a][k] = (f(a, k, -2*h) - 8*f(a, k, -h) + 8*f(a, k, h) - f(a, k, 2*h)) / (12 * h)
		}
	}
	return g
}

// compareGradients fails when any component differs by more than tol, and
// checks that both sum to zero over atoms (translational invariance) to
// 1e-10 (the analytic one) and tol (the numerical one).
func derivCompareGradients(t *testing.T, name string, got, want [][3]float64, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d atoms, want %d", name, len(got), len(want))
	}
	var maxd float64
	var sum [3]float64
	for a := range want {
		for k := 0; k < 3; k++ {
			d := math.Abs(got[a][k] - want[a][k])
			maxd = math.Max(maxd, d)
			if d > tol || math.IsNaN(got[a][k]) {
				t.Errorf("%s: atom %d dir %d: analytic %.12g, finite difference %.12g (diff %.2g)", name, a, k, got[a][k], want[a][k], d)
			}
			sum[k] += got[a][k]
		}
	}
	for k := 0; k < 3; k++ {
		if math.Abs(sum[k]) > 1e-10 {
			t.Errorf("%s: analytic gradient sums to %.3g over atoms in direction %d", name, sum[k], k)
		}
	}
	t.Logf("%s: max |analytic − finite difference| = %.2g", name, maxd)
}

var derivConventions = []struct {
	name string
	conv basis.Convention
}{
	{"cartesian", basis.Cartesian},
	{"spherical", basis.Spherical},
}

func TestOneElectronGradientsFiniteDifference(t *testing.T) {
	for _, m := range derivMolecules {
		for _, cv := range derivConventions {
			t.Run(m.name+"/"+cv.name, func(t *testing.T) {
				mol := derivLoadMolecule(t, m.file, m.xyz)
				shells := derivShellsFor(t, mol, cv.conv)
				b := NewBasis(shells)
				nat := len(mol.Atoms)
				rng := rand.New(rand.NewPCG(1, uint64(b.NBF)))
				d := derivRandomSymmetric(rng, b.NBF, 0.5)
				charges := make([]float64, nat)
				centers := make([][3]float64, nat)
				for a, at := range mol.Atoms {
					charges[a] = float64(at.Z)
					centers[a] = at.Position
				}
				derivCompareGradients(t, "overlap", b.OverlapGradient(d, nat),
					derivFD(nat, func(a, k int, h float64) float64 {
						return derivDot(d, NewBasis(derivDisplaced(shells, a, k, h)).Overlap())
					}), 1e-8)
				derivCompareGradients(t, "kinetic", b.KineticGradient(d, nat),
					derivFD(nat, func(a, k int, h float64) float64 {
						return derivDot(d, NewBasis(derivDisplaced(shells, a, k, h)).Kinetic())
					}), 1e-8)
				derivCompareGradients(t, "nuclear", b.NuclearGradient(d, charges, centers),
					derivFD(nat, func(a, k int, h float64) float64 {
						c := append([][3]float64(nil), centers...)
						c[a][k] += h
						return derivDot(d, NewBasis(derivDisplaced(shells, a, k, h)).Nuclear(charges, c))
					}), 1e-8)
			})
		}
	}
}

// fdGradientMulti is fdGradient for several functions evaluated together
// (one integral tensor per displacement serves them all).
func derivFDMulti(natoms, nf int, f func(a, k int, h float64) []float64) [][][3]float64 {
	g := make([][][3]float64, nf)
	for x := range g {
		g[x] = make([][3]float64, natoms)
	}
	h := derivStep
	for a := 0; a < natoms; a++ {
		for k := 0; k < 3; k++ {
			m2, m1, p1, p2 := f(a, k, -2*h), f(a, k, -h), f(a, k, h), f(a, k, 2*h)
			for x := 0; x < nf; x++ {
				g[x][a][k] = (m2[x] - 8*m1[x] + 8*p1[x] - p2[x]) / (12 * h)
			}
		}
	}
	return g
}

// twoElectronEnergy evaluates
// E2 = ½ Σ (μν|λσ) D_μν D_λσ − ½ x Σ_s Σ (μλ|νσ) D^s_μν D^s_λσ
// from the full tensor t, with dens as GradientJK takes them.
func derivTwoElectronEnergy(t []float64, n int, dens [][]float64, x float64) float64 {
	dt := dens[0]
	spins := dens
	if len(dens) == 1 {
		h := make([]float64, n*n)
		for i, v := range dt {
			h[i] = v / 2
		}
		spins = [][]float64{h, h}
	} else {
		dt = make([]float64, n*n)
		for _, m := range dens {
			for i, v := range m {
				dt[i] += v
			}
		}
	}
	var ej, ek float64
	n2 := n * n
	for mn := 0; mn < n2; mn++ {
		ej += dt[mn] * derivDot(t[mn*n2:(mn+1)*n2], dt)
	}
	for mu := 0; mu < n; mu++ {
		for la := 0; la < n; la++ {
			blk := t[(mu*n+la)*n2 : (mu*n+la+1)*n2] // (μλ|νσ) over ν, σ
			for _, ds := range spins {
				for nu := 0; nu < n; nu++ {
					dmn := ds[mu*n+nu]
					if dmn == 0 {
						continue
					}
					ek += dmn * derivDot(blk[nu*n:(nu+1)*n], ds[la*n:(la+1)*n])
				}
			}
		}
	}
	return 0.5*ej - 0.5*x*ek
}

// derivJKCases are the density/exchange combinations checked: restricted HF,
// unrestricted hybrid-like exchange, pure Coulomb.
type derivJKCase struct {
	name string
	dens [][]float64
	x    float64
}

func derivJKCases(rng *rand.Rand, n int) []derivJKCase {
	return []derivJKCase{
		{"restricted-x1", [][]float64{derivRandomSymmetric(rng, n, 0.5)}, 1},
		{"unrestricted-x0.2", [][]float64{derivRandomSymmetric(rng, n, 0.3), derivRandomSymmetric(rng, n, 0.3)}, 0.2},
		{"restricted-x0", [][]float64{derivRandomSymmetric(rng, n, 0.5)}, 0},
	}
}

func TestGradientJKFiniteDifference(t *testing.T) {
	for _, m := range derivMolecules {
		for _, cv := range derivConventions {
			t.Run(m.name+"/"+cv.name, func(t *testing.T) {
				mol := derivLoadMolecule(t, m.file, m.xyz)
				shells := derivShellsFor(t, mol, cv.conv)
				b := NewBasis(shells)
				nat := len(mol.Atoms)
				rng := rand.New(rand.NewPCG(2, uint64(b.NBF)))
				cases := derivJKCases(rng, b.NBF)
				e := NewERI(b)
				fd := derivFDMulti(nat, len(cases), func(a, k int, h float64) []float64 {
					tt := NewERI(NewBasis(derivDisplaced(shells, a, k, h))).Tensor()
					out := make([]float64, len(cases))
					for x, c := range cases {
						out[x] = derivTwoElectronEnergy(tt, b.NBF, c.dens, c.x)
					}
					return out
				})
				for x, c := range cases {
					g1 := e.GradientJK(c.dens, c.x, nat, 1)
					derivCompareGradients(t, c.name, g1, fd[x], 1e-8)
					g2 := e.GradientJK(c.dens, c.x, nat, 2)
					for a := range g1 {
						if g1[a] != g2[a] {
							t.Errorf("%s: atom %d: 1 thread %v, 2 threads %v", c.name, a, g1[a], g2[a])
						}
					}
				}
			})
		}
	}
}

// derivQuartetBlocks returns the derivative integrals ∂(ij|kl)/∂R_{s,k}
// over final functions for the shells in request order: element 3·s+k is
// the derivative with respect to the centre of request shell s (0 … 3) in
// direction k, each row-major [a][b][c][d] like Quartet.
func derivQuartetBlocks(e *ERIEngine, d *eriDeriv, dw *derivWork, w *ERIWorkspace, i, j, k, l int) [12][]float64 {
	bra, ket := d.pair(i, j), d.pair(k, l)
	pos := [4]int{0, 1, 2, 3}
	if bra.a != i {
		pos[0], pos[1] = 1, 0
	}
	if ket.a != k {
		pos[2], pos[3] = 3, 2
	}
	if ket.key() > bra.key() {
		bra, ket = ket, bra
		pos = [4]int{pos[2], pos[3], pos[0], pos[1]}
	}
	sh := [4]int{bra.a, bra.b, ket.a, ket.b}
	d.cartesianDeriv(dw, bra, ket)
	var nc [4]int
	for x := 0; x < 4; x++ {
		nc[x] = e.info[sh[x]].ncart
	}
	total := nc[0] * nc[1] * nc[2] * nc[3]
	var cart [4][3][]float64
	for x := 0; x < 4; x++ {
		for kk := 0; kk < 3; kk++ {
			cart[x][kk] = make([]float64, total)
		}
	}
	ls := [4]int{bra.la, bra.lb, ket.la, ket.lb}
	for x := 0; x < 3; x++ {
		pre, post := 1, 1
		for y := 0; y < x; y++ {
			pre *= nc[y]
		}
		for y := x + 1; y < 4; y++ {
			post *= nc[y]
		}
		n, nu, nd := nc[x], basisNCart(ls[x]+1), 0
		if ls[x] > 0 {
			nd = basisNCart(ls[x] - 1)
		}
		for p := 0; p < pre; p++ {
			for r := 0; r < n; r++ {
				t := &eriCartTab[eriCum(ls[x])+r]
				for kk := 0; kk < 3; kk++ {
					ru := int(t.plus[kk]) - eriCum(ls[x]+1)
					for q := 0; q < post; q++ {
						v := dw.up[x][(p*nu+ru)*post+q]
						if t.n[kk] > 0 {
							rd := int(t.minus[kk]) - eriCum(ls[x]-1)
							v -= float64(t.n[kk]) * dw.down[x][(p*nd+rd)*post+q]
						}
						cart[x][kk][(p*n+r)*post+q] = v
						cart[3][kk][(p*n+r)*post+q] -= v
					}
				}
			}
		}
	}
	var out [12][]float64
	for x := 0; x < 4; x++ {
		for kk := 0; kk < 3; kk++ {
			out[3*pos[x]+kk] = append([]float64(nil), e.finish(w, cart[x][kk], sh, pos)...)
		}
	}
	return out
}

// TestDerivativeQuartetsFiniteDifference compares derivative integral
// blocks of random shells (s to d, Cartesian and spherical, every
// canonical reordering) with central differences of the integrals.
func TestDerivativeQuartetsFiniteDifference(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, ls := range [][4]int{{0, 0, 0, 0}, {1, 0, 0, 0}, {0, 1, 0, 0}, {0, 0, 1, 0}, {0, 0, 0, 1}, {1, 1, 1, 1}, {2, 1, 0, 1}, {0, 2, 1, 2}, {2, 2, 2, 2}, {1, 0, 2, 2}} {
		for _, pure := range []bool{false, true} {
			var shells []basis.Shell
			for x := 0; x < 4; x++ {
				s := eriRandomShell(rng, ls[x], pure && ls[x] >= 2)
				s.Atom = x
				shells = append(shells, s)
			}
			b := NewBasis(shells)
			e := NewERI(b)
			d := newERIDeriv(e)
			dw := d.newWork()
			w := e.NewWorkspace()
			got := derivQuartetBlocks(e, d, dw, w, 0, 1, 2, 3)
			h := 1e-4
			for s := 0; s < 4; s++ {
				for k := 0; k < 3; k++ {
					q := func(hh float64) []float64 {
						e2 := NewERI(NewBasis(derivDisplaced(shells, s, k, hh)))
						return append([]float64(nil), e2.Quartet(e2.NewWorkspace(), 0, 1, 2, 3)...)
					}
					m2, m1, p1, p2 := q(-2*h), q(-h), q(h), q(2*h)
					bad := 0
					for x := range m1 {
						want := (m2[x] - 8*m1[x] + 8*p1[x] - p2[x]) / (12 * h)
						if diff := math.Abs(got[3*s+k][x] - want); diff > 1e-8*(1+math.Abs(want)) {
							if bad < 3 {
								t.Errorf("l=%v pure=%v: d/dR[%d][%d] element %d: %.12g, want %.12g", ls, pure, s, k, x, got[3*s+k][x], want)
							}
							bad++
						}
					}
				}
			}
		}
	}
}

// derivOneBodyBlocks returns the derivative integrals of the one-electron
// operator op ("overlap", "kinetic" or "nuclear" with charges at centers)
// for shells i and j over final functions, in the layout libint2 uses:
// ∂/∂A_x, ∂/∂A_y, ∂/∂A_z, ∂/∂B_x, …, then for the nuclear attraction
// ∂/∂C_x, ∂/∂C_y, ∂/∂C_z for each charge.
func derivOneBodyBlocks(b *Basis, op string, i, j int, charges []float64, centers [][3]float64) [][]float64 {
	ds := b.derivShells()
	w := newOneWork(b.MaxL + 1)
	si, sj := &b.shells[i], &b.shells[j]
	nc := basisNCart(b.MaxL + 1)
	block := func(a, c *shellData, q []float64, r [][3]float64, out []float64) {
		switch op {
		case "overlap":
			w.overlapBlock(a, c, out)
		case "kinetic":
			w.kineticBlock(a, c, out)
		default:
			w.nuclearBlock(a, c, q, r, out)
		}
	}
	// braDeriv returns the three Cartesian blocks ⟨∂_k x|O|y⟩ (ncart_x×ncart_y).
	braDeriv := func(x, y int, q []float64, r [][3]float64) [3][]float64 {
		sx, sy := &b.shells[x], &b.shells[y]
		up, down := make([]float64, nc*nc), make([]float64, nc*nc)
		block(&ds.up[x], sy, q, r, up)
		if sx.l > 0 {
			block(&ds.down[x], sy, q, r, down)
		}
		var out [3][]float64
		ny := sy.ncart
		for k := 0; k < 3; k++ {
			out[k] = make([]float64, sx.ncart*ny)
			for ri, e := range cartesianExponents(sx.l) {
				p := e
				p[k]++
				for c := 0; c < ny; c++ {
					v := up[componentIndex(p[1], p[2])*ny+c]
					if e[k] > 0 {
						m := e
						m[k]--
						v -= float64(e[k]) * down[componentIndex(m[1], m[2])*ny+c]
					}
					out[k][ri*ny+c] = v
				}
			}
		}
		return out
	}
	ni, nj := si.ncart, sj.ncart
	fin := func(cart []float64) []float64 {
		tmp := make([]float64, nc*nc)
		f := make([]float64, si.nfunc*sj.nfunc)
		transformPair(si, sj, cart, tmp, f)
		return f
	}
	transpose := func(m []float64) []float64 { // nj×ni → ni×nj
		t := make([]float64, ni*nj)
		for r := 0; r < ni; r++ {
			for c := 0; c < nj; c++ {
				t[r*nj+c] = m[c*ni+r]
			}
		}
		return t
	}
	nsets := 6
	if op == "nuclear" {
		nsets += 3 * len(charges)
	}
	cartSets := make([][]float64, nsets)
	for s := range cartSets {
		cartSets[s] = make([]float64, ni*nj)
	}
	terms := 1
	if op == "nuclear" {
		terms = len(charges)
	}
	for c := 0; c < terms; c++ {
		var q []float64
		var r [][3]float64
		if op == "nuclear" {
			q, r = charges[c:c+1], centers[c:c+1]
		}
		ba := braDeriv(i, j, q, r)
		kb := braDeriv(j, i, q, r)
		for k := 0; k < 3; k++ {
			kt := transpose(kb[k])
			for x := range kt {
				cartSets[k][x] += ba[k][x]
				cartSets[3+k][x] += kt[x]
				if op == "nuclear" {
					cartSets[6+3*c+k][x] = -(ba[k][x] + kt[x])
				}
			}
		}
	}
	out := make([][]float64, nsets)
	for s := range out {
		out[s] = fin(cartSets[s])
	}
	return out
}
