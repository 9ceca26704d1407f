package freq

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"

	"gonum.org/v1/gonum/mat"

	"poise/gradient"
)

// The Hessian can also be computed piecewise, for a batch system that runs
// every coordinate's displaced points as an independent job:
// ComputeReference evaluates and saves the undisplaced point,
// ComputeDisplacements the displaced points of one coordinate each
// (anywhere, in any order, from the reference's warm start), and
// ComputeHessian with the same options then finds every point saved and
// assembles the result without a single evaluation. The saved points are
// those of an ordinary run, so the piecewise result equals it.

// Displacement is one displaced point of a finite-difference Hessian:
// Cartesian coordinate Coordinate (from 0) moved by Steps times the step.
type Displacement struct {
	Coordinate int
	Steps      int
}

// FileName is the name of the point's file in the work directory.
func (d Displacement) FileName() string { return displacementName(d.Coordinate, d.Steps) }

// String describes the point, e.g. "atom 2 y +1 step(s)".
func (d Displacement) String() string {
	return fmt.Sprintf("atom %d %c %+d step(s)", d.Coordinate/3+1, "xyz"[d.Coordinate%3], d.Steps)
}

// layout is what a Hessian evaluates: the reference geometry, the
// displaced points evaluated (jobs), and how every point of the finite
// differences and every atom's columns follow from them.
type layout struct {
	step  float64
	x     []float64 // reference geometry (symmetrized with symmetry)
	steps []int     // step multiples of each coordinate: +1, −1[, +2, −2]
	sym   *symmetry
	jobs  []Displacement
	// src[c·len(steps)+t] is the job whose image under the operation op
	// is the point of coordinate c and step steps[t]; defined for the
	// coordinates of representative atoms only.
	src []pointSource
	// rep[i] is the representative atom of atom i and the operation that
	// maps it onto i (i itself and 0, the identity, for representatives).
	rep []pointSource
	// fromTranslation is the atom whose columns follow from translational
	// invariance, −1 for none.
	fromTranslation int
	// fromRotation are the coordinates whose columns follow from
	// rotational invariance (three or none), and rotInv the inverse of the
	// 3×3 matrix of the rotations restricted to them (see rotationColumns).
	fromRotation []int
	rotInv       [3][3]float64
}

type pointSource struct{ job, op int }

