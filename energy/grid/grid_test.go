package grid

import (
	"math"
	"testing"
)

// TestHydrogenAtom places the exact hydrogen 1s density e^{−2r}/π on the
// default grid. Exact values (analytic): ∫ρ = 1 and
// ∫ρ^{4/3} = 4π·π^{−4/3}·2/(8/3)³ = (27/64)·π^{−1/3}; the spin-polarized LDA
// exchange −(3/2)(3/4π)^{1/3}∫ρ^{4/3} = −0.2680 Eh is the value A. D. Becke,
// Phys. Rev. A 38, 3098 (1988) lists for the H atom (from memory).
func TestHydrogenAtom(t *testing.T) {
	g, err := New([]int{1}, [][3]float64{{0.3, -0.1, 0.2}}, DefaultLevel, IdentityFrame(), 1)
	if err != nil {
		t.Fatal(err)
	}
	var n, l float64
	for i, w := range g.W {
		dx, dy, dz := g.X[i]-0.3, g.Y[i]+0.1, g.Z[i]-0.2
		rho := math.Exp(-2*math.Sqrt(dx*dx+dy*dy+dz*dz)) / math.Pi
		n += w * rho
		l += w * math.Pow(rho, 4.0/3)
	}
	wantL := 27.0 / 64 * math.Pow(math.Pi, -1.0/3)
	if math.Abs(n-1) > 1e-10 {
		t.Errorf("∫ρ = %.12f, want 1", n)
	}
	if math.Abs(l-wantL)/wantL > 1e-10 {
		t.Errorf("∫ρ^4/3 = %.12f, want %.12f", l, wantL)
	}
	ex := -1.5 * math.Cbrt(3/(4*math.Pi)) * l
	if math.Abs(ex-(-0.2680)) > 5e-5 {
		t.Errorf("LSDA exchange %.6f, want −0.2680", ex)
	}
}

// TestElectronCount integrates the Slater-rule model densities (see
// model_test.go) of water and benzene on the default grid in the standard
// frame; the exact integral is the sum of the occupations (analytic).
func TestElectronCount(t *testing.T) {
	for _, tc := range []struct {
		name string
		mol  func() ([]int, [][3]float64, [][2]int)
		q    float64 // bond charge, electrons
	}{
		{"water promolecule", water, 0},
		{"water with bond charges", water, 0.3},
		{"benzene promolecule", benzene, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			z, pos, bonds := tc.mol()
			m := newModel(z, pos, bonds, tc.q, 1.2)
			f, err := StandardFrame(z, pos)
			if err != nil {
				t.Fatal(err)
			}
			g, err := New(z, pos, DefaultLevel, f, 2)
			if err != nil {
				t.Fatal(err)
			}
			n, _ := m.integrals(g)
			t.Logf("%d points, ∫ρ − N = %.2e", g.NumPoints(), n-m.count)
			if math.Abs(n-m.count) > 1e-6 {
				t.Errorf("∫ρ = %.10f, want %.10f (error %.2e > 1e-6)", n, m.count, n-m.count)
			}
		})
	}
}

// TestWaterConvergence compares ∫ρ^{4/3} of the water model density at
// the default level and the next finer one (they must agree to 1e-6
// relative), and checks the default level for rotational invariance on a
// grid whose frame stays fixed while the molecule turns (1e-7 relative).
func TestWaterConvergence(t *testing.T) {
	z, pos, bonds := water()
	m := newModel(z, pos, bonds, 0.3, 1.2)
	lda := func(level int, pos [][3]float64, m *modelDensity) float64 {
		g, err := New(z, pos, level, IdentityFrame(), 2)
		if err != nil {
			t.Fatal(err)
		}
		_, l := m.integrals(g)
		return l
	}
	l3 := lda(DefaultLevel, pos, m)
	l4 := lda(DefaultLevel+1, pos, m)
	if d := math.Abs(l3-l4) / l4; d > 1e-6 {
		t.Errorf("levels %d and %d differ by %.2e relative", DefaultLevel, DefaultLevel+1, d)
	} else {
		t.Logf("level %d vs %d: %.2e relative", DefaultLevel, DefaultLevel+1, d)
	}
	lo, hi := l3, l3
	for _, e := range testRotations {
		rp := rotate(pos, rotation(e[0], e[1], e[2]), [3]float64{0.1, -0.2, 0.3})
		l := lda(DefaultLevel, rp, newModel(z, rp, bonds, 0.3, 1.2))
		lo, hi = math.Min(lo, l), math.Max(hi, l)
	}
	if d := (hi - lo) / l3; d > 1e-7 {
		t.Errorf("rotations change ∫ρ^4/3 by %.2e relative", d)
	} else {
		t.Logf("rotation spread (fixed frame): %.2e relative", d)
	}
}

