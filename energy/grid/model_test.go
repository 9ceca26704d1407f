package grid

import (
	"math"

	"poise/energy/units"
)

// Model densities for the grid tests. Each atom carries Slater-type shells
// with exponents from Slater's rules (J. C. Slater, Phys. Rev. 36, 57
// (1930); common practice), each normalized to its occupation, and each
// bond carries a normalized Gaussian "bond charge" that makes the density
// anisotropic. The exact electron count is the sum of all occupations.

// stoShell is one spherical Slater-type shell: density
// N·(2ζ)^(2n+1)/(4π·(2n)!)·r^(2n−2)·e^(−2ζr), which integrates to N.
type stoShell struct {
	n    int // principal quantum number (1 or 2)
	zeta float64
	occ  float64
}

// slaterShells returns the Slater-rule shells of the neutral atoms H, C, N, O.
func slaterShells(z int) []stoShell {
	switch z {
	case 1: // 1s¹: ζ = 1
		return []stoShell{{1, 1.0, 1}}
	case 6: // 1s: 6−0.30; (2s,2p)⁴: (6 − 2·0.85 − 3·0.35)/2
		return []stoShell{{1, 5.70, 2}, {2, 1.625, 4}}
	case 7:
		return []stoShell{{1, 6.70, 2}, {2, 1.95, 5}}
	case 8: // (8 − 2·0.85 − 5·0.35)/2 = 2.275
		return []stoShell{{1, 7.70, 2}, {2, 2.275, 6}}
	}
	panic("no model shells")
}

type bondCharge struct {
	c     [3]float64
	alpha float64
	q     float64
}

type modelDensity struct {
	pos    [][3]float64
	shells [][]stoShell
	pref   [][]float64 // per shell normalization·occupation
	bonds  []bondCharge
	count  float64 // exact electron count
}

// newModel builds the model density; bonds lists atom pairs that get a bond
// charge of q electrons with exponent alpha (bohr⁻²) at their midpoint.
func newModel(z []int, pos [][3]float64, bonds [][2]int, q, alpha float64) *modelDensity {
	m := &modelDensity{pos: pos}
	for _, zi := range z {
		sh := slaterShells(zi)
		var pr []float64
		for _, s := range sh {
			var norm float64
			switch s.n {
			case 1:
				norm = math.Pow(2*s.zeta, 3) / (4 * math.Pi * 2)
			case 2:
				norm = math.Pow(2*s.zeta, 5) / (4 * math.Pi * 24)
			}
			pr = append(pr, norm*s.occ)
			m.count += s.occ
		}
		m.shells = append(m.shells, sh)
		m.pref = append(m.pref, pr)
	}
	for _, b := range bonds {
		p, r := pos[b[0]], pos[b[1]]
		m.bonds = append(m.bonds, bondCharge{
			c:     [3]float64{(p[0] + r[0]) / 2, (p[1] + r[1]) / 2, (p[2] + r[2]) / 2},
			alpha: alpha, q: q,
		})
		m.count += q
	}
	return m
}

func (m *modelDensity) rho(x, y, z float64) float64 {
	s := 0.0
	for a, p := range m.pos {
		dx, dy, dz := x-p[0], y-p[1], z-p[2]
		r2 := dx*dx + dy*dy + dz*dz
		r := math.Sqrt(r2)
		for k, sh := range m.shells[a] {
			v := m.pref[a][k] * math.Exp(-2*sh.zeta*r)
			if sh.n == 2 {
				v *= r2
			}
			s += v
		}
	}
	for _, b := range m.bonds {
		dx, dy, dz := x-b.c[0], y-b.c[1], z-b.c[2]
		s += b.q * math.Pow(b.alpha/math.Pi, 1.5) * math.Exp(-b.alpha*(dx*dx+dy*dy+dz*dz))
	}
	return s
}

// integrals returns Σ w ρ and Σ w ρ^{4/3} over the grid.
func (m *modelDensity) integrals(g *Grid) (n, lda float64) {
	for i, w := range g.W {
		r := m.rho(g.X[i], g.Y[i], g.Z[i])
		n += w * r
		lda += w * math.Pow(r, 4.0/3)
	}
	return n, lda
}

