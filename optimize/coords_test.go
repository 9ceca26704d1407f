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