// TestStandardFrameInvariance checks that grids in the standard frame turn
// with the molecule, so that integrals do not depend on its orientation
// (1e-12 relative) for an asymmetric top (water), a symmetric top (benzene),
// a spherical top (methane) and a linear molecule (HCN).
func TestStandardFrameInvariance(t *testing.T) {
	for _, tc := range []struct {
		name  string
		mol   func() ([]int, [][3]float64, [][2]int)
		level int
	}{
		{"water", water, DefaultLevel},
		{"benzene", benzene, 1},
		{"methane", methane, DefaultLevel},
		{"HCN", hcn, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			z, pos, bonds := tc.mol()
			ints := func(p [][3]float64) (float64, float64) {
				f, err := StandardFrame(z, p)
				if err != nil {
					t.Fatal(err)
				}
				g, err := New(z, p, tc.level, f, 2)
				if err != nil {
					t.Fatal(err)
				}
				return newModel(z, p, bonds, 0.3, 1.2).integrals(g)
			}
			n0, l0 := ints(pos)
			for _, e := range testRotations[:3] {
				rp := rotate(pos, rotation(e[0], e[1], e[2]), [3]float64{0.1, -0.2, 0.3})
				n, l := ints(rp)
				if math.Abs(n-n0)/n0 > 1e-12 || math.Abs(l-l0)/l0 > 1e-12 {
					t.Errorf("rotation %v: ∫ρ changes by %.2e, ∫ρ^4/3 by %.2e relative", e, (n-n0)/n0, (l-l0)/l0)
				}
			}
		})
	}
}

// TestStandardFrameAxes checks the frame itself: orthonormal, the benzene
// ring normal as third axis, and the identity for a single atom.
func TestStandardFrameAxes(t *testing.T) {
	z, pos, _ := benzene()
	f, err := StandardFrame(z, pos)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.check(); err != nil {
		t.Fatal(err)
	}
	if math.Abs(math.Abs(f[2][2])-1) > 1e-12 {
		t.Errorf("benzene: third axis %v, want the ring normal ±z", f[2])
	}
	if f1, _ := StandardFrame([]int{8}, [][3]float64{{1, 2, 3}}); f1 != IdentityFrame() {
		t.Errorf("single atom: frame %v, want identity", f1)
	}
	zw, pw, _ := water()
	fw, _ := StandardFrame(zw, pw)
	if err := fw.check(); err != nil {
		t.Fatal(err)
	}
	// Water lies in the xz plane with its C2 axis along z: the principal
	// axes are the coordinate axes.
	for i := 0; i < 3; i++ {
		big := 0.0
		for k := 0; k < 3; k++ {
			big = math.Max(big, math.Abs(fw[i][k]))
		}
		if math.Abs(big-1) > 1e-12 {
			t.Errorf("water: axis %d = %v is not a coordinate axis", i, fw[i])
		}
	}
}

// TestBecke checks the cell functions: they sum to one at any point
// (Becke 1988, eq. 13), equal one at their own nucleus, and split the
// midpoint of a homonuclear bond equally.
func TestBecke(t *testing.T) {
	z, pos, _ := benzene()
	p := newPartition(z, pos)
	d := make([]float64, len(z))
	c := make([]float64, len(z))
	for _, r := range [][3]float64{{0, 0, 0}, {0.3, 1.7, -0.4}, {4, -2, 1}, {0.5, 0.5, 3}, pos[3]} {
		s := 0.0
		for a := range z {
			s += p.weight(r, a, d, c)
		}
		if math.Abs(s-1) > 1e-14 {
			t.Errorf("point %v: cell functions sum to %.16f", r, s)
		}
	}
	if w := p.weight(pos[2], 2, d, c); math.Abs(w-1) > 1e-14 {
		t.Errorf("cell function at own nucleus %.16f", w)
	}
	mid := [3]float64{(pos[0][0] + pos[1][0]) / 2, (pos[0][1] + pos[1][1]) / 2, 0}
	if w0, w1 := p.weight(mid, 0, d, c), p.weight(mid, 1, d, c); math.Abs(w0-w1) > 1e-14 {
		t.Errorf("C–C midpoint: %.16f vs %.16f", w0, w1)
	}
}

