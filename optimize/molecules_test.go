package optimize

import (
	"math"

	"poise/energy/units"
)

// Molecules of the robustness set: reference geometries (near experiment;
// only starting points, distorted before use) and published HF/STO-3G
// minima where the tests compare with them.

// check is a published value of a bond (2 atoms, Å) or angle (3 atoms,
// degrees) at the minimum.
type check struct {
	atoms []int
	value float64
}

type testMolecule struct {
	name   string
	z      []int
	x      []float64 // bohr
	checks []check   // HF/STO-3G minima
}

func robustnessSet() []testMolecule {
	var ms []testMolecule
	add := func(name string, rows []zrow, checks ...check) {
		z, x := build(rows)
		ms = append(ms, testMolecule{name, z, x, checks})
	}
	// HF/STO-3G minima from memory: W. J. Hehre, L. Radom, P. v. R.
	// Schleyer, J. A. Pople, Ab Initio Molecular Orbital Theory (Wiley,
	// 1986), ch. 6 tables, and CCCBDB-style listings.
	add("water", []zrow{{z: 8}, {z: 1, a: 0, r: 0.958}, {z: 1, a: 0, r: 0.958, b: 1, theta: 104.5}},
		check{[]int{0, 1}, 0.989}, check{[]int{1, 0, 2}, 100.0})
	{
		a := 106.7 * math.Pi / 180
		phi := math.Acos((math.Cos(a)-math.Cos(a)*math.Cos(a))/(math.Sin(a)*math.Sin(a))) * 180 / math.Pi
		add("ammonia", []zrow{{z: 7}, {z: 1, a: 0, r: 1.012}, {z: 1, a: 0, r: 1.012, b: 1, theta: 106.7},
			{z: 1, a: 0, r: 1.012, b: 1, theta: 106.7, c: 2, phi: phi}},
			check{[]int{0, 1}, 1.033}, check{[]int{1, 0, 2}, 104.2})
	}
	{
		t := math.Acos(-1.0/3) * 180 / math.Pi
		add("methane", []zrow{{z: 6}, {z: 1, a: 0, r: 1.087}, {z: 1, a: 0, r: 1.087, b: 1, theta: t},
			{z: 1, a: 0, r: 1.087, b: 1, theta: t, c: 2, phi: 120}, {z: 1, a: 0, r: 1.087, b: 1, theta: t, c: 2, phi: -120}},
			check{[]int{0, 1}, 1.083})
	}
	add("formaldehyde", []zrow{{z: 6}, {z: 8, a: 0, r: 1.205}, {z: 1, a: 0, r: 1.10, b: 1, theta: 121.8},
		{z: 1, a: 0, r: 1.10, b: 1, theta: 121.8, c: 2, phi: 180}},
		check{[]int{0, 1}, 1.217}, check{[]int{0, 2}, 1.101}, check{[]int{2, 0, 3}, 114.5})
	add("ethylene", []zrow{{z: 6}, {z: 6, a: 0, r: 1.339}, {z: 1, a: 0, r: 1.086, b: 1, theta: 121.2},
		{z: 1, a: 0, r: 1.086, b: 1, theta: 121.2, c: 2, phi: 180},
		{z: 1, a: 1, r: 1.086, b: 0, theta: 121.2, c: 2, phi: 0},
		{z: 1, a: 1, r: 1.086, b: 0, theta: 121.2, c: 2, phi: 180}},
		check{[]int{0, 1}, 1.306}, check{[]int{0, 2}, 1.082}, check{[]int{2, 0, 3}, 115.6})
	add("carbon dioxide", []zrow{{z: 8}, {z: 6, a: 0, r: 1.16}, {z: 8, a: 1, r: 1.16, b: 0, theta: 180}},
		check{[]int{0, 1}, 1.188})
	add("hydrogen cyanide", []zrow{{z: 1}, {z: 6, a: 0, r: 1.065}, {z: 7, a: 1, r: 1.153, b: 0, theta: 180}},
		check{[]int{0, 1}, 1.070}, check{[]int{1, 2}, 1.153})
	add("acetylene", []zrow{{z: 1}, {z: 6, a: 0, r: 1.06}, {z: 6, a: 1, r: 1.203, b: 0, theta: 180},
		{z: 1, a: 2, r: 1.06, b: 1, theta: 180, c: 0}},
		check{[]int{1, 2}, 1.168}, check{[]int{0, 1}, 1.065})
	ms = append(ms, cyclopropane())
	ms = append(ms, benzene())
	add("ethanol", []zrow{{z: 6}, {z: 6, a: 0, r: 1.512}, {z: 8, a: 1, r: 1.431, b: 0, theta: 107.8},
		{z: 1, a: 2, r: 0.971, b: 1, theta: 108.0, c: 0, phi: 180},
		{z: 1, a: 1, r: 1.096, b: 0, theta: 110.0, c: 2, phi: 120},
		{z: 1, a: 1, r: 1.096, b: 0, theta: 110.0, c: 2, phi: -120},
		{z: 1, a: 0, r: 1.093, b: 1, theta: 110.5, c: 2, phi: 180},
		{z: 1, a: 0, r: 1.093, b: 1, theta: 110.5, c: 2, phi: 60},
		{z: 1, a: 0, r: 1.093, b: 1, theta: 110.5, c: 2, phi: -60}})
	add("n-butane", []zrow{{z: 6}, {z: 6, a: 0, r: 1.531}, {z: 6, a: 1, r: 1.531, b: 0, theta: 112.7},
		{z: 6, a: 2, r: 1.531, b: 1, theta: 112.7, c: 0, phi: 180},
		{z: 1, a: 0, r: 1.093, b: 1, theta: 111.0, c: 2, phi: 180},
		{z: 1, a: 0, r: 1.093, b: 1, theta: 111.0, c: 2, phi: 60},
		{z: 1, a: 0, r: 1.093, b: 1, theta: 111.0, c: 2, phi: -60},
		{z: 1, a: 1, r: 1.096, b: 0, theta: 109.5, c: 2, phi: 122},
		{z: 1, a: 1, r: 1.096, b: 0, theta: 109.5, c: 2, phi: -122},
		{z: 1, a: 2, r: 1.096, b: 3, theta: 109.5, c: 1, phi: 122},
		{z: 1, a: 2, r: 1.096, b: 3, theta: 109.5, c: 1, phi: -122},
		{z: 1, a: 3, r: 1.093, b: 2, theta: 111.0, c: 1, phi: 180},
		{z: 1, a: 3, r: 1.093, b: 2, theta: 111.0, c: 1, phi: 60},
		{z: 1, a: 3, r: 1.093, b: 2, theta: 111.0, c: 1, phi: -60}})
	return ms
}