// newLayout checks the geometry and step of a Hessian and decides its
// points.
func newLayout(nat int, x0 []float64, opt *HessianOptions) (*layout, error) {
	if nat < 1 {
		return nil, errors.New("freq: no atoms")
	}
	if len(x0) != 3*nat {
		return nil, fmt.Errorf("freq: %d coordinates for %d atoms", len(x0), nat)
	}
	for i, v := range x0 {
		if !finite(v) {
			return nil, fmt.Errorf("freq: coordinate %d is %v", i+1, v)
		}
	}
	step := opt.StepBohr
	if step == 0 {
		step = DefaultStepBohr
	}
	if !(step > 0) || step > maxStepBohr {
		return nil, fmt.Errorf("freq: finite-difference step %g bohr outside (0, %g]", step, maxStepBohr)
	}
	l := &layout{step: step, steps: opt.stepList()}
	kinds, err := opt.symmetryKinds(nat)
	if err != nil {
		return nil, err
	}
	tol := opt.SymmetryToleranceBohr
	if tol <= 0 || !finite(tol) {
		tol = DefaultSymmetryToleranceBohr
	}
	if kinds != nil {
		l.sym = findSymmetry(x0, kinds, tol)
	} else {
		l.sym = noSymmetry(x0)
	}
	l.x = l.sym.coords
	ops := l.sym.ops
	l.rep = make([]pointSource, nat)
	for i := range l.rep {
		l.rep[i] = pointSource{job: -1}
	}
	l.src = make([]pointSource, 3*nat*len(l.steps))
	// Representatives: the first atom of every set of equivalent atoms.
	for a := 0; a < nat && nat > 1; a++ {
		if l.rep[a].job >= 0 {
			continue
		}
		for g, o := range ops {
			if b := o.perm[a]; l.rep[b].job < 0 {
				l.rep[b] = pointSource{job: a, op: g}
			}
		}
	}
	// With translational invariance one atom that no operation moves (the
	// one that needs the most points) is not displaced at all.
	l.fromTranslation = -1
	if opt.TranslationalInvariance && nat > 1 {
		most := 0
		for a := 0; a < nat; a++ {
			if l.rep[a].job != a || !l.fixedByAll(a) {
				continue
			}
			if d, _ := l.atomPoints(a, opt.AxisOperationsExact); len(d) > most {
				most, l.fromTranslation = len(d), a
			}
		}
	}
	// With rotational invariance too, in a molecule without symmetry,
	// three more coordinates are not displaced.
	if opt.RotationalInvariance && l.fromTranslation >= 0 && len(l.sym.ops) == 1 {
		l.fromRotation, l.rotInv = rotationColumns(l.x, l.fromTranslation)
	}
	for a := 0; a < nat && nat > 1; a++ {
		if l.rep[a].job != a || a == l.fromTranslation {
			continue
		}
		d, src := l.atomPoints(a, opt.AxisOperationsExact)
		if l.fromRotation != nil {
			// Without symmetry every point is its own source: drop the
			// points of the derived coordinates and renumber the rest.
			kept := d[:0:0]
			for t := range src {
				c := 3*a + t/len(l.steps)
				if slices.Contains(l.fromRotation, c) {
					src[t] = pointSource{job: -1}
					continue
				}
				kept = append(kept, d[src[t].job])
				src[t].job = len(kept) - 1
			}
			d = kept
		}
		first := len(l.jobs)
		l.jobs = append(l.jobs, d...)
		for t, p := range src {
			if p.job >= 0 {
				p.job += first
			}
			l.src[3*a*len(l.steps)+t] = p
		}
	}
	return l, nil
}

// minRotationLeverBohr bounds from below the smallest singular value of the
// rotations restricted to the coordinates chosen by rotationColumns: below
// it (nearly collinear atoms) no coordinate is derived from rotations.
const minRotationLeverBohr = 0.5

// rotationCandidates is the number of atoms farthest from the translation
// atom whose coordinates rotationColumns considers.
const rotationCandidates = 8

// rotationColumns chooses the three coordinates whose columns of the
// Hessian follow from the invariance of the energy under rigid rotations
// about atom d (whose own columns follow from translations): the
// coordinates c of other atoms for which the matrix V[k][m] =
// (e_k × (r_b − r_d))_β (c_m = 3b + β) has the largest smallest singular
// value, among the coordinates of the atoms farthest from d. It returns the
// coordinates and V⁻¹, or nil when no choice is well conditioned.
func rotationColumns(x []float64, d int) ([]int, [3][3]float64) {
	nat := len(x) / 3
	type far struct {
		atom int
		r2   float64
	}
	var atoms []far
	for b := 0; b < nat; b++ {
		if b != d {
			r2 := 0.0
			for k := 0; k < 3; k++ {
				r2 += (x[3*b+k] - x[3*d+k]) * (x[3*b+k] - x[3*d+k])
			}
			atoms = append(atoms, far{b, r2})
		}
	}
	// Farthest first; ties by atom order (the sort is stable).
	slices.SortStableFunc(atoms, func(p, q far) int { return cmp.Compare(q.r2, p.r2) })
	atoms = atoms[:min(len(atoms), rotationCandidates)]
	var coords []int
	var cols [][3]float64 // V's column of each candidate coordinate
	for _, a := range atoms {
		for beta := 0; beta < 3; beta++ {
			coords = append(coords, 3*a.atom+beta)
			cols = append(cols, rotationLever(x, d, 3*a.atom+beta))
		}
	}
	best, choice := 0.0, [3]int{-1, -1, -1}
	var svd mat.SVD
	sv := make([]float64, 3)
	v := mat.NewDense(3, 3, nil)
	for i := 0; i < len(coords); i++ {
		for j := i + 1; j < len(coords); j++ {
			for k := j + 1; k < len(coords); k++ {
				for m, c := range [3]int{i, j, k} {
					for r := 0; r < 3; r++ {
						v.Set(r, m, cols[c][r])
					}
				}
				if !svd.Factorize(v, mat.SVDNone) {
					continue
				}
				if s := svd.Values(sv)[2]; s > best {
					best, choice = s, [3]int{i, j, k}
				}
			}
		}
	}
	if best < minRotationLeverBohr {
		return nil, [3][3]float64{}
	}
	for m, c := range choice {
		for r := 0; r < 3; r++ {
			v.Set(r, m, cols[c][r])
		}
	}
	var inv mat.Dense
	if err := inv.Inverse(v); err != nil {
		return nil, [3][3]float64{}
	}
	var out [3][3]float64
	for r := 0; r < 3; r++ {
		for c := 0; c < 3; c++ {
			out[r][c] = inv.At(r, c)
		}
	}
	picked := []int{coords[choice[0]], coords[choice[1]], coords[choice[2]]}
	return picked, out
}