// TestDeterministic builds the same grid with 1, 2 and 3 threads and
// requires identical output.
func TestDeterministic(t *testing.T) {
	z, pos, _ := water()
	ref, err := New(z, pos, 2, IdentityFrame(), 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, th := range []int{2, 3} {
		g, err := New(z, pos, 2, IdentityFrame(), th)
		if err != nil {
			t.Fatal(err)
		}
		if g.NumPoints() != ref.NumPoints() || len(g.Batches) != len(ref.Batches) {
			t.Fatalf("threads %d: %d points/%d batches, want %d/%d", th, g.NumPoints(), len(g.Batches), ref.NumPoints(), len(ref.Batches))
		}
		for i := range g.W {
			if g.X[i] != ref.X[i] || g.Y[i] != ref.Y[i] || g.Z[i] != ref.Z[i] || g.W[i] != ref.W[i] || g.Atom[i] != ref.Atom[i] {
				t.Fatalf("threads %d: point %d differs", th, i)
			}
		}
		for i := range g.Batches {
			if g.Batches[i] != ref.Batches[i] {
				t.Fatalf("threads %d: batch %d differs", th, i)
			}
		}
	}
}

// TestBatches checks the batch layout: consecutive, covering every point
// once, at most maxBatchPoints points of one atom each, inside the bounding
// sphere.
func TestBatches(t *testing.T) {
	z, pos, _ := benzene()
	g, err := New(z, pos, 1, IdentityFrame(), 2)
	if err != nil {
		t.Fatal(err)
	}
	next := 0
	for k, b := range g.Batches {
		if b.Start != next || b.End <= b.Start || b.End-b.Start > maxBatchPoints {
			t.Fatalf("batch %d: [%d, %d) after %d", k, b.Start, b.End, next)
		}
		next = b.End
		for i := b.Start; i < b.End; i++ {
			if g.Atom[i] != b.Atom {
				t.Fatalf("batch %d: point %d of atom %d, batch atom %d", k, i, g.Atom[i], b.Atom)
			}
			if d := math.Sqrt(sqDist(b.Center, [3]float64{g.X[i], g.Y[i], g.Z[i]})); d > b.Radius*(1+1e-12) {
				t.Fatalf("batch %d: point %d outside the bounding sphere (%.6f > %.6f)", k, i, d, b.Radius)
			}
		}
	}
	if next != g.NumPoints() {
		t.Fatalf("batches cover %d of %d points", next, g.NumPoints())
	}
	for i, w := range g.W {
		if !(math.Abs(w) >= weightCutoff) {
			t.Fatalf("point %d has weight %g below the cutoff", i, w)
		}
	}
}

func TestNewErrors(t *testing.T) {
	z, pos, _ := water()
	bad := IdentityFrame()
	bad[0][0] = 2
	for _, tc := range []struct {
		name    string
		z       []int
		pos     [][3]float64
		level   int
		frame   Frame
		threads int
	}{
		{"no atoms", nil, nil, 3, IdentityFrame(), 1},
		{"length mismatch", z, pos[:2], 3, IdentityFrame(), 1},
		{"level 0", z, pos, 0, IdentityFrame(), 1},
		{"level 6", z, pos, 6, IdentityFrame(), 1},
		{"Z 0", []int{0, 1, 1}, pos, 3, IdentityFrame(), 1},
		{"Z 55", []int{55, 1, 1}, pos, 3, IdentityFrame(), 1},
		{"coincident", z, [][3]float64{pos[0], pos[1], pos[1]}, 3, IdentityFrame(), 1},
		{"NaN", z, [][3]float64{pos[0], pos[1], {math.NaN(), 0, 0}}, 3, IdentityFrame(), 1},
		{"frame", z, pos, 3, bad, 1},
		{"threads", z, pos, 3, IdentityFrame(), 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := New(tc.z, tc.pos, tc.level, tc.frame, tc.threads); err == nil {
				t.Error("no error")
			}
		})
	}
	if _, err := StandardFrame([]int{1}, nil); err == nil {
		t.Error("StandardFrame: no error for a length mismatch")
	}
	if _, err := LevelInfo(9); err == nil {
		t.Error("LevelInfo: no error for level 9")
	}
}

func BenchmarkNewBenzene(b *testing.B) {
	z, pos, _ := benzene()
	f, err := StandardFrame(z, pos)
	if err != nil {
		b.Fatal(err)
	}
	for _, th := range []int{1, 2} {
		b.Run(map[int]string{1: "threads=1", 2: "threads=2"}[th], func(b *testing.B) {
			var g *Grid
			for b.Loop() {
				g, err = New(z, pos, DefaultLevel, f, th)
				if err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(g.NumPoints()), "points")
		})
	}
}

// TestSelectNth compares the quickselect with a full sort on data with
// ties.
func TestSelectNth(t *testing.T) {
	x := make([]float64, 1000)
	for i := range x {
		x[i] = float64((i * 7919) % 97) // many ties
	}
	for _, m := range []int{1, 13, 500, 999} {
		idx := make([]int, len(x))
		for i := range idx {
			idx[i] = i
		}
		selectNth(idx, m, x)
		less := func(a, b int) bool { return x[a] < x[b] || (x[a] == x[b] && a < b) }
		for _, a := range idx[:m] {
			for _, b := range idx[m:] {
				if !less(a, b) {
					t.Fatalf("m=%d: %d (%g) not before %d (%g)", m, a, x[a], b, x[b])
				}
			}
		}
	}
}
