package grid

import (
	"fmt"
	"math"
)

// Frame is the orientation of the angular grids: its rows are three
// orthonormal axes given in the molecule's coordinates. The angular point
// with unit vector (u, v, t) in a Lebedev–Laikov rule sits on an atom's
// radial shell along u·F[0] + v·F[1] + t·F[2].
//
// Fix one Frame per relaxation, Hessian or scan and pass it to every grid
// built along the way: the grid then moves rigidly with each atom and the
// energy is a smooth function of the nuclear positions. Because every
// Lebedev–Laikov rule has full octahedral symmetry, the sign and order of the
// axes do not change the grid; only the set of three lines does.
type Frame [3][3]float64

// IdentityFrame returns the frame whose axes are the coordinate axes.
func IdentityFrame() Frame {
	return Frame{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
}

// check reports whether f is orthonormal to 1e-10.
func (f Frame) check() error {
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			d := f[i][0]*f[j][0] + f[i][1]*f[j][1] + f[i][2]*f[j][2]
			want := 0.0
			if i == j {
				want = 1
			}
			if math.IsNaN(d) || math.Abs(d-want) > 1e-10 {
				return fmt.Errorf("grid: frame is not orthonormal (row %d · row %d = %g)", i, j, d)
			}
		}
	}
	return nil
}

// degenerateTol is the relative difference below which two nuclear-charge
// moments of inertia count as equal in StandardFrame.
const degenerateTol = 1e-6

// StandardFrame returns a canonical frame for a molecule that rotates with
// it: the principal axes of the nuclear-charge-weighted inertia tensor
// I = Σ_A Z_A (|r_A|² 1 − r_A r_Aᵀ), with r_A measured from the
// nuclear-charge centroid. Positions are in bohr.
//
// When moments are equal (relative difference below 1e-6), the principal
// axes are not unique and the frame is fixed by atoms instead:
//   - two equal moments (symmetric tops, linear molecules): the third axis is
//     the unique principal axis; the first is the component perpendicular to
//     it of the position of a reference atom — among atoms off that axis
//     (distance > 1e-6 bohr), the one with the largest Z, then the largest
//     distance from the axis, then the largest |axial coordinate| (each
//     compared to 1e-8 bohr), then the first in input order. Linear
//     molecules have no such atom and keep any axes perpendicular to the
//     molecular line, made from the coordinate axis least aligned with it.
//   - three equal moments (spherical tops, single atoms): the first axis
//     points to the reference atom chosen as above (off the centroid,
//     largest Z, then largest distance), the second is made from the next
//     atom in that order that is not collinear with the first; if none
//     exists the identity frame is returned.
//
// Atoms that tie in this order are, in a symmetric molecule, equivalent by
// symmetry, and any of them gives the same integrals, so the frame rotates
// with the molecule and the grid is rotation invariant (to rounding). For a
// linear molecule the grid may turn about the molecular axis, which leaves
// integrals of cylindrically symmetric densities unchanged because every
// atom's rule then sees only the polar angle; for a single atom the frame
// does not turn at all. Atoms that tie without being equivalent by symmetry
// (accidental ties within 1e-8 bohr) break the invariance.
func StandardFrame(z []int, positions [][3]float64) (Frame, error) {
	if len(z) != len(positions) {
		return Frame{}, fmt.Errorf("grid: %d atomic numbers but %d positions", len(z), len(positions))
	}
	if len(z) == 0 {
		return IdentityFrame(), nil
	}
	var c [3]float64
	ztot := 0.0
	for i, p := range positions {
		zi := float64(z[i])
		if z[i] < 1 || math.IsNaN(p[0]+p[1]+p[2]) || math.IsInf(p[0]+p[1]+p[2], 0) {
			return Frame{}, fmt.Errorf("grid: atom %d: invalid atomic number %d or position %v", i+1, z[i], p)
		}
		ztot += zi
		for k := 0; k < 3; k++ {
			c[k] += zi * p[k]
		}
	}
	for k := range c {
		c[k] /= ztot
	}
	rel := make([][3]float64, len(z))
	var t [3][3]float64
	for i, p := range positions {
		zi := float64(z[i])
		r := [3]float64{p[0] - c[0], p[1] - c[1], p[2] - c[2]}
		rel[i] = r
		r2 := dot(r, r)
		for a := 0; a < 3; a++ {
			t[a][a] += zi * r2
			for b := 0; b < 3; b++ {
				t[a][b] -= zi * r[a] * r[b]
			}
		}
	}
	vals, vecs := jacobiEigen3(t)
	scale := math.Max(math.Abs(vals[0]), math.Max(math.Abs(vals[1]), math.Abs(vals[2])))
	if scale == 0 {
		return IdentityFrame(), nil // one atom, or all atoms on the centroid
	}
	eq := func(a, b float64) bool { return math.Abs(a-b) <= degenerateTol*scale }
	e01, e12 := eq(vals[0], vals[1]), eq(vals[1], vals[2])
	switch {
	case e01 && e12:
		return sphericalTopFrame(z, rel), nil
	case e01:
		return symmetricTopFrame(z, rel, vecs[2]), nil
	case e12:
		return symmetricTopFrame(z, rel, vecs[0]), nil
	}
	f := Frame{vecs[0], vecs[1], vecs[2]}
	return orient(f), nil
}

