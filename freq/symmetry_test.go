package freq

import (
	"context"
	"math"
	"math/rand"
	"testing"

	"poise/gradient"
)

// symModel is a molecule of the symmetry tests: Morse terms between all
// pairs closer than 6 bohr, with r0 at the given distances (so the
// geometry is a minimum and pairModel.exactHessian is its Hessian), the
// depth and stiffness depending only on the kinds of the pair (so the
// surface has the geometry's symmetry), and charges by kind, shifted to
// make the molecule neutral (a surface reports the dipole about the centre
// of mass, which for a neutral molecule is any fixed origin).
func symModel(kinds []int, x []float64) *pairModel {
	nat := len(kinds)
	p := &pairModel{nat: nat, charges: make([]float64, nat)}
	for a := 0; a < nat; a++ {
		p.charges[a] = 0.1 * float64(kinds[a]-2)
		for b := a + 1; b < nat; b++ {
			r := math.Sqrt(sq3(x, a, b))
			if r > 6 {
				continue
			}
			ka, kb := min(kinds[a], kinds[b]), max(kinds[a], kinds[b])
			d := 0.05 + 0.02*float64(ka) + 0.01*float64(kb)
			alpha := 0.8 + 0.1*float64(ka*kb%5)
			p.pairs = append(p.pairs, morse{a, b, d, alpha, r})
		}
	}
	mean := 0.0
	for _, q := range p.charges {
		mean += q / float64(nat)
	}
	for a := range p.charges {
		p.charges[a] -= mean
	}
	return p
}

// rotated applies a fixed, arbitrary rotation and shift to x, so that no
// symmetry element lies along a coordinate axis.
func rotated(x []float64) []float64 {
	ax := [3]float64{0.3, -0.5, 0.81}
	n := norm3(ax)
	ax = scale3(1/n, ax)
	th := 0.7
	c, s := math.Cos(th), math.Sin(th)
	// Rodrigues' formula.
	var r [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			r[i][j] = (1 - c) * ax[i] * ax[j]
			if i == j {
				r[i][j] += c
			}
		}
	}
	r[0][1] -= s * ax[2]
	r[0][2] += s * ax[1]
	r[1][0] += s * ax[2]
	r[1][2] -= s * ax[0]
	r[2][0] -= s * ax[1]
	r[2][1] += s * ax[0]
	out := make([]float64, len(x))
	for i := 0; i < len(x)/3; i++ {
		v := mulVec(r, [3]float64{x[3*i], x[3*i+1], x[3*i+2]})
		for k := 0; k < 3; k++ {
			out[3*i+k] = v[k] + []float64{0.4, -1.1, 0.25}[k]
		}
	}
	return out
}

type symCase struct {
	name  string
	kinds []int
	x     []float64
	order int // of the point group; textbook values (from memory), 1 where no finite group is used
}

func symCases() []symCase {
	ring := func(nc int, rc, rh float64) ([]int, []float64) {
		var k []int
		var x []float64
		for i := 0; i < nc; i++ {
			a := 2 * math.Pi * float64(i) / float64(nc)
			k = append(k, 6)
			x = append(x, rc*math.Cos(a), rc*math.Sin(a), 0)
		}
		for i := 0; i < nc; i++ {
			a := 2 * math.Pi * float64(i) / float64(nc)
			k = append(k, 1)
			x = append(x, rh*math.Cos(a), rh*math.Sin(a), 0)
		}
		return k, x
	}
	benzK, benzX := ring(6, 2.64, 4.69)
	_, water := waterModel()
	nh3 := []float64{0, 0, 0.3}
	for i := 0; i < 3; i++ {
		a := 2 * math.Pi * float64(i) / 3
		nh3 = append(nh3, 1.8*math.Cos(a), 1.8*math.Sin(a), -0.4)
	}
	ch4 := []float64{0, 0, 0, 1.2, 1.2, 1.2, -1.2, -1.2, 1.2, -1.2, 1.2, -1.2, 1.2, -1.2, -1.2}
	sf6 := []float64{0, 0, 0, 2.9, 0, 0, -2.9, 0, 0, 0, 2.9, 0, 0, -2.9, 0, 0, 0, 2.9, 0, 0, -2.9}
	n2h2 := []float64{1.2, 0.3, 0, -1.2, -0.3, 0, 1.5, 2.2, 0, -1.5, -2.2, 0}
	rng := rand.New(rand.NewSource(3))
	var c1 []float64
	for i := 0; i < 12; i++ {
		c1 = append(c1, 3*rng.Float64())
	}
	return []symCase{
		{"water C2v, aligned", []int{8, 1, 1}, water, 4},
		{"water C2v, rotated", []int{8, 1, 1}, rotated(water), 4},
		{"ammonia C3v, rotated", []int{7, 1, 1, 1}, rotated(nh3), 6},
		{"benzene D6h, aligned", benzK, benzX, 24},
		{"benzene D6h, rotated", benzK, rotated(benzX), 24},
		{"methane Td", []int{6, 1, 1, 1, 1}, ch4, 24},
		{"octahedral Oh, rotated", []int{16, 9, 9, 9, 9, 9, 9}, rotated(sf6), 48},
		{"trans planar C2h", []int{7, 7, 1, 1}, n2h2, 4},
		{"no symmetry C1", []int{6, 7, 8, 1}, c1, 1},
		{"linear, not used", []int{8, 6, 8}, []float64{0, 0, -2.2, 0, 0, 0, 0, 0, 2.2}, 1},
	}
}

