package freq

import (
	"math"
)

// DefaultSymmetryToleranceBohr is the largest distance (bohr) by which an
// atom may miss its image under a symmetry operation for the operation to
// be used by a Hessian (HessianOptions.SymmetryKinds). The reference
// geometry is then made exactly symmetric (every atom moves by less than
// this), which changes the Hessian by far less than its numerical noise
// at a relaxed geometry.
const DefaultSymmetryToleranceBohr = 1e-3

// symOp is a point-group operation of a molecule: the orthogonal matrix R
// (about the atoms' centroid) and the permutation of the atoms it induces,
// R (x_i − c) = x_perm[i] − c.
type symOp struct {
	r    [3][3]float64
	perm []int
}

// axisOp reports whether R permutes the coordinate axes (with signs): then
// it maps every Cartesian displacement onto a Cartesian displacement.
func (o *symOp) axisOp() bool {
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			v := math.Abs(o.r[i][j])
			if v > 1e-9 && math.Abs(v-1) > 1e-9 {
				return false
			}
		}
	}
	return true
}

// image returns the coordinate index and sign that axis k is mapped to
// (R e_k = sign·e_image); only for axis operations.
func (o *symOp) image(k int) (int, int) {
	for i := 0; i < 3; i++ {
		if math.Abs(o.r[i][k]) > 0.5 {
			if o.r[i][k] > 0 {
				return i, 1
			}
			return i, -1
		}
	}
	return k, 1
}

// apply sets out to the image of a vector field v on the atoms (3N, e.g. a
// gradient) under the operation: out_perm[i] = R v_i.
func (o *symOp) apply(v, out []float64) {
	for i, j := range o.perm {
		x, y, z := v[3*i], v[3*i+1], v[3*i+2]
		for k := 0; k < 3; k++ {
			out[3*j+k] = o.r[k][0]*x + o.r[k][1]*y + o.r[k][2]*z
		}
	}
}

// rotate returns R v for a single vector (a dipole).
func (o *symOp) rotate(v [3]float64) [3]float64 {
	var out [3]float64
	for k := 0; k < 3; k++ {
		out[k] = o.r[k][0]*v[0] + o.r[k][1]*v[1] + o.r[k][2]*v[2]
	}
	return out
}

// symmetry is the point group of a reference geometry as a Hessian uses
// it: the operations (identity first) and the geometry made exactly
// symmetric.
type symmetry struct {
	ops       []symOp
	coords    []float64 // symmetrized, bohr
	shiftBohr float64   // largest distance an atom moved
}

