package optimize

import (
	"math"

	"poise/energy/units"
)

// Test helpers: Z-matrices, geometric measures written independently of
// the package code, and distortions of a starting geometry.

// zrow places an atom: distance r (Å) to atom a, angle theta (degrees)
// with atom b, dihedral phi (degrees) with atom c (atoms numbered from 0;
// unused references for the first three atoms).
type zrow struct {
	z     int
	a     int
	r     float64
	b     int
	theta float64
	c     int
	phi   float64
}

// build converts a Z-matrix to Cartesian coordinates in bohr (natural
// extension reference frame construction).
func build(rows []zrow) (z []int, x []float64) {
	x = make([]float64, 3*len(rows))
	for i, row := range rows {
		z = append(z, row.z)
		r := row.r * units.AngstromBohr
		th := row.theta * math.Pi / 180
		ph := row.phi * math.Pi / 180
		switch i {
		case 0:
		case 1:
			x[3*i+2] = x[3*row.a+2] + r
			x[3*i] = x[3*row.a]
			x[3*i+1] = x[3*row.a+1]
		default:
			A := tp(x, row.a)
			B := tp(x, row.b)
			var C [3]float64
			if i == 2 {
				// Any reference off the line A–B.
				C = tadd(B, [3]float64{1, 0.7, 0.3})
				d := tunit(tsub(A, B))
				if math.Abs(d[0]) < 0.9 {
					C = tadd(B, [3]float64{1, 0, 0})
				} else {
					C = tadd(B, [3]float64{0, 1, 0})
				}
			} else {
				C = tp(x, row.c)
			}
			bc := tunit(tsub(A, B))
			n := tcross(tsub(B, C), bc)
			if tnorm(n) < 1e-10 {
				// C on the line A–B: choose any perpendicular.
				n = tcross(bc, [3]float64{0.3, 0.5, 0.8})
			}
			n = tunit(n)
			m := tcross(n, bc)
			d := [3]float64{-r * math.Cos(th), r * math.Sin(th) * math.Cos(ph), r * math.Sin(th) * math.Sin(ph)}
			p := tadd(A, tadd(tscale(d[0], bc), tadd(tscale(d[1], m), tscale(d[2], n))))
			copy(x[3*i:3*i+3], p[:])
		}
	}
	return z, x
}

func tp(x []float64, a int) [3]float64 { return [3]float64{x[3*a], x[3*a+1], x[3*a+2]} }
func tsub(a, b [3]float64) [3]float64 {
	return [3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]}
}
func tadd(a, b [3]float64) [3]float64 {
	return [3]float64{a[0] + b[0], a[1] + b[1], a[2] + b[2]}
}
func tscale(s float64, a [3]float64) [3]float64 { return [3]float64{s * a[0], s * a[1], s * a[2]} }
func tdot(a, b [3]float64) float64              { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func tcross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}
func tnorm(a [3]float64) float64          { return math.Sqrt(tdot(a, a)) }
func tunit(a [3]float64) [3]float64       { return tscale(1/tnorm(a), a) }
func tdist(x []float64, i, j int) float64 { return tnorm(tsub(tp(x, i), tp(x, j))) }

// tangle is the angle i–j–k in radians (law of cosines on the vectors).
func tangle(x []float64, i, j, k int) float64 {
	u := tunit(tsub(tp(x, i), tp(x, j)))
	v := tunit(tsub(tp(x, k), tp(x, j)))
	c := math.Max(-1, math.Min(1, tdot(u, v)))
	return math.Acos(c)
}

// tdihedral is the dihedral i–j–k–l in radians (the atan2 form of the
// IUPAC definition with b1 = j−i, b2 = k−j, b3 = l−k).
func tdihedral(x []float64, i, j, k, l int) float64 {
	b1 := tsub(tp(x, j), tp(x, i))
	b2 := tsub(tp(x, k), tp(x, j))
	b3 := tsub(tp(x, l), tp(x, k))
	n1 := tcross(b1, b2)
	n2 := tcross(b2, b3)
	return math.Atan2(tnorm(b2)*tdot(b1, n2), tdot(n1, n2))
}

// zmatOf reads a Z-matrix off Cartesian coordinates: each atom refers to
// the nearest earlier atom, that atom's nearest earlier neighbour, and a
// third earlier atom off their line.
func zmatOf(z []int, x []float64) []zrow {
	n := len(z)
	rows := make([]zrow, n)
	nearest := func(i int, before int, skip ...int) int {
		best, bd := -1, math.Inf(1)
	outer:
		for j := 0; j < before; j++ {
			for _, s := range skip {
				if j == s {
					continue outer
				}
			}
			if d := tdist(x, i, j); d < bd {
				best, bd = j, d
			}
		}
		return best
	}
	for i := 0; i < n; i++ {
		rows[i].z = z[i]
		if i == 0 {
			continue
		}
		a := nearest(i, i)
		rows[i].a = a
		rows[i].r = tdist(x, i, a) * units.BohrAngstrom
		if i == 1 {
			continue
		}
		b := nearest(a, i, a)
		rows[i].b = b
		rows[i].theta = tangle(x, i, a, b) * 180 / math.Pi
		if i == 2 {
			continue
		}
		// The dihedral reference: an earlier atom off the line a–b.
		c := -1
		bd := math.Inf(1)
		for j := 0; j < i; j++ {
			if j == a || j == b {
				continue
			}
			if ang := tangle(x, a, b, j) * 180 / math.Pi; ang < 5 || ang > 175 {
				continue
			}
			if d := tdist(x, b, j); d < bd {
				c, bd = j, d
			}
		}
		if c < 0 {
			c = nearest(b, i, a, b)
		}
		rows[i].c = c
		if rows[i].theta > 179.9 {
			rows[i].phi = 0 // undefined for a linear triple
		} else {
			rows[i].phi = tdihedral(x, i, a, b, c) * 180 / math.Pi
		}
	}
	return rows
}

// distort changes the bonds of a Z-matrix by ±bondFraction and its angles
// by ±angleDegrees, alternating signs along the atoms (angles at 180° are
// bent to 180° − angleDegrees).
func distort(z []int, x []float64, bondFraction, angleDeg float64) []float64 {
	rows := zmatOf(z, x)
	for i := 1; i < len(rows); i++ {
		sign := 1.0
		if i%2 == 0 {
			sign = -1
		}
		rows[i].r *= 1 + sign*bondFraction
		if i >= 2 {
			t := rows[i].theta + sign*angleDeg
			if t > 180-angleDeg {
				t = rows[i].theta - angleDeg
			}
			rows[i].theta = t
		}
	}
	_, out := build(rows)
	return out
}