func TestFindSymmetry(t *testing.T) {
	for _, c := range symCases() {
		t.Run(c.name, func(t *testing.T) {
			s := findSymmetry(c.x, c.kinds, DefaultSymmetryToleranceBohr)
			if len(s.ops) != c.order {
				t.Fatalf("%d operations, want %d", len(s.ops), c.order)
			}
			if !isIdentity(s.ops[0].perm) || !sameMatrix(s.ops[0].r, [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}, 1e-12) {
				t.Errorf("first operation is not the identity")
			}
			// Every operation maps the symmetrized geometry onto itself to
			// rounding, and is orthogonal.
			x := s.coords
			nat := len(c.kinds)
			var cen [3]float64
			for i := 0; i < nat; i++ {
				for k := 0; k < 3; k++ {
					cen[k] += x[3*i+k] / float64(nat)
				}
			}
			for g, o := range s.ops {
				var rrT [3][3]float64
				for i := 0; i < 3; i++ {
					for j := 0; j < 3; j++ {
						rrT[i][j] = dot3(o.r[i], o.r[j])
					}
				}
				if !sameMatrix(rrT, [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}, 1e-12) {
					t.Errorf("operation %d is not orthogonal", g)
				}
				for i, j := range o.perm {
					if c.kinds[i] != c.kinds[j] {
						t.Errorf("operation %d maps atom %d onto atom %d of another kind", g, i, j)
					}
					pi := [3]float64{x[3*i] - cen[0], x[3*i+1] - cen[1], x[3*i+2] - cen[2]}
					pj := [3]float64{x[3*j] - cen[0], x[3*j+1] - cen[1], x[3*j+2] - cen[2]}
					if d := dist3(mulVec(o.r, pi), pj); d > 1e-11 {
						t.Errorf("operation %d misses atom %d's image by %.2e bohr", g, i, d)
					}
				}
			}
			if s.shiftBohr > 1e-12 {
				t.Errorf("an exactly symmetric geometry moved by %.2e bohr", s.shiftBohr)
			}
		})
	}
}

// TestSymmetrize checks that a geometry distorted by less than the
// tolerance is made symmetric again, and that a larger distortion is not
// treated as symmetric.
func TestSymmetrize(t *testing.T) {
	c := symCases()[4] // benzene, rotated
	rng := rand.New(rand.NewSource(1))
	small := append([]float64(nil), c.x...)
	for i := range small {
		small[i] += 2e-4 * (rng.Float64() - 0.5)
	}
	s := findSymmetry(small, c.kinds, DefaultSymmetryToleranceBohr)
	if len(s.ops) != 24 {
		t.Fatalf("distorted by ≤ 1e-4 bohr: %d operations, want 24", len(s.ops))
	}
	if s.shiftBohr <= 0 || s.shiftBohr > DefaultSymmetryToleranceBohr {
		t.Errorf("shift %.2e bohr", s.shiftBohr)
	}
	for i := range s.coords {
		if d := math.Abs(s.coords[i] - c.x[i]); d > 3e-4 {
			t.Errorf("coordinate %d is %.2e bohr from the symmetric geometry", i, d)
		}
	}
	big := append([]float64(nil), c.x...)
	big[0] += 0.01
	if s := findSymmetry(big, c.kinds, DefaultSymmetryToleranceBohr); len(s.ops) > 4 {
		// Moving one carbon in the ring plane leaves at most a mirror
		// plane and σh (C2v is impossible: the move is off every C2).
		t.Errorf("distorted by 0.01 bohr: %d operations", len(s.ops))
	}
}