// findSymmetry finds the operations that map the atoms (3N coordinates x,
// bohr) onto atoms of the same kind within tol and symmetrizes the
// geometry. It returns the identity alone for a single atom, for collinear
// atoms (the infinite groups are not used), and whenever the operations
// found do not form a group or the geometry cannot be made symmetric to
// rounding; the Hessian then simply evaluates every displaced point.
func findSymmetry(x []float64, kinds []int, tol float64) *symmetry {
	nat := len(kinds)
	none := noSymmetry(x)
	if nat < 2 || len(x) != 3*nat {
		return none
	}
	var c [3]float64
	for i := 0; i < nat; i++ {
		for k := 0; k < 3; k++ {
			c[k] += x[3*i+k] / float64(nat)
		}
	}
	p := make([][3]float64, nat)
	for i := range p {
		for k := 0; k < 3; k++ {
			p[i][k] = x[3*i+k] - c[k]
		}
	}
	a, b := referencePair(p, kinds, tol)
	if a < 0 {
		return none
	}
	// Every operation maps a and b onto atoms of the same kinds at the same
	// distances from the centroid and from each other; two such images and
	// a handedness fix the operation.
	var ops []symOp
	dab := dist3(p[a], p[b])
	for a2 := range p {
		if kinds[a2] != kinds[a] || math.Abs(norm3(p[a2])-norm3(p[a])) > 2*tol {
			continue
		}
		for b2 := range p {
			if b2 == a2 || kinds[b2] != kinds[b] || math.Abs(norm3(p[b2])-norm3(p[b])) > 2*tol ||
				math.Abs(dist3(p[a2], p[b2])-dab) > 4*tol {
				continue
			}
			for _, hand := range []float64{1, -1} {
				r := frameMap(p[a], p[b], p[a2], p[b2], hand)
				perm := matchAtoms(p, kinds, r, tol)
				if perm == nil || containsOp(ops, r) {
					continue
				}
				ops = append(ops, symOp{r: r, perm: perm})
			}
		}
	}
	if len(ops) < 2 || !closed(ops) {
		return none
	}
	// Put the identity first.
	for i := range ops {
		if isIdentity(ops[i].perm) && ops[i].r[0][0] > 0.5 && ops[i].r[1][1] > 0.5 && ops[i].r[2][2] > 0.5 {
			ops[0], ops[i] = ops[i], ops[0]
			break
		}
	}
	// Symmetrize: average every atom over its images, rebuild the
	// operations from the averaged atoms a and b, repeat until the geometry
	// is symmetric to rounding.
	q := append([][3]float64(nil), p...)
	scale := 1.0
	for _, v := range p {
		scale = math.Max(scale, norm3(v))
	}
	for iter := 0; ; iter++ {
		next := make([][3]float64, nat)
		for _, o := range ops {
			for i, j := range o.perm {
				// R_g q_i ≈ q_j, so q_i ≈ R_gᵀ q_j.
				for k := 0; k < 3; k++ {
					next[i][k] += (o.r[0][k]*q[j][0] + o.r[1][k]*q[j][1] + o.r[2][k]*q[j][2]) / float64(len(ops))
				}
			}
		}
		q = next
		resid := 0.0
		for g := range ops {
			o := &ops[g]
			hand := det3(o.r)
			o.r = frameMap(q[a], q[b], q[o.perm[a]], q[o.perm[b]], hand)
			for i, j := range o.perm {
				resid = math.Max(resid, dist3(mulVec(o.r, q[i]), q[j]))
			}
		}
		if resid <= 1e-13*scale {
			break
		}
		if iter == 20 {
			return none
		}
	}
	s := &symmetry{ops: ops, coords: make([]float64, 3*nat)}
	for i := range q {
		for k := 0; k < 3; k++ {
			s.coords[3*i+k] = q[i][k] + c[k]
		}
		s.shiftBohr = math.Max(s.shiftBohr, dist3(q[i], p[i]))
	}
	if s.shiftBohr > tol {
		return none
	}
	return s
}

// noSymmetry is the identity alone, at the geometry x.
func noSymmetry(x []float64) *symmetry {
	ident := symOp{r: [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}, perm: make([]int, len(x)/3)}
	for i := range ident.perm {
		ident.perm[i] = i
	}
	return &symmetry{ops: []symOp{ident}, coords: append([]float64(nil), x...)}
}

// referencePair picks two atoms off the centroid whose positions are far
// from collinear, preferring kinds with few atoms (fewer candidate images).
// It returns −1 when there is no such pair (one atom, collinear atoms).
func referencePair(p [][3]float64, kinds []int, tol float64) (int, int) {
	count := map[int]int{}
	for _, k := range kinds {
		count[k]++
	}
	minR := math.Max(0.1, 10*tol)
	best, bestScore := -1, 0
	for i, v := range p {
		if norm3(v) < minR {
			continue
		}
		if best < 0 || count[kinds[i]] < bestScore {
			best, bestScore = i, count[kinds[i]]
		}
	}
	if best < 0 {
		return -1, -1
	}
	// The partner: sin θ ≥ 0.2 with the first, fewest atoms of its kind,
	// then the largest sin θ.
	partner, pCount, pSin := -1, 0, 0.0
	for j, v := range p {
		if j == best || norm3(v) < minR {
			continue
		}
		s := norm3(cross3(p[best], v)) / (norm3(p[best]) * norm3(v))
		if s < 0.2 {
			continue
		}
		if partner < 0 || count[kinds[j]] < pCount || (count[kinds[j]] == pCount && s > pSin+1e-9) {
			partner, pCount, pSin = j, count[kinds[j]], s
		}
	}
	if partner < 0 {
		return -1, -1
	}
	return best, partner
}

