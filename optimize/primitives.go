package optimize

import (
	"math"
	"sort"

	"poise/energy/units"
)

// covalentRadiusAngstrom are single-bond covalent radii, Z 1–36 (B. Cordero,
// V. Gómez, A. E. Platero-Prats, M. Revés, J. Echeverría, E. Cremades,
// F. Barragán, S. Alvarez, Dalton Trans. 2008, 2832; from memory; sp³ carbon,
// low-spin values for Mn, Fe, Co).
var covalentRadiusAngstrom = [...]float64{0,
	0.31, 0.28, // H, He
	1.28, 0.96, 0.84, 0.76, 0.71, 0.66, 0.57, 0.58, // Li–Ne
	1.66, 1.41, 1.21, 1.11, 1.07, 1.05, 1.02, 1.06, // Na–Ar
	2.03, 1.76, 1.70, 1.60, 1.53, 1.39, 1.39, 1.32, 1.26, 1.24, 1.32, 1.22, // K–Zn
	1.22, 1.20, 1.19, 1.20, 1.20, 1.16, // Ga–Kr
}

// CovalentRadiusBohr is the covalent radius of element z in bohr (1.5 Å
// for elements outside the table).
func CovalentRadiusBohr(z int) float64 {
	if z > 0 && z < len(covalentRadiusAngstrom) {
		return covalentRadiusAngstrom[z] * units.AngstromBohr
	}
	return 1.5 * units.AngstromBohr
}

// BondFactor is the bond criterion: two atoms are bonded when closer than
// BondFactor times the sum of their covalent radii (common practice).
const BondFactor = 1.3

// linearDegrees is the angle beyond which an Angle coordinate (or the
// angle at either end of a dihedral) no longer defines its direction: the
// coordinates are rebuilt, and a held angle must stay below it.
const linearDegrees = 175.0

// bendDegrees is the angle above which Primitives describes three atoms
// with two linear bends (an atom with two neighbours) and above which
// dihedrals are taken through the linear chain: well below linearDegrees,
// so that a start bent by up to 20° needs no rebuild on its way to
// linearity.
const bendDegrees = 160.0

// planarDegrees: an atom with three neighbours whose three angles add up to
// more than this is near-planar and gets an out-of-plane dihedral.
const planarDegrees = 350.0

// Bonds returns the bonded atom pairs (i < j) at xBohr by covalent radii,
// plus the pairs that join separate fragments into one connected graph
// (see Primitives).
func Bonds(z []int, xBohr []float64) [][2]int {
	n := len(z)
	var bonds [][2]int
	uf := newUnionFind(n)
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			d := dist(xBohr, i, j)
			if d < BondFactor*(CovalentRadiusBohr(z[i])+CovalentRadiusBohr(z[j])) {
				bonds = append(bonds, [2]int{i, j})
				uf.union(i, j)
			}
		}
	}
	return append(bonds, fragmentBonds(xBohr, uf)...)
}

// fragmentBonds joins the fragments of uf: repeatedly the closest pair of
// atoms in different fragments, and with it every other pair between the
// same two fragments shorter than 1.3 times that distance or 2 Å longer at
// most, whichever is shorter (V. Bakken, T. Helgaker, J. Chem. Phys. 117,
// 9160 (2002), sec. II.C).
func fragmentBonds(x []float64, uf *unionFind) [][2]int {
	n := len(uf.parent)
	var out [][2]int
	for {
		bi, bj, best := -1, -1, math.Inf(1)
		for i := 0; i < n; i++ {
			for j := i + 1; j < n; j++ {
				if uf.find(i) == uf.find(j) {
					continue
				}
				if d := dist(x, i, j); d < best {
					bi, bj, best = i, j, d
				}
			}
		}
		if bi < 0 {
			return out
		}
		fi, fj := uf.find(bi), uf.find(bj)
		limit := math.Min(1.3*best, best+2*units.AngstromBohr)
		for i := 0; i < n; i++ {
			for j := i + 1; j < n; j++ {
				ri, rj := uf.find(i), uf.find(j)
				if (ri == fi && rj == fj) || (ri == fj && rj == fi) {
					if dist(x, i, j) <= limit {
						out = append(out, [2]int{i, j})
					}
				}
			}
		}
		uf.union(bi, bj)
	}
}

func dist(x []float64, i, j int) float64 { return norm(sub(pos(x, i), pos(x, j))) }

// angleDegrees is the angle i–j–k at j in degrees.
func angleDegrees(x []float64, i, j, k int) float64 {
	return Coordinate{Kind: Angle, Atoms: [4]int{i, j, k}}.Value(x) * 180 / math.Pi
}

type unionFind struct{ parent []int }

func newUnionFind(n int) *unionFind {
	p := make([]int, n)
	for i := range p {
		p[i] = i
	}
	return &unionFind{parent: p}
}

func (u *unionFind) find(i int) int {
	for u.parent[i] != i {
		u.parent[i] = u.parent[u.parent[i]]
		i = u.parent[i]
	}
	return i
}

func (u *unionFind) union(i, j int) { u.parent[u.find(i)] = u.find(j) }