// TestSymmetryHessianModel compares the Hessian and dipole derivatives from
// the symmetry-unique displacements with the full set and with the exact
// derivatives of the model.
func TestSymmetryHessianModel(t *testing.T) {
	for _, c := range symCases() {
		for _, v := range []struct{ exact, trans bool }{{false, false}, {true, false}, {true, true}} {
			exact := v.exact
			name := c.name
			if exact {
				name += ", axis operations exact"
			}
			if v.trans {
				name += ", translational invariance"
			}
			t.Run(name, func(t *testing.T) {
				p := symModel(c.kinds, c.x)
				ctx := context.Background()
				full, err := ComputeHessian(ctx, p, c.x, HessianOptions{Dipole: true})
				if err != nil {
					t.Fatal(err)
				}
				p.evals.Store(0)
				sym, err := ComputeHessian(ctx, p, c.x, HessianOptions{Dipole: true, SymmetryKinds: c.kinds, AxisOperationsExact: exact, TranslationalInvariance: v.trans})
				if err != nil {
					t.Fatal(err)
				}
				nat := len(c.kinds)
				if sym.SymmetryOperations != c.order {
					t.Errorf("%d operations used, want %d", sym.SymmetryOperations, c.order)
				}
				if (c.order > 1 || v.trans) && sym.Displacements >= full.Displacements {
					t.Errorf("%d displaced points with symmetry, %d without", sym.Displacements, full.Displacements)
				}
				if got := p.Evaluations(); got != sym.Displacements+1 {
					t.Errorf("%d evaluations for %d displaced points", got, sym.Displacements)
				}
				// With operations that permute the coordinate axes, the
				// rotated columns are the finite differences of the full
				// set exactly (to rounding). Other operations rotate the
				// truncation error of the central differences, which is
				// not isotropic, so the two agree to that error only.
				exactH := p.exactHessian(c.x)
				n := 3 * nat
				axisOnly := true
				for _, o := range findSymmetry(c.x, c.kinds, DefaultSymmetryToleranceBohr).ops {
					axisOnly = axisOnly && o.axisOp()
				}
				errFull, errSym := 0.0, 0.0
				for i := 0; i < n*n; i++ {
					if d := math.Abs(sym.HessianAU[i] - full.HessianAU[i]); axisOnly && d > 1e-9 {
						t.Fatalf("H[%d][%d] = %.10f with symmetry, %.10f without", i/n, i%n, sym.HessianAU[i], full.HessianAU[i])
					}
					errFull = math.Max(errFull, math.Abs(full.HessianAU[i]-exactH[i]))
					errSym = math.Max(errSym, math.Abs(sym.HessianAU[i]-exactH[i]))
				}
				if errSym > 1.5*errFull+1e-9 {
					t.Errorf("largest error %.2e with symmetry, %.2e without", errSym, errFull)
				}
				if errFull > 1e-4 {
					t.Errorf("largest error of the finite differences %.2e: the model is too stiff for this test", errFull)
				}
				exactD := p.exactDipoleDeriv()
				for i := range exactD {
					if d := math.Abs(sym.DipoleDerivAU[i] - exactD[i]); d > 1e-9 {
						t.Fatalf("dμ[%d] = %.10f, exact %.10f", i, sym.DipoleDerivAU[i], exactD[i])
					}
				}
			})
		}
	}
}

// TestSymmetryPointCounts checks the number of displaced points for water
// in the yz plane with its C2 axis along z: the oxygen (on every element)
// needs +x, +y, ±z; each hydrogen +x, ±y, ±z, and only one hydrogen is
// displaced; with translational invariance the oxygen is not displaced.
func TestSymmetryPointCounts(t *testing.T) {
	_, x := waterModel()
	kinds := []int{8, 1, 1}
	for _, c := range []struct {
		exact, fourPoint, trans bool
		want                    int
	}{
		{false, false, false, 12}, {true, false, false, 9}, {true, true, false, 18},
		// The oxygen, moved by no operation, follows from the hydrogens.
		{true, false, true, 5}, {false, false, true, 6},
	} {
		pts, err := PlanPoints(3, x, HessianOptions{SymmetryKinds: kinds, AxisOperationsExact: c.exact, FourPoint: c.fourPoint, TranslationalInvariance: c.trans})
		if err != nil {
			t.Fatal(err)
		}
		if len(pts.Displacements) != c.want {
			t.Errorf("exact %v, four-point %v, translations %v: %d points %v, want %d", c.exact, c.fourPoint, c.trans, len(pts.Displacements), pts.Displacements, c.want)
		}
	}
}