// frameMap returns the orthogonal matrix that maps the orthonormal frame
// built from (a, b) onto the one built from (a2, b2): first axis along a,
// second in the plane of a and b, third their cross product (times hand =
// ±1 for the image frame: −1 gives an improper operation).
func frameMap(a, b, a2, b2 [3]float64, hand float64) [3][3]float64 {
	f := orthoFrame(a, b, 1)
	g := orthoFrame(a2, b2, hand)
	var r [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			for k := 0; k < 3; k++ {
				r[i][j] += g[k][i] * f[k][j]
			}
		}
	}
	return r
}

// frame returns three orthonormal rows from a and b (Gram–Schmidt).
func orthoFrame(a, b [3]float64, hand float64) [3][3]float64 {
	u := scale3(1/norm3(a), a)
	w := b
	d := dot3(w, u)
	for k := range w {
		w[k] -= d * u[k]
	}
	w = scale3(1/norm3(w), w)
	return [3][3]float64{u, w, scale3(hand, cross3(u, w))}
}

// matchAtoms returns the permutation by which r maps the atoms onto atoms
// of the same kind within tol, or nil.
func matchAtoms(p [][3]float64, kinds []int, r [3][3]float64, tol float64) []int {
	perm := make([]int, len(p))
	used := make([]bool, len(p))
	for i, v := range p {
		img := mulVec(r, v)
		found := -1
		for j, w := range p {
			if kinds[j] == kinds[i] && !used[j] && dist3(img, w) <= tol {
				found = j
				break
			}
		}
		if found < 0 {
			return nil
		}
		used[found] = true
		perm[i] = found
	}
	return perm
}

func containsOp(ops []symOp, r [3][3]float64) bool {
	for _, o := range ops {
		if sameMatrix(o.r, r, 1e-6) {
			return true
		}
	}
	return false
}

// closed reports whether every product of two operations is one of them
// (with the matching permutation). The matrices, found from a geometry
// symmetric only within the tolerance, are compared loosely: enough to
// tell R from R times a reflection through the plane of a planar molecule,
// which permute the atoms alike.
func closed(ops []symOp) bool {
	for _, g := range ops {
		for _, h := range ops {
			var r [3][3]float64
			for i := 0; i < 3; i++ {
				for j := 0; j < 3; j++ {
					for k := 0; k < 3; k++ {
						r[i][j] += g.r[i][k] * h.r[k][j]
					}
				}
			}
			ok := false
			for _, o := range ops {
				if !sameMatrix(o.r, r, 0.1) {
					continue
				}
				ok = true
				for i := range o.perm {
					if o.perm[i] != g.perm[h.perm[i]] {
						ok = false
						break
					}
				}
				break
			}
			if !ok {
				return false
			}
		}
	}
	return true
}

func isIdentity(perm []int) bool {
	for i, j := range perm {
		if i != j {
			return false
		}
	}
	return true
}

func sameMatrix(a, b [3][3]float64, tol float64) bool {
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			if math.Abs(a[i][j]-b[i][j]) > tol {
				return false
			}
		}
	}
	return true
}

func mulVec(r [3][3]float64, v [3]float64) [3]float64 {
	return [3]float64{
		r[0][0]*v[0] + r[0][1]*v[1] + r[0][2]*v[2],
		r[1][0]*v[0] + r[1][1]*v[1] + r[1][2]*v[2],
		r[2][0]*v[0] + r[2][1]*v[1] + r[2][2]*v[2],
	}
}

func det3(r [3][3]float64) float64 {
	d := r[0][0]*(r[1][1]*r[2][2]-r[1][2]*r[2][1]) - r[0][1]*(r[1][0]*r[2][2]-r[1][2]*r[2][0]) +
		r[0][2]*(r[1][0]*r[2][1]-r[1][1]*r[2][0])
	if d < 0 {
		return -1
	}
	return 1
}

func dot3(a, b [3]float64) float64 { return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] }
func norm3(a [3]float64) float64   { return math.Sqrt(dot3(a, a)) }
func cross3(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}
func scale3(s float64, a [3]float64) [3]float64 { return [3]float64{s * a[0], s * a[1], s * a[2]} }
func dist3(a, b [3]float64) float64 {
	return norm3([3]float64{a[0] - b[0], a[1] - b[1], a[2] - b[2]})
}
