package optimize

import (
	"context"
	"fmt"
	"math"

	"poise/energy/units"
	"poise/gradient"
)

// modelSurface is an analytic potential: Morse bonds, harmonic angles,
// linear bends E = k(1 + cos θ) (minimum at 180°, curvature k at the
// minimum), and torsions V(1 − cos(n(φ − φ₀))). Its gradient is a
// fourth-order central difference of the energy (error far below 1e-9
// Eh/bohr), independent of the package's derivative code.
type modelSurface struct {
	n        int
	morse    []morseTerm
	angles   []angleTerm
	torsions []torsionTerm
	evals    int
}

type morseTerm struct {
	i, j          int
	de, a, reBohr float64
}

type angleTerm struct {
	i, j, k int
	force   float64 // Eh/rad²
	theta0  float64 // radians; ignored for linear bends
	linear  bool
}

type torsionTerm struct {
	i, j, k, l int
	v          float64
	n          float64
	phi0       float64
}

func (m *modelSurface) NumAtoms() int    { return m.n }
func (m *modelSurface) Evaluations() int { return m.evals }

func (m *modelSurface) energy(x []float64) float64 {
	e := 0.0
	for _, t := range m.morse {
		f := 1 - math.Exp(-t.a*(tdist(x, t.i, t.j)-t.reBohr))
		e += t.de * f * f
	}
	for _, t := range m.angles {
		if t.linear {
			u := tunit(tsub(tp(x, t.i), tp(x, t.j)))
			v := tunit(tsub(tp(x, t.k), tp(x, t.j)))
			e += t.force * (1 + tdot(u, v))
			continue
		}
		d := tangle(x, t.i, t.j, t.k) - t.theta0
		e += 0.5 * t.force * d * d
	}
	for _, t := range m.torsions {
		e += t.v * (1 - math.Cos(t.n*(tdihedral(x, t.i, t.j, t.k, t.l)-t.phi0)))
	}
	return e
}

func (m *modelSurface) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	if err := ctx.Err(); err != nil {
		return err
	}
	if len(x) != 3*m.n {
		return fmt.Errorf("model: %d coordinates for %d atoms", len(x), m.n)
	}
	m.evals++
	out.EnergyHartree = m.energy(x)
	if !req.Gradient {
		return nil
	}
	if out.Gradient == nil {
		out.Gradient = make([]float64, 3*m.n)
	}
	const h = 1e-3
	y := append([]float64(nil), x...)
	for i := range x {
		var e [4]float64
		for s, d := range []float64{-2 * h, -h, h, 2 * h} {
			y[i] = x[i] + d
			e[s] = m.energy(y)
		}
		y[i] = x[i]
		out.Gradient[i] = (e[0] - 8*e[1] + 8*e[2] - e[3]) / (12 * h)
	}
	return nil
}

// modelCase is a model surface with its known minimum geometry.
type modelCase struct {
	name string
	z    []int
	ref  []float64 // the minimum (bohr)
	surf func() *modelSurface
}

func ang(a float64) float64 { return a * units.AngstromBohr }
func deg(d float64) float64 { return d * math.Pi / 180 }