// water returns H2O at the experimental equilibrium geometry
// (r = 0.9572 Å, ∠HOH = 104.52°; common practice), in bohr, off-centre and
// in a general orientation so that no symmetry axis is a coordinate axis.
func water() ([]int, [][3]float64, [][2]int) {
	r := 0.9572 * units.AngstromBohr
	th := 104.52 * math.Pi / 180 / 2
	pos := [][3]float64{
		{0, 0, 0},
		{r * math.Sin(th), 0, r * math.Cos(th)},
		{-r * math.Sin(th), 0, r * math.Cos(th)},
	}
	return []int{8, 1, 1}, pos, [][2]int{{0, 1}, {0, 2}}
}

// benzene returns C6H6 with C–C 1.39 Å and C–H 1.09 Å (common practice), in
// bohr, in the xy plane.
func benzene() ([]int, [][3]float64, [][2]int) {
	rc := 1.39 * units.AngstromBohr
	rh := rc + 1.09*units.AngstromBohr
	var z []int
	var pos [][3]float64
	var bonds [][2]int
	for k := 0; k < 6; k++ {
		phi := float64(k) * math.Pi / 3
		z = append(z, 6)
		pos = append(pos, [3]float64{rc * math.Cos(phi), rc * math.Sin(phi), 0})
	}
	for k := 0; k < 6; k++ {
		phi := float64(k) * math.Pi / 3
		z = append(z, 1)
		pos = append(pos, [3]float64{rh * math.Cos(phi), rh * math.Sin(phi), 0})
		bonds = append(bonds, [2]int{k, (k + 1) % 6}, [2]int{k, k + 6})
	}
	return z, pos, bonds
}

// rotation returns the rotation matrix for Euler angles (z–y–z convention).
func rotation(a, b, c float64) [3][3]float64 {
	rz := func(t float64) [3][3]float64 {
		return [3][3]float64{{math.Cos(t), -math.Sin(t), 0}, {math.Sin(t), math.Cos(t), 0}, {0, 0, 1}}
	}
	ry := func(t float64) [3][3]float64 {
		return [3][3]float64{{math.Cos(t), 0, math.Sin(t)}, {0, 1, 0}, {-math.Sin(t), 0, math.Cos(t)}}
	}
	return matMul(rz(a), matMul(ry(b), rz(c)))
}

func matMul(a, b [3][3]float64) [3][3]float64 {
	var c [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			for k := 0; k < 3; k++ {
				c[i][j] += a[i][k] * b[k][j]
			}
		}
	}
	return c
}

// rotate applies R to every position, then shifts by t.
func rotate(pos [][3]float64, r [3][3]float64, t [3]float64) [][3]float64 {
	out := make([][3]float64, len(pos))
	for i, p := range pos {
		for a := 0; a < 3; a++ {
			out[i][a] = r[a][0]*p[0] + r[a][1]*p[1] + r[a][2]*p[2] + t[a]
		}
	}
	return out
}

// testRotations is a fixed set of general rotations (Euler angles in rad).
var testRotations = [][3]float64{
	{0.3, 0.7, 1.1}, {1.9, 2.3, 0.4}, {-0.8, 1.3, 2.9}, {2.6, 0.2, -1.7}, {0.05, 0.11, 0.07},
}

// methane returns CH4 with C–H 1.087 Å (common practice), in bohr.
func methane() ([]int, [][3]float64, [][2]int) {
	s := 1.087 * units.AngstromBohr / math.Sqrt(3)
	return []int{6, 1, 1, 1, 1},
		[][3]float64{{0, 0, 0}, {s, s, s}, {-s, -s, s}, {-s, s, -s}, {s, -s, -s}},
		[][2]int{{0, 1}, {0, 2}, {0, 3}, {0, 4}}
}

// hcn returns HCN with C–H 1.066 Å and C–N 1.153 Å (common practice), in
// bohr, along z.
func hcn() ([]int, [][3]float64, [][2]int) {
	return []int{1, 6, 7},
		[][3]float64{{0, 0, -1.066 * units.AngstromBohr}, {0, 0, 0}, {0, 0, 1.153 * units.AngstromBohr}},
		[][2]int{{0, 1}, {1, 2}}
}
