package optimize

import (
	"math"
	"testing"
)

// A twisted, non-planar geometry of five atoms for derivative checks.
var testGeometry = []float64{
	0.1, 0.2, -0.1,
	2.3, 0.1, 0.3,
	3.0, 2.2, -0.2,
	5.1, 2.6, 1.1,
	2.9, -1.8, 1.4,
}

// TestDerivativesAgainstDifferences checks the Wilson B-matrix rows of every
// coordinate kind against central differences of the values.
func TestDerivativesAgainstDifferences(t *testing.T) {
	w1, w2 := perpendicularAxes([3]float64{1, 0.2, -0.1})
	cases := []Coordinate{
		{Kind: Bond, Atoms: [4]int{0, 1}},
		{Kind: Angle, Atoms: [4]int{0, 1, 2}},
		{Kind: Angle, Atoms: [4]int{4, 1, 2}},
		{Kind: LinearBend, Atoms: [4]int{0, 1, 2}, Axis: w1},
		{Kind: LinearBend, Atoms: [4]int{0, 1, 3}, Axis: w2},
		{Kind: Dihedral, Atoms: [4]int{0, 1, 2, 3}},
		{Kind: Dihedral, Atoms: [4]int{4, 1, 2, 3}},
		{Kind: Dihedral, Atoms: [4]int{3, 2, 1, 4}},
	}
	const h = 1e-5
	for _, c := range cases {
		var d [4][3]float64
		c.Derivative(testGeometry, &d)
		x := append([]float64(nil), testGeometry...)
		for i := 0; i < c.NumAtoms(); i++ {
			a := c.Atoms[i]
			for k := 0; k < 3; k++ {
				x[3*a+k] += h
				vp := c.Value(x)
				x[3*a+k] -= 2 * h
				vm := c.Value(x)
				x[3*a+k] += h
				num := c.difference(vp, vm) / (2 * h)
				if math.Abs(num-d[i][k]) > 1e-7 {
					t.Errorf("%s %v: d/d(atom %d, %c) = %.9f, differences give %.9f", c.Kind, c.Atoms[:c.NumAtoms()], a, "xyz"[k], d[i][k], num)
				}
			}
		}
	}
}

// TestDihedralConvention compares the dihedral value with the IUPAC
// definition (the sign of a right-handed rotation of the near bond into
// the far one, looking along the central bond), written independently.
func TestDihedralConvention(t *testing.T) {
	for _, q := range [][4]int{{0, 1, 2, 3}, {4, 1, 2, 3}, {3, 2, 1, 4}} {
		got := Coordinate{Kind: Dihedral, Atoms: q}.Value(testGeometry)
		want := tdihedral(testGeometry, q[0], q[1], q[2], q[3])
		if math.Abs(wrapAngle(got-want)) > 1e-12 {
			t.Errorf("dihedral %v = %.12f, want %.12f", q, got, want)
		}
	}
}

func TestWrapAngle(t *testing.T) {
	for _, c := range []struct{ in, want float64 }{
		{0, 0}, {math.Pi, math.Pi}, {-math.Pi, math.Pi}, {3 * math.Pi / 2, -math.Pi / 2},
		{-3 * math.Pi / 2, math.Pi / 2}, {7 * math.Pi, math.Pi}, {0.1 - 4*math.Pi, 0.1},
	} {
		if got := wrapAngle(c.in); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("wrapAngle(%g) = %g, want %g", c.in, got, c.want)
		}
	}
}

// TestZmatRoundTrip checks the test helpers: a Z-matrix read off a
// geometry rebuilds the same interatomic distances.
func TestZmatRoundTrip(t *testing.T) {
	for _, mc := range modelCases() {
		_, x := build(zmatOf(mc.z, mc.ref))
		for i := 0; i < len(mc.z); i++ {
			for j := i + 1; j < len(mc.z); j++ {
				if d := math.Abs(tdist(x, i, j) - tdist(mc.ref, i, j)); d > 1e-8 {
					t.Errorf("%s: distance %d–%d changed by %.2e bohr", mc.name, i+1, j+1, d)
				}
			}
		}
	}
}