// orient makes a frame right-handed with a deterministic sign for each
// axis (largest component positive). The grid does not depend on it.
func orient(f Frame) Frame {
	for i := 0; i < 2; i++ {
		m := 0
		for k := 1; k < 3; k++ {
			if math.Abs(f[i][k]) > math.Abs(f[i][m])+1e-12 {
				m = k
			}
		}
		if f[i][m] < 0 {
			f[i] = [3]float64{-f[i][0], -f[i][1], -f[i][2]}
		}
	}
	f[2] = cross(f[0], f[1])
	return f
}

// refOrder reports whether atom i precedes atom j as a reference atom:
// larger Z, then larger d, then larger h (d and h compared to 1e-8 bohr),
// then input order.
func refOrder(z []int, d, h []float64, i, j int) bool {
	const tol = 1e-8
	if z[i] != z[j] {
		return z[i] > z[j]
	}
	if math.Abs(d[i]-d[j]) > tol {
		return d[i] > d[j]
	}
	if math.Abs(h[i]-h[j]) > tol {
		return h[i] > h[j]
	}
	return i < j
}

// symmetricTopFrame builds the frame of a molecule with two equal moments;
// axis is the unique principal axis.
func symmetricTopFrame(z []int, rel [][3]float64, axis [3]float64) Frame {
	const offAxis = 1e-6
	n := len(z)
	d := make([]float64, n)
	h := make([]float64, n)
	perp := make([][3]float64, n)
	best := -1
	for i, r := range rel {
		a := dot(r, axis)
		p := [3]float64{r[0] - a*axis[0], r[1] - a*axis[1], r[2] - a*axis[2]}
		perp[i] = p
		d[i] = math.Sqrt(dot(p, p))
		h[i] = math.Abs(a)
		if d[i] <= offAxis {
			continue
		}
		if best < 0 || refOrder(z, d, h, i, best) {
			best = i
		}
	}
	var e0 [3]float64
	if best >= 0 {
		e0 = scaleVec(perp[best], 1/d[best])
	} else {
		// Linear molecule: any perpendicular axis; use the coordinate axis
		// least aligned with the molecular line.
		m := 0
		for k := 1; k < 3; k++ {
			if math.Abs(axis[k]) < math.Abs(axis[m]) {
				m = k
			}
		}
		var u [3]float64
		u[m] = 1
		a := dot(u, axis)
		p := [3]float64{u[0] - a*axis[0], u[1] - a*axis[1], u[2] - a*axis[2]}
		e0 = scaleVec(p, 1/math.Sqrt(dot(p, p)))
	}
	e1 := cross(axis, e0)
	return Frame{e0, e1, axis}
}

