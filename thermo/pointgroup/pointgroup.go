package pointgroup

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"poise/energy/units"
)

// DefaultToleranceBohr is the default distance tolerance of [Detect] and
// [Symmetrize]: 0.01 Å, in bohr. It is loose enough for geometries relaxed
// to the usual convergence and tight enough to keep distinct atoms apart.
const DefaultToleranceBohr = 0.01 * units.AngstromBohr

// angleTolerance (radians) decides when two symmetry elements found from a
// slightly distorted geometry are the same element, and when two axes are
// perpendicular. Distinct axes of the groups handled here are at least
// π/n apart, far more for any n that occurs in molecules.
const angleTolerance = 0.05

// sphericalSpread is the relative spread of the principal moments below
// which the search also looks for the axes of the cubic and icosahedral
// groups. It is generous on purpose: too many candidates cost time only.
const sphericalSpread = 0.05

// Atom is a nucleus as the symmetry search sees it. Atoms are
// interchangeable only if Label and Mass agree.
type Atom struct {
	Label    string     // element symbol or any other label
	Mass     float64    // u; must be positive
	Position [3]float64 // bohr
}

// Axis is a proper rotation axis through the center of mass.
type Axis struct {
	Direction [3]float64 // unit vector
	Order     int        // n of the highest Cn about this axis
}

// Result is the point group of a molecule.
type Result struct {
	// Symbol is the Schoenflies symbol: "C1", "Cs", "Ci", "Cn", "Cnv",
	// "Cnh", "Dn", "Dnh", "Dnd", "S2n" with n a number (as in "C2v",
	// "D6h", "S4"), "T", "Td", "Th", "O", "Oh", "I", "Ih", "C∞v", "D∞h",
	// and "Kh" for a single atom.
	Symbol string
	// SymmetryNumber is the rotational symmetry number σ, the number of
	// proper rotations of the group (2 for D∞h, 1 for C∞v and atoms).
	SymmetryNumber int
	// Order is the number of operations of the group; 0 for the infinite
	// groups (linear molecules and atoms).
	Order int
	// Linear is true for linear molecules (C∞v, D∞h).
	Linear bool
	// CenterOfMass is the origin of all symmetry elements, bohr.
	CenterOfMass [3]float64
	// MainAxis is the unit vector of the main axis (the molecular axis for
	// linear molecules, the mirror normal for Cs); zero for C1, Ci, atoms
	// and the cubic and icosahedral groups.
	MainAxis [3]float64
	// Axes lists the proper rotation axes found, highest order first.
	Axes []Axis
	// MirrorNormals lists the unit normals of the mirror planes found.
	MirrorNormals [][3]float64
	// Inversion reports a center of inversion.
	Inversion bool
	// ToleranceBohr is the distance tolerance used.
	ToleranceBohr float64
}

// detector holds a centered geometry and the scratch space of the search.
type detector struct {
	pos     []vec   // bohr, relative to the center of mass
	kind    []int   // kind index of each atom
	byKind  [][]int // atoms of each kind
	radius  []float64
	mass    []float64 // u
	tol     float64
	used    []bool
	moments [3]float64
	axes    [3]vec // principal axes, ascending moments
}

// Detect finds the point group of atoms with a distance tolerance in bohr
// (0 or negative: [DefaultToleranceBohr]).
func Detect(atoms []Atom, toleranceBohr float64) (*Result, error) {
	d, com, err := newDetector(atoms, toleranceBohr)
	if err != nil {
		return nil, err
	}
	r, err := d.detect()
	if err != nil {
		return nil, err
	}
	r.CenterOfMass = com
	return r, nil
}