// modelCases returns the model surfaces. Every term is at its own minimum
// in the reference geometry, so that geometry is the global minimum
// (energy 0) by construction.
func modelCases() []modelCase {
	var cases []modelCase
	morse := func(i, j int, de, a, reA float64) morseTerm {
		return morseTerm{i: i, j: j, de: de, a: a, reBohr: ang(reA)}
	}
	// Water-like: two Morse O–H bonds, one harmonic bend.
	{
		z, x := build([]zrow{{z: 8}, {z: 1, a: 0, r: 0.96}, {z: 1, a: 0, r: 0.96, b: 1, theta: 104.5}})
		cases = append(cases, modelCase{"water", z, x, func() *modelSurface {
			return &modelSurface{n: 3,
				morse:  []morseTerm{morse(0, 1, 0.20, 1.2, 0.96), morse(0, 2, 0.20, 1.2, 0.96)},
				angles: []angleTerm{{i: 1, j: 0, k: 2, force: 0.16, theta0: deg(104.5)}}}
		}})
	}
	// Ammonia-like pyramid: three bonds and three consistent bends; the
	// dihedral of a C3v pyramid with bond angles α has cos φ =
	// (cos α − cos²α)/sin²α.
	{
		a := deg(106.7)
		phi := math.Acos((math.Cos(a)-math.Cos(a)*math.Cos(a))/(math.Sin(a)*math.Sin(a))) * 180 / math.Pi
		z, x := build([]zrow{{z: 7}, {z: 1, a: 0, r: 1.012}, {z: 1, a: 0, r: 1.012, b: 1, theta: 106.7},
			{z: 1, a: 0, r: 1.012, b: 1, theta: 106.7, c: 2, phi: phi}})
		cases = append(cases, modelCase{"ammonia", z, x, func() *modelSurface {
			s := &modelSurface{n: 4}
			for i := 1; i <= 3; i++ {
				s.morse = append(s.morse, morse(0, i, 0.18, 1.2, 1.012))
			}
			s.angles = []angleTerm{{i: 1, j: 0, k: 2, force: 0.13, theta0: a}, {i: 1, j: 0, k: 3, force: 0.13, theta0: a}, {i: 2, j: 0, k: 3, force: 0.13, theta0: a}}
			return s
		}})
	}
	// Methane-like tetrahedron: four bonds and six bends at the
	// tetrahedral angle arccos(−1/3).
	{
		t := math.Acos(-1.0/3) * 180 / math.Pi
		z, x := build([]zrow{{z: 6}, {z: 1, a: 0, r: 1.09}, {z: 1, a: 0, r: 1.09, b: 1, theta: t},
			{z: 1, a: 0, r: 1.09, b: 1, theta: t, c: 2, phi: 120}, {z: 1, a: 0, r: 1.09, b: 1, theta: t, c: 2, phi: -120}})
		cases = append(cases, modelCase{"methane", z, x, func() *modelSurface {
			s := &modelSurface{n: 5}
			for i := 1; i <= 4; i++ {
				s.morse = append(s.morse, morse(0, i, 0.17, 1.3, 1.09))
				for j := i + 1; j <= 4; j++ {
					s.angles = append(s.angles, angleTerm{i: i, j: 0, k: j, force: 0.12, theta0: deg(t)})
				}
			}
			return s
		}})
	}
	// Linear triatomic (carbon dioxide-like).
	{
		z, x := build([]zrow{{z: 8}, {z: 6, a: 0, r: 1.16}, {z: 8, a: 1, r: 1.16, b: 0, theta: 180}})
		cases = append(cases, modelCase{"linear OCO", z, x, func() *modelSurface {
			return &modelSurface{n: 3,
				morse:  []morseTerm{morse(0, 1, 0.30, 1.3, 1.16), morse(1, 2, 0.30, 1.3, 1.16)},
				angles: []angleTerm{{i: 0, j: 1, k: 2, force: 0.25, linear: true}}}
		}})
	}
	// Peroxide-like chain with a torsion minimum at 115°.
	{
		z, x := build([]zrow{{z: 1}, {z: 8, a: 0, r: 0.97}, {z: 8, a: 1, r: 1.45, b: 0, theta: 100},
			{z: 1, a: 2, r: 0.97, b: 1, theta: 100, c: 0, phi: 115}})
		phi0 := tdihedral(x, 0, 1, 2, 3)
		cases = append(cases, modelCase{"peroxide", z, x, func() *modelSurface {
			return &modelSurface{n: 4,
				morse:    []morseTerm{morse(0, 1, 0.18, 1.2, 0.97), morse(1, 2, 0.15, 1.3, 1.45), morse(2, 3, 0.18, 1.2, 0.97)},
				angles:   []angleTerm{{i: 0, j: 1, k: 2, force: 0.15, theta0: deg(100)}, {i: 1, j: 2, k: 3, force: 0.15, theta0: deg(100)}},
				torsions: []torsionTerm{{i: 0, j: 1, k: 2, l: 3, v: 0.01, n: 1, phi0: phi0}}}
		}})
	}
	// Two fragments: a linear F–H···F–H chain held by a weak Morse
	// contact (beyond the covalent bond criterion: a fragment bond).
	{
		z, x := build([]zrow{{z: 9}, {z: 1, a: 0, r: 0.92}, {z: 9, a: 1, r: 1.9, b: 0, theta: 180},
			{z: 1, a: 2, r: 0.92, b: 1, theta: 180, c: 0}})
		cases = append(cases, modelCase{"linear dimer", z, x, func() *modelSurface {
			return &modelSurface{n: 4,
				morse:  []morseTerm{morse(0, 1, 0.22, 1.2, 0.92), morse(2, 3, 0.22, 1.2, 0.92), morse(1, 2, 0.02, 1.5, 1.9)},
				angles: []angleTerm{{i: 0, j: 1, k: 2, force: 0.05, linear: true}, {i: 1, j: 2, k: 3, force: 0.05, linear: true}}}
		}})
	}
	// Propane-like: tetrahedral carbons, staggered threefold torsions.
	{
		t := math.Acos(-1.0/3) * 180 / math.Pi
		rows := []zrow{{z: 6}, {z: 6, a: 0, r: 1.53}, {z: 6, a: 1, r: 1.53, b: 0, theta: t},
			// hydrogens on C0
			{z: 1, a: 0, r: 1.09, b: 1, theta: t, c: 2, phi: 180},
			{z: 1, a: 0, r: 1.09, b: 1, theta: t, c: 2, phi: 60},
			{z: 1, a: 0, r: 1.09, b: 1, theta: t, c: 2, phi: -60},
			// hydrogens on C1
			{z: 1, a: 1, r: 1.09, b: 0, theta: t, c: 2, phi: 120},
			{z: 1, a: 1, r: 1.09, b: 0, theta: t, c: 2, phi: -120},
			// hydrogens on C2
			{z: 1, a: 2, r: 1.09, b: 1, theta: t, c: 0, phi: 180},
			{z: 1, a: 2, r: 1.09, b: 1, theta: t, c: 0, phi: 60},
			{z: 1, a: 2, r: 1.09, b: 1, theta: t, c: 0, phi: -60}}
		z, x := build(rows)
		cases = append(cases, modelCase{"propane", z, x, func() *modelSurface {
			s := &modelSurface{n: len(z)}
			nb := make([][]int, len(z))
			addBond := func(i, j int, re float64) {
				s.morse = append(s.morse, morse(i, j, 0.17, 1.3, re))
				nb[i] = append(nb[i], j)
				nb[j] = append(nb[j], i)
			}
			addBond(0, 1, 1.53)
			addBond(1, 2, 1.53)
			for _, h := range [][2]int{{0, 3}, {0, 4}, {0, 5}, {1, 6}, {1, 7}, {2, 8}, {2, 9}, {2, 10}} {
				addBond(h[0], h[1], 1.09)
			}
			for j := range nb {
				for p := 0; p < len(nb[j]); p++ {
					for q := p + 1; q < len(nb[j]); q++ {
						s.angles = append(s.angles, angleTerm{i: nb[j][p], j: j, k: nb[j][q], force: 0.12, theta0: deg(t)})
					}
				}
			}
			// Threefold torsions about both C–C bonds, minimum at ±60° and 180°.
			for _, b := range [][2]int{{0, 1}, {1, 2}} {
				for _, i := range nb[b[0]] {
					if i == b[1] {
						continue
					}
					for _, l := range nb[b[1]] {
						if l == b[0] {
							continue
						}
						s.torsions = append(s.torsions, torsionTerm{i: i, j: b[0], k: b[1], l: l, v: 0.0015, n: 3, phi0: deg(180)})
					}
				}
			}
			return s
		}})
	}
	return cases
}