// TestPrimitivesComplete checks that the coordinate sets span all internal
// degrees of freedom (rank of the Wilson B matrix 3N − 6, or 3N − 5 for a
// linear molecule) for molecules that need the special cases: linear
// chains inside a molecule, a linear molecule, a planar three-coordinate
// atom, rings, a diatomic and two separate fragments.
func TestPrimitivesComplete(t *testing.T) {
	tet := 109.4712206
	cases := []struct {
		name   string
		rows   []zrow
		linear bool
	}{
		{"hydrogen", []zrow{{z: 1}, {z: 1, a: 0, r: 0.74}}, true},
		{"carbon dioxide", []zrow{{z: 8}, {z: 6, a: 0, r: 1.16}, {z: 8, a: 1, r: 1.16, b: 0, theta: 180}}, true},
		{"acetylene", []zrow{{z: 1}, {z: 6, a: 0, r: 1.06}, {z: 6, a: 1, r: 1.2, b: 0, theta: 180}, {z: 1, a: 2, r: 1.06, b: 1, theta: 180, c: 0}}, true},
		{"propyne", []zrow{{z: 6}, {z: 6, a: 0, r: 1.46}, {z: 6, a: 1, r: 1.21, b: 0, theta: 180}, {z: 1, a: 2, r: 1.06, b: 1, theta: 180, c: 0},
			{z: 1, a: 0, r: 1.09, b: 1, theta: 110, c: 2, phi: 0}, {z: 1, a: 0, r: 1.09, b: 1, theta: 110, c: 4, phi: 120},
			{z: 1, a: 0, r: 1.09, b: 1, theta: 110, c: 4, phi: -120}}, false},
		{"formaldehyde", []zrow{{z: 6}, {z: 8, a: 0, r: 1.2}, {z: 1, a: 0, r: 1.1, b: 1, theta: 122}, {z: 1, a: 0, r: 1.1, b: 1, theta: 122, c: 2, phi: 180}}, false},
		{"planar ammonia", []zrow{{z: 7}, {z: 1, a: 0, r: 1.0}, {z: 1, a: 0, r: 1.0, b: 1, theta: 120}, {z: 1, a: 0, r: 1.0, b: 1, theta: 120, c: 2, phi: 180}}, false},
		{"hydrogen peroxide", []zrow{{z: 1}, {z: 8, a: 0, r: 0.97}, {z: 8, a: 1, r: 1.45, b: 0, theta: 100}, {z: 1, a: 2, r: 0.97, b: 1, theta: 100, c: 0, phi: 115}}, false},
		{"ethane", []zrow{{z: 6}, {z: 6, a: 0, r: 1.53}, {z: 1, a: 0, r: 1.09, b: 1, theta: tet}, {z: 1, a: 0, r: 1.09, b: 1, theta: tet, c: 2, phi: 120},
			{z: 1, a: 0, r: 1.09, b: 1, theta: tet, c: 2, phi: -120}, {z: 1, a: 1, r: 1.09, b: 0, theta: tet, c: 2, phi: 60},
			{z: 1, a: 1, r: 1.09, b: 0, theta: tet, c: 2, phi: 180}, {z: 1, a: 1, r: 1.09, b: 0, theta: tet, c: 2, phi: -60}}, false},
		{"water dimer", []zrow{{z: 8}, {z: 1, a: 0, r: 0.96}, {z: 1, a: 0, r: 0.96, b: 1, theta: 104.5}, {z: 8, a: 1, r: 1.95, b: 0, theta: 175, c: 2, phi: 0},
			{z: 1, a: 3, r: 0.96, b: 1, theta: 110, c: 0, phi: 60}, {z: 1, a: 3, r: 0.96, b: 1, theta: 110, c: 0, phi: -60}}, false},
		{"argon–water", []zrow{{z: 18}, {z: 8, a: 0, r: 3.6}, {z: 1, a: 1, r: 0.96, b: 0, theta: 100}, {z: 1, a: 1, r: 0.96, b: 0, theta: 100, c: 2, phi: 110}}, false},
	}
	for _, c := range cases {
		z, x := build(c.rows)
		want := 3*len(z) - 6
		if c.linear {
			want = 3*len(z) - 5
		}
		r := &relaxer{z: z, n: len(z), fidx: make([]int, len(z)), m: 3 * len(z)}
		for i := range z {
			r.fidx[i] = i
			r.free = append(r.free, i)
		}
		r.prims = Primitives(z, x, nil)
		f, err := r.frame(x)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if got := len(f.sig); got != want {
			t.Errorf("%s: %d independent internal coordinates, want %d", c.name, got, want)
		}
		if got := r.m - len(r.rigid(x)); got != want {
			t.Errorf("%s: %d degrees of freedom by the rigid motions, want %d", c.name, got, want)
		}
	}
	for _, m := range robustnessSet() {
		r := &relaxer{z: m.z, n: len(m.z), fidx: make([]int, len(m.z)), m: 3 * len(m.z)}
		for i := range m.z {
			r.fidx[i] = i
			r.free = append(r.free, i)
		}
		if !r.build(m.x) {
			t.Errorf("%s: coordinates incomplete", m.name)
		}
	}
}