func newDetector(atoms []Atom, tol float64) (*detector, vec, error) {
	if len(atoms) == 0 {
		return nil, vec{}, errors.New("point group: no atoms")
	}
	if tol <= 0 || math.IsNaN(tol) {
		tol = DefaultToleranceBohr
	}
	var com vec
	total := 0.0
	for i, a := range atoms {
		if !(a.Mass > 0) || math.IsInf(a.Mass, 0) {
			return nil, vec{}, fmt.Errorf("point group: atom %d (%s) has mass %g u; masses must be positive", i+1, a.Label, a.Mass)
		}
		for _, x := range a.Position {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, vec{}, fmt.Errorf("point group: atom %d (%s) has a non-finite coordinate", i+1, a.Label)
			}
		}
		com = add(com, scale(a.Mass, a.Position))
		total += a.Mass
	}
	com = scale(1/total, com)
	d := &detector{tol: tol, used: make([]bool, len(atoms))}
	kinds := map[string]int{}
	for _, a := range atoms {
		key := fmt.Sprintf("%s\x00%.6f", a.Label, a.Mass)
		k, ok := kinds[key]
		if !ok {
			k = len(d.byKind)
			kinds[key] = k
			d.byKind = append(d.byKind, nil)
		}
		p := sub(a.Position, com)
		d.byKind[k] = append(d.byKind[k], len(d.pos))
		d.kind = append(d.kind, k)
		d.pos = append(d.pos, p)
		d.radius = append(d.radius, norm(p))
		d.mass = append(d.mass, a.Mass)
	}
	for i := range d.pos {
		for j := i + 1; j < len(d.pos); j++ {
			if norm(sub(d.pos[i], d.pos[j])) < tol {
				return nil, vec{}, fmt.Errorf("point group: atoms %d and %d are closer than the tolerance %.3g bohr", i+1, j+1, tol)
			}
		}
	}
	d.moments, d.axes = Inertia(atoms)
	return d, com, nil
}

// maps reports whether op maps every atom to within the tolerance of a
// distinct atom of the same kind. perm, if not nil, receives the image of
// each atom.
func (d *detector) maps(op *mat, perm []int) bool {
	return d.mapsWithin(op, perm, d.tol)
}

func (d *detector) mapsWithin(op *mat, perm []int, tol float64) bool {
	for i := range d.used {
		d.used[i] = false
	}
	tol2 := tol * tol
	for i, p := range d.pos {
		q := mulVec(op, p)
		best, bestD := -1, tol2
		for _, j := range d.byKind[d.kind[i]] {
			r := sub(q, d.pos[j])
			if dd := dot(r, r); dd < bestD {
				best, bestD = j, dd
			}
		}
		if best < 0 || d.used[best] {
			return false
		}
		d.used[best] = true
		if perm != nil {
			perm[i] = best
		}
	}
	return true
}

// linearAxis returns the molecular axis if all atoms lie within the
// tolerance of one line through the center of mass.
func (d *detector) linearAxis() (vec, bool) {
	u := d.axes[0] // smallest moment
	for _, p := range d.pos {
		perp := sub(p, scale(dot(p, u), u))
		if norm(perp) > d.tol {
			return vec{}, false
		}
	}
	return u, true
}

// linearInversion reports whether a molecule found linear along u maps
// onto itself under inversion, comparing the atoms' positions along the
// axis only: the molecule counts as linear because every atom lies within
// the tolerance of the axis, so an offset across it (an atom 0.007 Å off a
// CO2 bent by 1°, mapped to 0.014 Å from its image) must not decide
// between D∞h and C∞v. perm, if not nil, receives the image of each atom.
func (d *detector) linearInversion(u vec, perm []int) bool {
	for i := range d.used {
		d.used[i] = false
	}
	for i, p := range d.pos {
		h := -dot(p, u)
		best, bestD := -1, d.tol
		for _, j := range d.byKind[d.kind[i]] {
			if dd := math.Abs(dot(d.pos[j], u) - h); dd < bestD {
				best, bestD = j, dd
			}
		}
		if best < 0 || d.used[best] {
			return false
		}
		d.used[best] = true
		if perm != nil {
			perm[i] = best
		}
	}
	return true
}

// axisOrder returns the highest n ≥ 2 for which Cn about u maps the
// molecule onto itself, or 0.
func (d *detector) axisOrder(u vec) int {
	// The ring of the first atom off the axis bounds n.
	first := -1
	var h0, rho0 float64
	for i, p := range d.pos {
		h := dot(p, u)
		rho := norm(sub(p, scale(h, u)))
		if rho > d.tol {
			first, h0, rho0 = i, h, rho
			break
		}
	}
	if first < 0 {
		return 0
	}
	m := 0
	for _, j := range d.byKind[d.kind[first]] {
		p := d.pos[j]
		h := dot(p, u)
		rho := norm(sub(p, scale(h, u)))
		// Each of the two atoms may be off by up to the tolerance.
		if math.Abs(h-h0) < 2*d.tol && math.Abs(rho-rho0) < 2*d.tol {
			m++
		}
	}
	for n := m; n >= 2; n-- {
		op := rotation(u, 2*math.Pi/float64(n))
		if d.maps(&op, nil) {
			return n
		}
	}
	return 0
}