// Primitives returns the redundant internal coordinates of a molecule of
// elements z at xBohr (C. Peng, P. Y. Ayala, H. B. Schlegel, M. J. Frisch,
// J. Comput. Chem. 17, 49 (1996); V. Bakken, T. Helgaker, J. Chem. Phys.
// 117, 9160 (2002)):
//
//   - bonds: pairs closer than BondFactor × the sum of covalent radii, and
//     bonds joining separate fragments (the closest pair of atoms between
//     two fragments and the pairs nearly as close);
//   - angles i–j–k for bonds i–j and j–k; above 160° an atom with two
//     neighbours gets two LinearBend components instead (axes perpendicular
//     to the line and to each other);
//   - dihedrals i–j–k–l for every bond j–k, taken over the ends of linear
//     chains when j or k is a linear atom;
//   - an out-of-plane dihedral for each near-planar atom with three
//     neighbours (the sum of its angles above 350°).
//
// extra coordinates (those held fixed) are appended unless already there.
func Primitives(z []int, xBohr []float64, extra []Coordinate) []Coordinate {
	n := len(z)
	bonds := Bonds(z, xBohr)
	nb := make([][]int, n)
	var prims []Coordinate
	for _, b := range bonds {
		nb[b[0]] = append(nb[b[0]], b[1])
		nb[b[1]] = append(nb[b[1]], b[0])
		prims = append(prims, Coordinate{Kind: Bond, Atoms: [4]int{b[0], b[1]}})
	}
	for i := range nb {
		sort.Ints(nb[i])
	}
	linear := func(i, j, k int) bool { return angleDegrees(xBohr, i, j, k) > bendDegrees }
	// Angles and linear bends.
	for j := 0; j < n; j++ {
		for p := 0; p < len(nb[j]); p++ {
			for q := p + 1; q < len(nb[j]); q++ {
				i, k := nb[j][p], nb[j][q]
				if !linear(i, j, k) {
					prims = append(prims, Coordinate{Kind: Angle, Atoms: [4]int{i, j, k}})
					continue
				}
				if len(nb[j]) == 2 {
					w1, w2 := perpendicularAxes(sub(pos(xBohr, k), pos(xBohr, i)))
					prims = append(prims,
						Coordinate{Kind: LinearBend, Atoms: [4]int{i, j, k}, Axis: w1},
						Coordinate{Kind: LinearBend, Atoms: [4]int{i, j, k}, Axis: w2})
				}
				// An atom with more neighbours has its linear pair
				// described by the angles to the others.
			}
		}
	}
	// Dihedrals over every bond, extended through linear chains.
	seen := map[[4]int]bool{}
	for _, b := range bonds {
		l, lNext := chainEnd(xBohr, nb, b[0], b[1], linear)
		r, rNext := chainEnd(xBohr, nb, b[1], b[0], linear)
		if l == r {
			continue // a ring of linear atoms cannot happen; guard anyway
		}
		for _, i := range nb[l] {
			if i == lNext || i == r || linear(i, l, lNext) {
				continue
			}
			for _, k := range nb[r] {
				if k == rNext || k == l || k == i || linear(rNext, r, k) {
					continue
				}
				key := [4]int{i, l, r, k}
				if i > k {
					key = [4]int{k, r, l, i}
				}
				if seen[key] {
					continue
				}
				seen[key] = true
				prims = append(prims, Coordinate{Kind: Dihedral, Atoms: key})
			}
		}
	}
	// Out-of-plane dihedrals at near-planar three-coordinate atoms.
	for j := 0; j < n; j++ {
		if len(nb[j]) != 3 {
			continue
		}
		a, b, c := nb[j][0], nb[j][1], nb[j][2]
		sum := angleDegrees(xBohr, a, j, b) + angleDegrees(xBohr, a, j, c) + angleDegrees(xBohr, b, j, c)
		if sum > planarDegrees {
			prims = append(prims, Coordinate{Kind: OutOfPlane, Atoms: [4]int{a, b, c, j}})
		}
	}
	for _, e := range extra {
		dup := false
		for _, p := range prims {
			if sameAtoms(p, e) {
				dup = true
				break
			}
		}
		if !dup {
			prims = append(prims, e)
		}
	}
	return prims
}

// chainEnd walks from atom a away from atom from through linear atoms (two
// neighbours, bent by more than 175°) and returns the last atom reached and
// its neighbour on the way back.
func chainEnd(x []float64, nb [][]int, a, from int, linear func(i, j, k int) bool) (end, prev int) {
	end, prev = a, from
	for steps := 0; steps < len(nb); steps++ {
		if len(nb[end]) != 2 {
			return end, prev
		}
		next := nb[end][0]
		if next == prev {
			next = nb[end][1]
		}
		if !linear(prev, end, next) {
			return end, prev
		}
		end, prev = next, end
	}
	return end, prev
}

// perpendicularAxes returns two unit vectors perpendicular to d and to each
// other: the first perpendicular to d and to the Cartesian axis least
// aligned with d.
func perpendicularAxes(d [3]float64) ([3]float64, [3]float64) {
	d = scale(1/norm(d), d)
	k := 0
	for i := 1; i < 3; i++ {
		if math.Abs(d[i]) < math.Abs(d[k]) {
			k = i
		}
	}
	var e [3]float64
	e[k] = 1
	w1 := cross(d, e)
	w1 = scale(1/norm(w1), w1)
	w2 := cross(d, w1)
	return w1, scale(1/norm(w2), w2)
}

// brokenAt reports whether prims no longer describe the geometry well: an
// Angle beyond 175° (its bend direction becomes undefined) or a dihedral
// with an angle beyond 175° at either end.
func brokenAt(prims []Coordinate, x []float64) bool {
	for _, p := range prims {
		switch p.Kind {
		case Angle:
			if angleDegrees(x, p.Atoms[0], p.Atoms[1], p.Atoms[2]) > linearDegrees {
				return true
			}
		case Dihedral, OutOfPlane:
			if angleDegrees(x, p.Atoms[0], p.Atoms[1], p.Atoms[2]) > linearDegrees ||
				angleDegrees(x, p.Atoms[1], p.Atoms[2], p.Atoms[3]) > linearDegrees {
				return true
			}
		}
	}
	return false
}