// cyclopropane: an equilateral C3 ring (C–C 1.51 Å) with CH2 groups in the
// planes perpendicular to the ring (C–H 1.08 Å, H–C–H 114.8°).
func cyclopropane() testMolecule {
	const cc, ch, hch = 1.51, 1.08, 114.8
	rc := cc / math.Sqrt(3)
	var z []int
	var x []float64
	for k := 0; k < 3; k++ {
		t := 2 * math.Pi * float64(k) / 3
		z = append(z, 6)
		x = append(x, rc*math.Cos(t), rc*math.Sin(t), 0)
	}
	h := hch / 2 * math.Pi / 180
	for k := 0; k < 3; k++ {
		t := 2 * math.Pi * float64(k) / 3
		for _, s := range []float64{1, -1} {
			z = append(z, 1)
			x = append(x, (rc+ch*math.Cos(h))*math.Cos(t), (rc+ch*math.Cos(h))*math.Sin(t), s*ch*math.Sin(h))
		}
	}
	for i := range x {
		x[i] *= units.AngstromBohr
	}
	return testMolecule{name: "cyclopropane", z: z, x: x}
}

// benzene: a regular hexagon, C–C 1.397 Å, C–H 1.084 Å.
func benzene() testMolecule {
	const cc, ch = 1.397, 1.084
	var z []int
	var x []float64
	for k := 0; k < 6; k++ {
		t := math.Pi * float64(k) / 3
		z = append(z, 6)
		x = append(x, cc*math.Cos(t), cc*math.Sin(t), 0)
	}
	for k := 0; k < 6; k++ {
		t := math.Pi * float64(k) / 3
		z = append(z, 1)
		x = append(x, (cc+ch)*math.Cos(t), (cc+ch)*math.Sin(t), 0)
	}
	for i := range x {
		x[i] *= units.AngstromBohr
	}
	// From memory (HF/STO-3G, as above): C–C 1.387 Å, C–H 1.083 Å.
	return testMolecule{name: "benzene", z: z, x: x, checks: []check{{[]int{0, 1}, 1.387}, {[]int{0, 6}, 1.083}}}
}