func parallel(a, b vec) bool      { return norm(cross(a, b)) < angleTolerance }
func perpendicular(a, b vec) bool { return math.Abs(dot(a, b)) < angleTolerance }

// candidates returns the candidate axis directions and mirror normals.
func (d *detector) candidates() (axes, normals []vec) {
	tiny := d.tol
	for _, a := range d.axes {
		axes = append(axes, a)
		normals = append(normals, a)
	}
	for _, p := range d.pos {
		if u, ok := unit(p, tiny); ok {
			axes = append(axes, u)
		}
	}
	for _, list := range d.byKind {
		for x, i := range list {
			for _, j := range list[x+1:] {
				if math.Abs(d.radius[i]-d.radius[j]) > 2*d.tol {
					continue
				}
				if u, ok := unit(add(d.pos[i], d.pos[j]), tiny); ok {
					axes = append(axes, u)
				}
				if u, ok := unit(sub(d.pos[i], d.pos[j]), tiny); ok {
					normals = append(normals, u)
				}
			}
		}
	}
	top := d.moments[2]
	if top > 0 && (top-d.moments[0])/top < sphericalSpread {
		// An axis Cn (n ≥ 3) either passes through the first atom of a
		// shell (same kind, same distance from the center), or that atom's
		// orbit under Cn is a regular n-gon about the axis: the triples
		// that contain it suffice.
		for _, list := range d.byKind {
			for x, i := range list {
				if d.radius[i] <= d.tol || !d.firstOfShell(list[:x], i) {
					continue
				}
				for y := x + 1; y < len(list); y++ {
					j := list[y]
					if math.Abs(d.radius[i]-d.radius[j]) > 2*d.tol {
						continue
					}
					for _, k := range list[y+1:] {
						if math.Abs(d.radius[i]-d.radius[k]) > 2*d.tol {
							continue
						}
						n := cross(sub(d.pos[j], d.pos[i]), sub(d.pos[k], d.pos[i]))
						if u, ok := unit(n, 1e-8); ok {
							axes = append(axes, u)
						}
					}
				}
			}
		}
	}
	return axes, normals
}

// firstOfShell reports whether no atom of earlier lies at the distance of
// atom i from the center.
func (d *detector) firstOfShell(earlier []int, i int) bool {
	for _, j := range earlier {
		if math.Abs(d.radius[i]-d.radius[j]) <= 2*d.tol {
			return false
		}
	}
	return true
}

func (d *detector) detect() (*Result, error) {
	r := &Result{ToleranceBohr: d.tol}
	if len(d.pos) == 1 {
		r.Symbol, r.SymmetryNumber = "Kh", 1
		return r, nil
	}
	if u, ok := d.linearAxis(); ok {
		r.Linear, r.MainAxis = true, u
		r.Inversion = d.linearInversion(u, nil)
		if r.Inversion {
			r.Symbol, r.SymmetryNumber = "D∞h", 2
		} else {
			r.Symbol, r.SymmetryNumber = "C∞v", 1
		}
		return r, nil
	}
	inv := inversion()
	r.Inversion = d.maps(&inv, nil)
	candAxes, candNormals := d.candidates()
	for _, u := range candAxes {
		known := false
		for _, a := range r.Axes {
			if parallel(a.Direction, u) {
				known = true
				break
			}
		}
		if known {
			continue
		}
		if n := d.axisOrder(u); n >= 2 {
			r.Axes = append(r.Axes, Axis{Direction: u, Order: n})
		}
	}
	for _, u := range candNormals {
		known := false
		for _, m := range r.MirrorNormals {
			if parallel(m, u) {
				known = true
				break
			}
		}
		if known {
			continue
		}
		op := reflection(u)
		if d.maps(&op, nil) {
			r.MirrorNormals = append(r.MirrorNormals, u)
		}
	}
	sort.SliceStable(r.Axes, func(i, j int) bool { return r.Axes[i].Order > r.Axes[j].Order })
	if err := d.classify(r); err != nil {
		return nil, err
	}
	return r, nil
}