// rotationLever returns v_k[c] = (e_k × (r_b − r_d))_β for k = 0, 1, 2:
// how coordinate c = 3b + β moves under the rigid rotations about r_d
// (zero for b = d).
func rotationLever(x []float64, d, c int) [3]float64 {
	b, beta := c/3, c%3
	var rho [3]float64
	for k := range rho {
		rho[k] = x[3*b+k] - x[3*d+k]
	}
	var v [3]float64
	for k := range v {
		v[k] = crossUnit(k, rho)[beta]
	}
	return v
}

// crossUnit returns e_k × a.
func crossUnit(k int, a [3]float64) [3]float64 {
	switch k {
	case 0:
		return [3]float64{0, -a[2], a[1]}
	case 1:
		return [3]float64{a[2], 0, -a[0]}
	default:
		return [3]float64{-a[1], a[0], 0}
	}
}

// fixedByAll reports whether every operation leaves atom a in place.
func (l *layout) fixedByAll(a int) bool {
	for _, o := range l.sym.ops {
		if o.perm[a] != a {
			return false
		}
	}
	return true
}

// atomPoints returns the displaced points of atom a that must be evaluated
// and, for each of its coordinates k and steps t (index 3·len(steps)
// scaled: k·len(steps)+t), the point (index into the returned list) and
// the operation whose image it is. With exact axis operations, a point
// that is the image of an earlier one of the same atom under an
// operation leaving a in place is not evaluated.
func (l *layout) atomPoints(a int, exact bool) ([]Displacement, []pointSource) {
	ops := l.sym.ops
	var pts []Displacement
	src := make([]pointSource, 3*len(l.steps))
	for k := 0; k < 3; k++ {
		for t, s := range l.steps {
			found := pointSource{job: -1}
			if exact {
			search:
				for g := range ops {
					o := &ops[g]
					if g == 0 || o.perm[a] != a || !o.axisOp() {
						continue
					}
					for j, p := range pts {
						kk, sign := o.image(p.Coordinate - 3*a)
						if kk == k && sign*p.Steps == s {
							found = pointSource{job: j, op: g}
							break search
						}
					}
				}
			}
			if found.job < 0 {
				found = pointSource{job: len(pts)}
				pts = append(pts, Displacement{Coordinate: 3*a + k, Steps: s})
			}
			src[k*len(l.steps)+t] = found
		}
	}
	return pts, src
}