// TestSymmetryChargedMasses: for an ion whose dipole origin is the centre
// of mass, isotopes that break the symmetry of the masses must not be
// treated as equivalent.
func TestSymmetryChargedMasses(t *testing.T) {
	p, x := waterModel()
	p.charges = []float64{0.5, 0.25, 0.25}    // a cation, charge +1
	masses := []float64{15.995, 1.008, 2.014} // HOD⁺
	p.comMasses = masses
	ctx := context.Background()
	opt := HessianOptions{Dipole: true, Charge: 1, MassesU: masses}
	full, err := ComputeHessian(ctx, p, x, opt)
	if err != nil {
		t.Fatal(err)
	}
	opt.SymmetryKinds = []int{8, 1, 1}
	sym, err := ComputeHessian(ctx, p, x, opt)
	if err != nil {
		t.Fatal(err)
	}
	if sym.SymmetryOperations != 2 {
		t.Errorf("%d operations, want 2 (the molecular plane only)", sym.SymmetryOperations)
	}
	for i := range full.DipoleDerivAU {
		if d := math.Abs(sym.DipoleDerivAU[i] - full.DipoleDerivAU[i]); d > 1e-9 {
			t.Fatalf("dμ[%d] = %.10f with symmetry, %.10f without", i, sym.DipoleDerivAU[i], full.DipoleDerivAU[i])
		}
	}
}

// TestSymmetryPiecewise runs a symmetric Hessian piece by piece, as a batch
// system does, and compares it with the one-shot result.
func TestSymmetryPiecewise(t *testing.T) {
	c := symCases()[2] // ammonia, rotated
	p := symModel(c.kinds, c.x)
	ctx := context.Background()
	opt := HessianOptions{Dipole: true, SymmetryKinds: c.kinds, WorkDir: t.TempDir()}
	pts, err := PlanPoints(len(c.kinds), c.x, opt)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := ComputeReference(ctx, p, c.x, opt); err != nil {
		t.Fatal(err)
	}
	for _, g := range pts.Groups {
		if _, err := ComputeDisplacements(ctx, p, c.x, opt, g); err != nil {
			t.Fatal(err)
		}
	}
	haveRef, missing, err := SavedPoints(len(c.kinds), c.x, opt)
	if err != nil || !haveRef || len(missing) != 0 {
		t.Fatalf("saved: reference %v, missing %v, %v", haveRef, missing, err)
	}
	before := p.Evaluations()
	h, err := ComputeHessian(ctx, p, c.x, opt)
	if err != nil {
		t.Fatal(err)
	}
	if p.Evaluations() != before {
		t.Errorf("assembling evaluated %d points", p.Evaluations()-before)
	}
	opt.WorkDir = ""
	one, err := ComputeHessian(ctx, p, c.x, opt)
	if err != nil {
		t.Fatal(err)
	}
	for i := range one.HessianAU {
		if h.HessianAU[i] != one.HessianAU[i] {
			t.Fatalf("H[%d]: piecewise %.12f, one-shot %.12f", i, h.HessianAU[i], one.HessianAU[i])
		}
	}
}

// TestHessianGivenReference: a reference point handed over (a relaxation's
// last evaluation) is used as it is: one evaluation fewer, the same
// Hessian.
func TestHessianGivenReference(t *testing.T) {
	p, x := waterModel()
	ctx := context.Background()
	opt := HessianOptions{Dipole: true, SymmetryKinds: []int{8, 1, 1}, AxisOperationsExact: true}
	want, err := ComputeHessian(ctx, p, x, opt)
	if err != nil {
		t.Fatal(err)
	}
	var ref gradient.Point
	if err := p.Evaluate(ctx, x, gradient.Request{Gradient: true, Dipole: true}, &ref); err != nil {
		t.Fatal(err)
	}
	opt.Reference = &ref
	p.evals.Store(0)
	got, err := ComputeHessian(ctx, p, x, opt)
	if err != nil {
		t.Fatal(err)
	}
	if got.Evaluations != want.Evaluations-1 || p.Evaluations() != want.Displacements {
		t.Errorf("%d evaluations with the reference given, %d without", got.Evaluations, want.Evaluations)
	}
	for i := range want.HessianAU {
		if got.HessianAU[i] != want.HessianAU[i] {
			t.Fatalf("H[%d] %.12f, want %.12f", i, got.HessianAU[i], want.HessianAU[i])
		}
	}
	if got.EnergyHartree != want.EnergyHartree || got.DipoleAU != want.DipoleAU {
		t.Errorf("reference point not taken over")
	}
}