// sphericalTopFrame builds the frame of a molecule with three equal moments.
func sphericalTopFrame(z []int, rel [][3]float64) Frame {
	const offCenter = 1e-6
	n := len(z)
	d := make([]float64, n)
	h := make([]float64, n)
	var order []int
	for i, r := range rel {
		d[i] = math.Sqrt(dot(r, r))
		if d[i] > offCenter {
			order = append(order, i)
		}
	}
	// Insertion sort: small n, deterministic.
	for a := 1; a < len(order); a++ {
		for b := a; b > 0 && refOrder(z, d, h, order[b], order[b-1]); b-- {
			order[b], order[b-1] = order[b-1], order[b]
		}
	}
	if len(order) == 0 {
		return IdentityFrame()
	}
	e0 := scaleVec(rel[order[0]], 1/d[order[0]])
	for _, i := range order[1:] {
		u := scaleVec(rel[i], 1/d[i])
		a := dot(u, e0)
		p := [3]float64{u[0] - a*e0[0], u[1] - a*e0[1], u[2] - a*e0[2]}
		if pn := math.Sqrt(dot(p, p)); pn > 1e-6 {
			e1 := scaleVec(p, 1/pn)
			return Frame{e0, e1, cross(e0, e1)}
		}
	}
	return IdentityFrame()
}

// jacobiEigen3 diagonalizes a symmetric 3×3 matrix by cyclic Jacobi
// rotations and returns the eigenvalues in increasing order with their unit
// eigenvectors.
func jacobiEigen3(a [3][3]float64) (vals [3]float64, vecs [3][3]float64) {
	v := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	for sweep := 0; sweep < 50; sweep++ {
		off := a[0][1]*a[0][1] + a[0][2]*a[0][2] + a[1][2]*a[1][2]
		diag := a[0][0]*a[0][0] + a[1][1]*a[1][1] + a[2][2]*a[2][2]
		if off <= 1e-36*diag || off == 0 {
			break
		}
		for p := 0; p < 2; p++ {
			for q := p + 1; q < 3; q++ {
				if a[p][q] == 0 {
					continue
				}
				theta := (a[q][q] - a[p][p]) / (2 * a[p][q])
				t := 1 / (math.Abs(theta) + math.Sqrt(theta*theta+1))
				if theta < 0 {
					t = -t
				}
				c := 1 / math.Sqrt(t*t+1)
				s := t * c
				for k := 0; k < 3; k++ {
					akp, akq := a[k][p], a[k][q]
					a[k][p] = c*akp - s*akq
					a[k][q] = s*akp + c*akq
				}
				for k := 0; k < 3; k++ {
					apk, aqk := a[p][k], a[q][k]
					a[p][k] = c*apk - s*aqk
					a[q][k] = s*apk + c*aqk
				}
				for k := 0; k < 3; k++ {
					vkp, vkq := v[k][p], v[k][q]
					v[k][p] = c*vkp - s*vkq
					v[k][q] = s*vkp + c*vkq
				}
			}
		}
	}
	idx := [3]int{0, 1, 2}
	for i := 1; i < 3; i++ {
		for j := i; j > 0 && a[idx[j]][idx[j]] < a[idx[j-1]][idx[j-1]]; j-- {
			idx[j], idx[j-1] = idx[j-1], idx[j]
		}
	}
	for i, k := range idx {
		vals[i] = a[k][k]
		vecs[i] = [3]float64{v[0][k], v[1][k], v[2][k]}
	}
	return vals, vecs
}

func dot(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }

func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

func scaleVec(a [3]float64, s float64) [3]float64 { return [3]float64{a[0] * s, a[1] * s, a[2] * s} }