// symmetryKinds returns the kinds of the atoms for the symmetry search
// (nil: no symmetry): SymmetryKinds, refined by mass for a charged
// molecule whose dipole origin is the centre of mass.
func (o *HessianOptions) symmetryKinds(nat int) ([]int, error) {
	if o.SymmetryKinds == nil {
		return nil, nil
	}
	if len(o.SymmetryKinds) != nat {
		return nil, fmt.Errorf("freq: %d symmetry kinds for %d atoms", len(o.SymmetryKinds), nat)
	}
	if o.Charge == 0 || o.MassesU == nil {
		return o.SymmetryKinds, nil
	}
	type key struct {
		kind int
		mass float64
	}
	index := map[key]int{}
	out := make([]int, nat)
	for i, k := range o.SymmetryKinds {
		kk := key{k, o.MassesU[i]}
		v, ok := index[kk]
		if !ok {
			v = len(index)
			index[kk] = v
		}
		out[i] = v
	}
	return out, nil
}

// point returns the gradient and dipole of the point of coordinate c and
// step index t of a representative atom, from the evaluated points
// (grad is scratch of length 3N when the point is an image).
func (l *layout) point(results []storedPoint, c, t int, grad []float64) ([]float64, [3]float64) {
	src := l.src[c*len(l.steps)+t]
	p := &results[src.job]
	if src.op == 0 {
		return p.Gradient, p.DipoleAU
	}
	o := &l.sym.ops[src.op]
	o.apply(p.Gradient, grad)
	return grad, o.rotate(p.DipoleAU)
}

// setup decides the points of a Hessian and opens its work directory (a
// store that keeps nothing when opt.WorkDir is empty).
func setup(nat int, x0 []float64, opt *HessianOptions) (*store, *layout, error) {
	l, err := newLayout(nat, x0, opt)
	if err != nil {
		return nil, nil, err
	}
	man := &storeManifest{Format: storeFormat, Version: storeVersion, Tag: opt.Tag, NumAtoms: nat,
		CoordsBohr: append([]float64(nil), l.x...), StepBohr: l.step, FourPoint: opt.FourPoint, Dipole: opt.Dipole}
	st, _, err := openStore(opt.WorkDir, man, opt.DiscardStale)
	return st, l, err
}

// Points describes the points of a Hessian.
type Points struct {
	// CoordsBohr is the reference geometry: the input, made exactly
	// symmetric when HessianOptions.SymmetryKinds is set.
	CoordsBohr []float64
	// Displacements are the displaced points evaluated, in the order
	// ComputeHessian uses.
	Displacements []Displacement
	// Groups are the Displacements cut into those of one coordinate each
	// (the unit of work of ComputeDisplacements and of ComputeHessian's
	// concurrent evaluations).
	Groups [][]Displacement
	// SymmetryOperations is the order of the point group used (1: none).
	SymmetryOperations int
	// SymmetryShiftBohr is the largest distance an atom moved to make
	// the geometry symmetric.
	SymmetryShiftBohr float64
}

// PlanPoints returns the points ComputeHessian evaluates with these
// options for nat atoms at x0, without evaluating or saving anything.
func PlanPoints(nat int, x0 []float64, opt HessianOptions) (*Points, error) {
	l, err := newLayout(nat, x0, &opt)
	if err != nil {
		return nil, err
	}
	p := &Points{CoordsBohr: l.x, Displacements: l.jobs, SymmetryOperations: len(l.sym.ops), SymmetryShiftBohr: l.sym.shiftBohr}
	for _, g := range groups(l.jobs) {
		p.Groups = append(p.Groups, l.jobs[g[0]:g[1]])
	}
	return p, nil
}

// pieceSetup is setup for a piecewise Hessian, which needs a work
// directory.
func pieceSetup(nat int, x0 []float64, opt *HessianOptions) (*store, *layout, error) {
	if opt.WorkDir == "" {
		return nil, nil, errors.New("freq: a piecewise Hessian needs a work directory")
	}
	return setup(nat, x0, opt)
}