// classify applies the decision tree to the elements found.
func (d *detector) classify(r *Result) error {
	high := 0
	for _, a := range r.Axes {
		if a.Order >= 3 {
			high++
		}
	}
	if high >= 2 {
		top := r.Axes[0].Order
		switch {
		case top == 5 && r.Inversion:
			r.Symbol, r.SymmetryNumber, r.Order = "Ih", 60, 120
		case top == 5:
			r.Symbol, r.SymmetryNumber, r.Order = "I", 60, 60
		case top == 4 && r.Inversion:
			r.Symbol, r.SymmetryNumber, r.Order = "Oh", 24, 48
		case top == 4:
			r.Symbol, r.SymmetryNumber, r.Order = "O", 24, 24
		case top == 3 && r.Inversion:
			r.Symbol, r.SymmetryNumber, r.Order = "Th", 12, 24
		case top == 3 && len(r.MirrorNormals) > 0:
			r.Symbol, r.SymmetryNumber, r.Order = "Td", 12, 24
		case top == 3:
			r.Symbol, r.SymmetryNumber, r.Order = "T", 12, 12
		default:
			return fmt.Errorf("point group: inconsistent symmetry elements (%d axes of order ≥ 3, highest C%d); try a smaller tolerance", high, top)
		}
		return nil
	}
	if len(r.Axes) == 0 {
		switch {
		case len(r.MirrorNormals) > 0:
			r.Symbol, r.SymmetryNumber, r.Order = "Cs", 1, 2
			r.MainAxis = r.MirrorNormals[0]
		case r.Inversion:
			r.Symbol, r.SymmetryNumber, r.Order = "Ci", 1, 2
		default:
			r.Symbol, r.SymmetryNumber, r.Order = "C1", 1, 1
		}
		return nil
	}
	// Main axis: highest order; among equal orders prefer an S2n axis
	// (the S4 axis of D2d).
	main := r.Axes[0]
	n := main.Order
	for _, a := range r.Axes {
		if a.Order != n {
			break
		}
		s := improper(a.Direction, 2*n)
		if d.maps(&s, nil) {
			main = a
			break
		}
	}
	r.MainAxis = main.Direction
	perpC2 := 0
	for _, a := range r.Axes {
		if a.Order%2 == 0 && perpendicular(a.Direction, main.Direction) {
			perpC2++
		}
	}
	sigmaH, sigmaV := false, false
	for _, m := range r.MirrorNormals {
		if parallel(m, main.Direction) {
			sigmaH = true
		} else if perpendicular(m, main.Direction) {
			sigmaV = true
		}
	}
	if perpC2 > 0 {
		switch {
		case sigmaH:
			r.Symbol, r.Order = fmt.Sprintf("D%dh", n), 4*n
		case sigmaV:
			r.Symbol, r.Order = fmt.Sprintf("D%dd", n), 4*n
		default:
			r.Symbol, r.Order = fmt.Sprintf("D%d", n), 2*n
		}
		r.SymmetryNumber = 2 * n
		return nil
	}
	r.SymmetryNumber = n
	s := improper(main.Direction, 2*n)
	switch {
	case sigmaH:
		r.Symbol, r.Order = fmt.Sprintf("C%dh", n), 2*n
	case sigmaV:
		r.Symbol, r.Order = fmt.Sprintf("C%dv", n), 2*n
	case d.maps(&s, nil):
		r.Symbol, r.Order = fmt.Sprintf("S%d", 2*n), 2*n
	default:
		r.Symbol, r.Order = fmt.Sprintf("C%d", n), n
	}
	return nil
}

// Inertia returns the principal moments of inertia of atoms about their
// center of mass in u·bohr², ascending, and the principal axes as unit
// vectors (axes[k] belongs to moments[k]). Masses and positions are not
// checked; use [Detect] for user input.
func Inertia(atoms []Atom) (moments [3]float64, axes [3][3]float64) {
	var com [3]float64
	total := 0.0
	for _, a := range atoms {
		com = add(com, scale(a.Mass, a.Position))
		total += a.Mass
	}
	if total > 0 {
		com = scale(1/total, com)
	}
	var t mat
	for _, a := range atoms {
		p := sub(a.Position, com)
		r2 := dot(p, p)
		for x := 0; x < 3; x++ {
			t[x][x] += a.Mass * r2
			for y := 0; y < 3; y++ {
				t[x][y] -= a.Mass * p[x] * p[y]
			}
		}
	}
	m, v := eigSym3(t)
	for k := range m {
		m[k] = math.Max(m[k], 0) // rounding can leave −1e-17 for linear molecules
	}
	return m, v
}