// ComputeReference evaluates the undisplaced point of s at x0 (energy,
// gradient and, with opt.Dipole, the dipole), as ComputeHessian does first,
// and saves it in opt.WorkDir; a point already saved is not recomputed
// (computed is then false). The surface keeps the point's warm start, which
// the caller saves for the displaced points.
func ComputeReference(ctx context.Context, s gradient.Surface, x0 []float64, opt HessianOptions) (computed bool, err error) {
	nat := s.NumAtoms()
	st, l, err := pieceSetup(nat, x0, &opt)
	if err != nil {
		return false, err
	}
	if _, ok := st.load(referenceName, 3*nat, l.step, -1, 0); ok {
		return false, nil
	}
	_, _, err = computePoint(ctx, s, l.x, l.step, Displacement{Coordinate: -1}, opt.Dipole, max(opt.Threads, 1), nil, st, nil, false)
	return err == nil, err
}

// ComputeDisplacements evaluates the displaced points ds of one
// coordinate of s (a group of Points.Groups, or a part of one: they are
// computed in the order given, with opt.Extrapolate each after the first
// from the state of the nearest earlier one as ComputeHessian does, so a
// whole group gives the same points as there) and saves them in opt.WorkDir. The first starts
// from the surface's current warm start, which it keeps: the caller sets
// it to the reference's. Points already saved are not recomputed; computed
// counts those that were. Temporary files of an earlier, killed attempt
// are removed first.
func ComputeDisplacements(ctx context.Context, s gradient.Surface, x0 []float64, opt HessianOptions, ds []Displacement) (computed int, err error) {
	nat := s.NumAtoms()
	st, l, err := pieceSetup(nat, x0, &opt)
	if err != nil {
		return 0, err
	}
	step := l.step
	done := make([]bool, len(ds))
	for i, d := range ds {
		if d.Coordinate < 0 || d.Coordinate >= 3*nat || d.Steps == 0 || abs(d.Steps) > 2 || (abs(d.Steps) == 2 && !opt.FourPoint) {
			return 0, fmt.Errorf("freq: no displaced point %+v in this Hessian", d)
		}
		if d.Coordinate != ds[0].Coordinate {
			return 0, fmt.Errorf("freq: displaced points %+v and %+v of different coordinates in one group", ds[0], d)
		}
		for _, e := range ds[:i] {
			if e == d {
				return 0, fmt.Errorf("freq: displaced point %+v twice in one group", d)
			}
		}
		name := d.FileName()
		if _, ok := st.load(name, 3*nat, step, d.Coordinate, d.Steps); ok {
			done[i] = true
			continue
		}
		for _, base := range []string{name, stateName(name)} {
			old, _ := filepath.Glob(filepath.Join(st.dir, ".tmp-"+base+"-*"))
			for _, f := range old {
				os.Remove(f)
			}
		}
	}
	_, err = computeGroup(ctx, s, l.x, step, opt.Dipole, max(opt.Threads, 1), nil, st, ds, done, opt.Extrapolate, func(int, storedPoint) { computed++ })
	return computed, err
}

// SavedPoints reports which points of the Hessian described by opt (at x0,
// nat atoms) are saved in opt.WorkDir: whether the reference is, and the
// displaced points that are not (in the order of PlanPoints). The work
// directory must belong to this calculation.
func SavedPoints(nat int, x0 []float64, opt HessianOptions) (haveReference bool, missing []Displacement, err error) {
	st, l, err := pieceSetup(nat, x0, &opt)
	if err != nil {
		return false, nil, err
	}
	_, haveReference = st.load(referenceName, 3*nat, l.step, -1, 0)
	for _, d := range l.jobs {
		if _, ok := st.load(d.FileName(), 3*nat, l.step, d.Coordinate, d.Steps); !ok {
			missing = append(missing, d)
		}
	}
	return haveReference, missing, nil
}
