package optimize

import (
	"context"
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"poise/energy/units"
	"poise/gradient"
)

// DefaultMaxSteps is the default step limit of a relaxation.
const DefaultMaxSteps = 100

// Trust radius (bohr and radians in internal coordinates, bohr in
// Cartesian ones): start, bounds (common practice).
const (
	DefaultTrustRadius = 0.5
	maxTrustRadius     = 1.0
	minTrustRadius     = 1e-3
)

// rejectRiseHartree: a step that raises the energy by more than this is
// rejected (the next step starts again from the previous geometry with a
// smaller trust radius). Smaller rises are accepted: near a minimum they
// are within the precision of the energies.
const rejectRiseHartree = 1e-6

// minDistanceBohr: a proposed geometry with two atoms closer than this
// (0.5 Å) is not evaluated; the trust radius shrinks instead.
const minDistanceBohr = 0.5 * units.AngstromBohr

// maxFailures is the number of consecutive failed evaluations (each retried
// with a quarter of the step) after which a relaxation gives up.
const maxFailures = 3

// singularTol: singular values of the Wilson B matrix below this are
// treated as zero (the redundant directions).
const singularTol = 1e-4

// Options control a relaxation.
type Options struct {
	// Criteria are the convergence thresholds; the zero value means the
	// "report" level.
	Criteria Criteria
	// MaxSteps is the step limit (each step costs one gradient); 0 means
	// DefaultMaxSteps.
	MaxSteps int
	// Freeze lists atoms (numbered from 0) whose positions do not change.
	Freeze []int
	// Hold lists bonds, angles and dihedrals held at their starting values
	// (within 1e-8 bohr or radians).
	Hold []Coordinate
	// TrustRadius is the starting trust radius; 0 means
	// DefaultTrustRadius.
	TrustRadius float64
	// Threads is the thread budget passed to each evaluation (0: the
	// surface's default).
	Threads int
	// Cartesian relaxes in Cartesian coordinates from the start instead of
	// internal ones (for comparison; the model Hessian is the same).
	Cartesian bool
	// Progress, if set, is called after every evaluated geometry.
	Progress func(Step)
	// InitialHessian, if set, replaces the model Hessian at the start when
	// its internal coordinates are the ones this relaxation builds (same
	// kinds on the same atoms, in the same order) — typically the updated
	// Hessian of a relaxation of the same molecule at a cheaper level.
	InitialHessian *InternalHessian
}

// InternalHessian is a Hessian in redundant internal coordinates
// (Eh/bohr², Eh/(bohr·rad), Eh/rad²), row-major len(Coordinates)².
type InternalHessian struct {
	Coordinates []Coordinate
	H           []float64
}

// Step describes one evaluated geometry of a relaxation.
type Step struct {
	// Number counts the steps: 0 is the starting geometry.
	Number        int
	EnergyHartree float64
	// ChangeHartree is the energy change from the previous accepted
	// geometry (0 at the start).
	ChangeHartree float64
	// MaxGradient and RMSGradient are the largest and RMS component of the
	// gradient as the criteria measure it (Eh/bohr).
	MaxGradient, RMSGradient float64
	// MaxStep and RMSStep are the larger of those of the last step and of
	// the next one (the Cartesian displacement to the minimum of the
	// quadratic model within the trust radius), as the criteria measure
	// them (bohr; zero for a rejected step).
	MaxStep, RMSStep float64
	// StepLength is the Euclidean length of the Cartesian step that led
	// here (bohr; zero at the start).
	StepLength float64
	// TrustRadius is the trust radius after this step.
	TrustRadius float64
	// Rejected reports a step that raised the energy: the relaxation
	// continues from the previous geometry.
	Rejected bool
	// Converged reports that this geometry meets the criteria.
	Converged bool
	// Coordinates is "internal" or "cartesian", the coordinates of the
	// step that led here.
	Coordinates string
	// Evaluations is the number of surface evaluations so far.
	Evaluations int
	// XBohr is the geometry (3N, bohr); valid only during the call.
	XBohr []float64
}

// Result is the outcome of a relaxation.
type Result struct {
	// XBohr is the final geometry (the last accepted one), 3N bohr.
	XBohr         []float64
	EnergyHartree float64
	// GradientHartreeBohr is the full Cartesian gradient at XBohr.
	GradientHartreeBohr []float64
	// MaxGradient and RMSGradient are measured as the criteria do.
	MaxGradient, RMSGradient float64
	Converged                bool
	// Steps is the number of steps taken (rejected ones included).
	Steps int
	// Evaluations is the number of surface evaluations the relaxation
	// made (one energy and gradient per geometry).
	Evaluations int
	// Coordinates is "internal" or "cartesian": the coordinates in use at
	// the end ("cartesian" after a fallback).
	Coordinates string
	// Rebuilds counts the times the internal coordinates were rebuilt
	// (an angle became linear, or the back-transformation failed).
	Rebuilds int
	// Hessian is the final (BFGS-updated) Hessian in internal coordinates;
	// nil when the relaxation ended in Cartesian coordinates.
	Hessian *InternalHessian
}

// OptionsError reports options that do not fit the molecule: a frozen atom
// or held coordinate that does not exist, a held angle too close to
// linear, a negative step limit.
type OptionsError struct{ msg string }

func (e *OptionsError) Error() string { return "optimize: " + e.msg }

func optionsErr(format string, a ...any) error {
	return &OptionsError{msg: fmt.Sprintf(format, a...)}
}

// ErrNotConverged is returned (wrapped) when the step limit is reached
// before convergence; the Result then holds the last accepted geometry.
var ErrNotConverged = errors.New("relaxation not converged")

// Relax minimizes the energy of surface s from the geometry xBohr (3N,
// bohr) of atoms with atomic numbers z. Each step costs one evaluation of
// energy and gradient; there are no line searches. It returns the result
// and, if the step limit was reached first, an error wrapping
// ErrNotConverged with the result. A geometry the surface fails to
// evaluate is retried with a shorter step; three failures in a row, an
// error at the starting geometry or ctx's cancellation end the relaxation
// with an error (and, after the start, the last accepted geometry in the
// result).
func Relax(ctx context.Context, s gradient.Surface, z []int, xBohr []float64, opt Options) (*Result, error) {
	r, err := newRelaxer(s, z, xBohr, opt)
	if err != nil {
		return nil, err
	}
	return r.run(ctx, xBohr)
}

type relaxer struct {
	s     gradient.Surface
	z     []int
	n     int
	free  []int // free atoms
	fidx  []int // atom → index among free atoms, −1 if frozen
	m     int   // 3·len(free)
	hold  []Coordinate
	hold0 []float64
	opt   Options
	crit  Criteria
	trust float64

	cart     bool
	prims    []Coordinate
	holdIdx  []int     // positions of the held coordinates in prims
	h        []float64 // Hessian: len(prims)² (internal) or m² (Cartesian)
	rebuilds int
}

func newRelaxer(s gradient.Surface, z []int, x []float64, opt Options) (*relaxer, error) {
	n := s.NumAtoms()
	if len(z) != n {
		return nil, fmt.Errorf("optimize: %d atomic numbers for a surface of %d atoms", len(z), n)
	}
	if len(x) != 3*n {
		return nil, fmt.Errorf("optimize: %d coordinates for %d atoms", len(x), n)
	}
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("optimize: coordinate %d is %v", i+1, v)
		}
	}
	r := &relaxer{s: s, z: z, n: n, opt: opt, crit: opt.Criteria, trust: opt.TrustRadius}
	if r.crit == (Criteria{}) {
		r.crit, _ = Convergence(DefaultConvergence)
	}
	if !r.crit.valid() {
		return nil, optionsErr("convergence thresholds must be positive: %+v", r.crit)
	}
	if r.opt.MaxSteps < 0 {
		return nil, optionsErr("step limit %d is negative", r.opt.MaxSteps)
	}
	if r.opt.MaxSteps == 0 {
		r.opt.MaxSteps = DefaultMaxSteps
	}
	if r.trust == 0 {
		r.trust = DefaultTrustRadius
	}
	if !(r.trust > 0) || r.trust > maxTrustRadius {
		return nil, optionsErr("trust radius %g outside (0, %g]", r.trust, maxTrustRadius)
	}
	frozen := make([]bool, n)
	for _, a := range opt.Freeze {
		if a < 0 || a >= n {
			return nil, optionsErr("frozen atom %d does not exist (%d atoms)", a+1, n)
		}
		frozen[a] = true
	}
	r.fidx = make([]int, n)
	for a := 0; a < n; a++ {
		r.fidx[a] = -1
		if !frozen[a] {
			r.fidx[a] = len(r.free)
			r.free = append(r.free, a)
		}
	}
	r.m = 3 * len(r.free)
	for _, c := range opt.Hold {
		if err := checkHeld(c, n, x); err != nil {
			return nil, err
		}
		for _, d := range r.hold {
			if sameAtoms(c, d) {
				return nil, optionsErr("%s %s is held twice", c.Kind, c.Label(nil))
			}
		}
		r.hold = append(r.hold, c)
		r.hold0 = append(r.hold0, c.Value(x))
	}
	return r, nil
}

// checkHeld validates a coordinate to hold at geometry x.
func checkHeld(c Coordinate, n int, x []float64) error {
	if c.Kind != Bond && c.Kind != Angle && c.Kind != Dihedral {
		return optionsErr("only bonds, angles and dihedrals can be held, not a %s", c.Kind)
	}
	k := c.NumAtoms()
	for i := 0; i < k; i++ {
		if c.Atoms[i] < 0 || c.Atoms[i] >= n {
			return optionsErr("held %s %s: atom %d does not exist (%d atoms)", c.Kind, c.Label(nil), c.Atoms[i]+1, n)
		}
		for j := 0; j < i; j++ {
			if c.Atoms[i] == c.Atoms[j] {
				return optionsErr("held %s %s names atom %d twice", c.Kind, c.Label(nil), c.Atoms[i]+1)
			}
		}
	}
	for i := 0; i+2 < k; i++ {
		if a := angleDegrees(x, c.Atoms[i], c.Atoms[i+1], c.Atoms[i+2]); a > linearDegrees {
			return optionsErr("held %s %s: the angle %s is %.1f°, too close to linear (above %.0f°) to define it",
				c.Kind, c.Label(nil), Coordinate{Kind: Angle, Atoms: [4]int{c.Atoms[i], c.Atoms[i+1], c.Atoms[i+2]}}.Label(nil), a, linearDegrees)
		}
	}
	return nil
}

func (r *relaxer) coordsName() string {
	if r.cart {
		return "cartesian"
	}
	return "internal"
}

// freeVec extracts the free-atom components of a 3N vector.
func (r *relaxer) freeVec(v []float64) []float64 {
	out := make([]float64, r.m)
	for i, a := range r.free {
		copy(out[3*i:3*i+3], v[3*a:3*a+3])
	}
	return out
}

// addFree adds the free-atom vector d to the 3N vector x in place.
func (r *relaxer) addFree(x, d []float64) {
	for i, a := range r.free {
		for k := 0; k < 3; k++ {
			x[3*a+k] += d[3*i+k]
		}
	}
}

// bRow writes the derivative of c at x over the free coordinates into row
// (length m) and returns its value.
func (r *relaxer) bRow(c Coordinate, x, row []float64) float64 {
	var d [4][3]float64
	v := c.Derivative(x, &d)
	for i := range row {
		row[i] = 0
	}
	for i := 0; i < c.NumAtoms(); i++ {
		f := r.fidx[c.Atoms[i]]
		if f < 0 {
			continue
		}
		for k := 0; k < 3; k++ {
			row[3*f+k] += d[i][k]
		}
	}
	return v
}

// rigid returns an orthonormal basis (free coordinates) of the rigid
// translations and rotations that leave the frozen atoms in place.
func (r *relaxer) rigid(x []float64) [][]float64 {
	var c [3]float64
	for a := 0; a < r.n; a++ {
		for k := 0; k < 3; k++ {
			c[k] += x[3*a+k] / float64(r.n)
		}
	}
	gen := make([][]float64, 6) // 3N generators
	for g := 0; g < 6; g++ {
		v := make([]float64, 3*r.n)
		for a := 0; a < r.n; a++ {
			if g < 3 {
				v[3*a+g] = 1
				continue
			}
			var e [3]float64
			e[g-3] = 1
			d := cross(e, sub(pos(x, a), c))
			copy(v[3*a:3*a+3], d[:])
		}
		gen[g] = v
	}
	// Combinations that do not move frozen atoms: the null space of the
	// generators restricted to the frozen atoms.
	nf := r.n - len(r.free)
	combos := make([][]float64, 0, 6)
	if nf == 0 {
		for g := 0; g < 6; g++ {
			e := make([]float64, 6)
			e[g] = 1
			combos = append(combos, e)
		}
	} else {
		a := mat.NewSymDense(6, nil)
		scaleMax := 0.0
		for i := 0; i < 6; i++ {
			for j := i; j < 6; j++ {
				s := 0.0
				for at := 0; at < r.n; at++ {
					if r.fidx[at] >= 0 {
						continue
					}
					for k := 0; k < 3; k++ {
						s += gen[i][3*at+k] * gen[j][3*at+k]
					}
				}
				a.SetSym(i, j, s)
				scaleMax = math.Max(scaleMax, math.Abs(s))
			}
		}
		vals, vecs, err := eigenSym(a)
		if err != nil {
			return nil
		}
		for i, v := range vals {
			if v <= 1e-10*math.Max(scaleMax, 1) {
				e := make([]float64, 6)
				for k := 0; k < 6; k++ {
					e[k] = vecs.At(k, i)
				}
				combos = append(combos, e)
			}
		}
	}
	// Generators that hardly move any atom (the rotation about the axis
	// of a linear molecule) are dropped: the scale is that of a
	// translation, √N bohr.
	small := 1e-6 * math.Sqrt(float64(r.n))
	vs := make([][]float64, 0, len(combos))
	for _, cb := range combos {
		v := make([]float64, 3*r.n)
		for g := 0; g < 6; g++ {
			for i := range v {
				v[i] += cb[g] * gen[g][i]
			}
		}
		if fv := r.freeVec(v); vnorm(fv) > small {
			vs = append(vs, fv)
		}
	}
	return orthonormalize(vs, 1e-6)
}

// fixedSpace is an orthonormal basis (free coordinates) of the directions
// the relaxation does not follow: rigid motions and the gradients of the
// held coordinates.
func (r *relaxer) fixedSpace(x []float64) [][]float64 {
	vs := r.rigid(x)
	for _, c := range r.hold {
		row := make([]float64, r.m)
		r.bRow(c, x, row)
		vs = append(vs, row)
	}
	return orthonormalize(vs, 1e-8)
}

// gradientStats measures the gradient g (3N) at x as the criteria do.
func (r *relaxer) gradientStats(x, g []float64) (maxG, rmsG float64) {
	ge := project(r.freeVec(g), r.fixedSpace(x))
	return maxAbs(ge), rms(ge)
}

// iframe is the internal-coordinate system at one geometry: the values q,
// the Wilson matrix B (len(q)×m) and its singular value decomposition
// B = U Σ Wᵀ restricted to the non-zero singular values.
type iframe struct {
	q   []float64
	b   *mat.Dense
	w   *mat.Dense // m×k
	sig []float64  // k
	u   *mat.Dense // nq×k
}

func (r *relaxer) frame(x []float64) (*iframe, error) {
	nq := len(r.prims)
	if nq == 0 || r.m == 0 {
		return nil, errors.New("optimize: no internal coordinates")
	}
	f := &iframe{q: make([]float64, nq), b: mat.NewDense(nq, r.m, nil)}
	row := make([]float64, r.m)
	for i, p := range r.prims {
		f.q[i] = r.bRow(p, x, row)
		f.b.SetRow(i, row)
	}
	var btb mat.SymDense
	btb.SymOuterK(1, f.b.T())
	vals, vecs, err := eigenSym(&btb)
	if err != nil {
		return nil, err
	}
	var keep []int
	for i := len(vals) - 1; i >= 0; i-- {
		if vals[i] > singularTol*singularTol {
			keep = append(keep, i)
		}
	}
	k := len(keep)
	if k == 0 {
		return nil, errors.New("optimize: the internal coordinates do not move any atom")
	}
	f.w = mat.NewDense(r.m, k, nil)
	f.sig = make([]float64, k)
	for j, i := range keep {
		f.sig[j] = math.Sqrt(vals[i])
		for a := 0; a < r.m; a++ {
			f.w.Set(a, j, vecs.At(a, i))
		}
	}
	f.u = mat.NewDense(nq, k, nil)
	f.u.Mul(f.b, f.w)
	for j := 0; j < k; j++ {
		for i := 0; i < nq; i++ {
			f.u.Set(i, j, f.u.At(i, j)/f.sig[j])
		}
	}
	return f, nil
}

// gradActive is the gradient in the active internal space, Σ⁻¹ Wᵀ g_free.
func (f *iframe) gradActive(gFree []float64) []float64 {
	k := len(f.sig)
	out := make([]float64, k)
	m, _ := f.w.Dims()
	for j := 0; j < k; j++ {
		s := 0.0
		for a := 0; a < m; a++ {
			s += f.w.At(a, j) * gFree[a]
		}
		out[j] = s / f.sig[j]
	}
	return out
}

// gradPrimitive is the gradient in the primitive internal coordinates,
// (Bᵀ)⁺ g_free = U Σ⁻¹ Wᵀ g_free.
func (f *iframe) gradPrimitive(gFree []float64) []float64 {
	ga := f.gradActive(gFree)
	nq, k := f.u.Dims()
	out := make([]float64, nq)
	for i := 0; i < nq; i++ {
		s := 0.0
		for j := 0; j < k; j++ {
			s += f.u.At(i, j) * ga[j]
		}
		out[i] = s
	}
	return out
}

// cartesianOf maps internal displacements dq to Cartesian ones, B⁺ dq =
// W Σ⁻¹ Uᵀ dq.
func (f *iframe) cartesianOf(dq []float64) []float64 {
	nq, k := f.u.Dims()
	m, _ := f.w.Dims()
	t := make([]float64, k)
	for j := 0; j < k; j++ {
		s := 0.0
		for i := 0; i < nq; i++ {
			s += f.u.At(i, j) * dq[i]
		}
		t[j] = s / f.sig[j]
	}
	out := make([]float64, m)
	for a := 0; a < m; a++ {
		s := 0.0
		for j := 0; j < k; j++ {
			s += f.w.At(a, j) * t[j]
		}
		out[a] = s
	}
	return out
}

// build sets up internal coordinates at x with the model Hessian; it
// reports false if they do not span the molecule's degrees of freedom.
func (r *relaxer) build(x []float64) bool {
	r.prims = Primitives(r.z, x, r.hold)
	r.holdIdx = r.holdIdx[:0]
	for _, c := range r.hold {
		for i, p := range r.prims {
			if sameAtoms(p, c) {
				r.holdIdx = append(r.holdIdx, i)
				break
			}
		}
	}
	r.h = modelHessian(r.z, x, r.prims)
	f, err := r.frame(x)
	if err != nil {
		return false
	}
	return len(f.sig) >= r.m-len(r.rigid(x))
}

// toCartesian switches to Cartesian coordinates at x, carrying the
// internal Hessian over (BᵀHB; directions the internal coordinates do not
// cover get a small model curvature).
func (r *relaxer) toCartesian(x []float64) {
	m := r.m
	hx := make([]float64, m*m)
	if len(r.prims) == 0 {
		r.prims = Primitives(r.z, x, r.hold)
		r.h = modelHessian(r.z, x, r.prims)
	}
	f, err := r.frame(x)
	if err == nil {
		nq := len(r.prims)
		hq := mat.NewDense(nq, nq, r.h)
		var t, hxm mat.Dense
		t.Mul(hq, f.b)
		hxm.Mul(f.b.T(), &t)
		k := len(f.sig)
		for a := 0; a < m; a++ {
			for b := 0; b < m; b++ {
				pw := 0.0
				for j := 0; j < k; j++ {
					pw += f.w.At(a, j) * f.w.At(b, j)
				}
				id := 0.0
				if a == b {
					id = 1
				}
				hx[a*m+b] = hxm.At(a, b) + cartesianModelForce*(id-pw)
			}
		}
	} else {
		for a := 0; a < m; a++ {
			hx[a*m+a] = 10 * cartesianModelForce
		}
	}
	r.cart = true
	r.h = hx
}

// cartesianModelForce is the model curvature (Eh/bohr²) of Cartesian
// directions the internal coordinates leave out.
const cartesianModelForce = 0.05

// proposal is a step about to be evaluated.
type proposal struct {
	x    []float64 // new geometry, 3N
	pred float64   // model energy change
	norm float64   // step length in the working coordinates
	dx   []float64 // Cartesian step over the free atoms
}

// propose computes the next step from x with gradient g.
func (r *relaxer) propose(x, g []float64) (*proposal, error) {
	rebuilt := false
	for attempt := 0; attempt < 20; attempt++ {
		var p *proposal
		var ok bool
		var err error
		if r.cart {
			p, err = r.cartesianStep(x, g)
			ok = err == nil
		} else {
			p, ok, err = r.internalStep(x, g)
		}
		if err != nil && r.cart {
			return nil, err
		}
		if !ok {
			if !rebuilt {
				rebuilt = true
				r.rebuilds++
				if !r.build(x) {
					r.toCartesian(x)
				}
			} else {
				r.toCartesian(x)
			}
			continue
		}
		if err := r.enforceHeld(p.x); err != nil {
			if !r.cart {
				r.toCartesian(x)
				continue
			}
			return nil, err
		}
		if clash(p.x) && r.trust > minTrustRadius {
			r.trust = math.Max(minTrustRadius, 0.25*math.Min(r.trust, p.norm))
			continue
		}
		p.dx = r.freeVec(p.x)
		x0 := r.freeVec(x)
		for i := range p.dx {
			p.dx[i] -= x0[i]
		}
		return p, nil
	}
	return nil, errors.New("optimize: no acceptable step could be found")
}

// clash reports two atoms closer than minDistanceBohr.
func clash(x []float64) bool {
	n := len(x) / 3
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			if dist(x, i, j) < minDistanceBohr {
				return true
			}
		}
	}
	return false
}

// internalStep is the step in redundant internal coordinates: gradient
// and Hessian in the active (non-redundant) space of B, held coordinates
// projected out, a rational-function step there, and the iterative
// back-transformation to Cartesians. ok is false if the coordinates broke
// down.
func (r *relaxer) internalStep(x, g []float64) (*proposal, bool, error) {
	f, err := r.frame(x)
	if err != nil {
		return nil, false, nil
	}
	nq, k := f.u.Dims()
	gA := f.gradActive(r.freeVec(g))
	hq := mat.NewDense(nq, nq, r.h)
	var t, hA mat.Dense
	t.Mul(hq, f.u)
	hA.Mul(f.u.T(), &t)
	// Held coordinates: remove their directions from the active space.
	cons := make([][]float64, 0, len(r.holdIdx))
	for _, i := range r.holdIdx {
		cons = append(cons, mat.Row(nil, i, f.u))
	}
	v := complement(k, orthonormalize(cons, 1e-8))
	kv := len(v)
	if kv == 0 {
		return &proposal{x: append([]float64(nil), x...)}, true, nil
	}
	gv := make([]float64, kv)
	hv := mat.NewSymDense(kv, nil)
	for a := 0; a < kv; a++ {
		gv[a] = vdot(v[a], gA)
	}
	hvA := make([][]float64, kv)
	for a := 0; a < kv; a++ {
		hvA[a] = make([]float64, k)
		for i := 0; i < k; i++ {
			s := 0.0
			for j := 0; j < k; j++ {
				s += hA.At(i, j) * v[a][j]
			}
			hvA[a][i] = s
		}
	}
	for a := 0; a < kv; a++ {
		for b := a; b < kv; b++ {
			hv.SetSym(a, b, 0.5*(vdot(v[a], hvA[b])+vdot(v[b], hvA[a])))
		}
	}
	sv, pred, err := stepRFO(hv, gv, r.trust)
	if err != nil {
		return nil, false, nil
	}
	dA := make([]float64, k)
	for a := 0; a < kv; a++ {
		for j := 0; j < k; j++ {
			dA[j] += sv[a] * v[a][j]
		}
	}
	dq := make([]float64, nq)
	for i := 0; i < nq; i++ {
		s := 0.0
		for j := 0; j < k; j++ {
			s += f.u.At(i, j) * dA[j]
		}
		dq[i] = s
	}
	xn, ok := r.backTransform(x, f, dq)
	if !ok {
		return nil, false, nil
	}
	return &proposal{x: xn, pred: pred, norm: vnorm(sv)}, true, nil
}

// backTransform finds Cartesian coordinates whose internal coordinates are
// f.q + dq, iterating x ← x + B⁺(q_target − q(x)) with B at each new x
// (C. Peng, P. Y. Ayala, H. B. Schlegel, M. J. Frisch, J. Comput. Chem. 17,
// 49 (1996), eq. 17). It fails if the iteration diverges; if it only
// stalls, the best iterate is used when its residual is small.
func (r *relaxer) backTransform(x []float64, f *iframe, dq []float64) ([]float64, bool) {
	nq := len(dq)
	target := make([]float64, nq)
	for i := range target {
		target[i] = f.q[i] + dq[i]
	}
	cur := append([]float64(nil), x...)
	fr := f
	resid := make([]float64, nq)
	first := 0.0
	for it := 0; it < 50; it++ {
		for i, p := range r.prims {
			resid[i] = p.difference(target[i], fr.q[i])
		}
		dx := fr.cartesianOf(resid)
		size := maxAbs(dx)
		if it == 0 {
			first = size
		} else if size > 2*first+1e-6 || math.IsNaN(size) {
			return nil, false // diverging
		}
		r.addFree(cur, dx)
		if size < 1e-10 {
			return cur, true
		}
		var err error
		fr, err = r.frame(cur)
		if err != nil {
			return nil, false
		}
	}
	// Not converged to 1e-10 bohr in 50 iterations: accept a residual
	// change below 1e-6 bohr.
	for i, p := range r.prims {
		resid[i] = p.difference(target[i], fr.q[i])
	}
	if maxAbs(fr.cartesianOf(resid)) < 1e-6 {
		return cur, true
	}
	return nil, false
}

// cartesianStep is the fallback step in the Cartesian coordinates of the
// free atoms, rigid motions and held coordinates projected out.
func (r *relaxer) cartesianStep(x, g []float64) (*proposal, error) {
	v := complement(r.m, r.fixedSpace(x))
	kv := len(v)
	xn := append([]float64(nil), x...)
	if kv == 0 {
		return &proposal{x: xn}, nil
	}
	gf := r.freeVec(g)
	gv := make([]float64, kv)
	hvA := make([][]float64, kv)
	for a := 0; a < kv; a++ {
		gv[a] = vdot(v[a], gf)
		hvA[a] = make([]float64, r.m)
		for i := 0; i < r.m; i++ {
			hvA[a][i] = vdot(r.h[i*r.m:(i+1)*r.m], v[a])
		}
	}
	hv := mat.NewSymDense(kv, nil)
	for a := 0; a < kv; a++ {
		for b := a; b < kv; b++ {
			hv.SetSym(a, b, 0.5*(vdot(v[a], hvA[b])+vdot(v[b], hvA[a])))
		}
	}
	sv, pred, err := stepRFO(hv, gv, r.trust)
	if err != nil {
		return nil, err
	}
	dx := make([]float64, r.m)
	for a := 0; a < kv; a++ {
		for i := range dx {
			dx[i] += sv[a] * v[a][i]
		}
	}
	r.addFree(xn, dx)
	return &proposal{x: xn, pred: pred, norm: vnorm(sv)}, nil
}

// enforceHeld moves the free atoms of x (in place) the least distance that
// brings every held coordinate back to its starting value (Newton
// iterations on the constraints, x ← x − Cᵀ(CCᵀ)⁻¹ c(x)).
func (r *relaxer) enforceHeld(x []float64) error {
	nh := len(r.hold)
	if nh == 0 {
		return nil
	}
	rows := make([][]float64, nh)
	for i := range rows {
		rows[i] = make([]float64, r.m)
	}
	res := make([]float64, nh)
	for it := 0; it < 50; it++ {
		for i, c := range r.hold {
			v := r.bRow(c, x, rows[i])
			res[i] = c.difference(v, r.hold0[i])
		}
		if maxAbs(res) < 1e-11 {
			return nil
		}
		a := mat.NewSymDense(nh, nil)
		for i := 0; i < nh; i++ {
			for j := i; j < nh; j++ {
				a.SetSym(i, j, vdot(rows[i], rows[j]))
			}
		}
		vals, vecs, err := eigenSym(a)
		if err != nil {
			return err
		}
		lam := make([]float64, nh)
		for e, val := range vals {
			if val < 1e-12 {
				continue
			}
			c := 0.0
			for i := 0; i < nh; i++ {
				c += vecs.At(i, e) * res[i]
			}
			c /= val
			for i := 0; i < nh; i++ {
				lam[i] += c * vecs.At(i, e)
			}
		}
		dx := make([]float64, r.m)
		for i := 0; i < nh; i++ {
			for k := range dx {
				dx[k] -= lam[i] * rows[i][k]
			}
		}
		r.addFree(x, dx)
	}
	return errors.New("optimize: the held coordinates cannot be restored")
}

// update applies the BFGS update for the move from (x0, g0) to (x1, g1) in
// the current coordinates.
func (r *relaxer) update(x0, g0, x1, g1 []float64) {
	if r.cart {
		s := r.freeVec(x1)
		y := r.freeVec(g1)
		s0, y0 := r.freeVec(x0), r.freeVec(g0)
		for i := range s {
			s[i] -= s0[i]
			y[i] -= y0[i]
		}
		updateBFGS(r.h, r.m, s, y)
		return
	}
	f0, err0 := r.frame(x0)
	f1, err1 := r.frame(x1)
	if err0 != nil || err1 != nil {
		return
	}
	gq0 := f0.gradPrimitive(r.freeVec(g0))
	gq1 := f1.gradPrimitive(r.freeVec(g1))
	nq := len(r.prims)
	s := make([]float64, nq)
	y := make([]float64, nq)
	for i, p := range r.prims {
		s[i] = p.difference(f1.q[i], f0.q[i])
		y[i] = gq1[i] - gq0[i]
	}
	updateBFGS(r.h, nq, s, y)
}

// evaluate computes energy and gradient at x.
func (r *relaxer) evaluate(ctx context.Context, x []float64) (float64, []float64, error) {
	if err := ctx.Err(); err != nil {
		return 0, nil, err
	}
	var p gradient.Point
	p.Gradient = make([]float64, 3*r.n)
	if err := r.s.Evaluate(ctx, x, gradient.Request{Gradient: true, Threads: r.opt.Threads}, &p); err != nil {
		return p.EnergyHartree, nil, err
	}
	if math.IsNaN(p.EnergyHartree) || math.IsInf(p.EnergyHartree, 0) {
		return 0, nil, fmt.Errorf("optimize: the surface returned energy %v", p.EnergyHartree)
	}
	for i, v := range p.Gradient {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, nil, fmt.Errorf("optimize: the surface returned gradient component %d = %v", i+1, v)
		}
	}
	return p.EnergyHartree, p.Gradient, nil
}

func (r *relaxer) run(ctx context.Context, x0 []float64) (*Result, error) {
	start := r.s.Evaluations()
	x := append([]float64(nil), x0...)
	res := &Result{XBohr: x}
	energy, g, err := r.evaluate(ctx, x)
	if err != nil {
		return nil, fmt.Errorf("optimize: starting geometry: %w", err)
	}
	res.EnergyHartree, res.GradientHartreeBohr = energy, g
	finish := func(conv bool) {
		res.XBohr, res.EnergyHartree, res.GradientHartreeBohr = x, energy, g
		res.MaxGradient, res.RMSGradient = r.gradientStats(x, g)
		res.Converged = conv
		res.Evaluations = r.s.Evaluations() - start
		res.Coordinates = r.coordsName()
		res.Rebuilds = r.rebuilds
		if !r.cart && len(r.prims) > 0 {
			res.Hessian = &InternalHessian{
				Coordinates: append([]Coordinate(nil), r.prims...),
				H:           append([]float64(nil), r.h...),
			}
		}
	}
	dof := r.m - len(r.fixedSpace(x))
	if dof <= 0 {
		if r.opt.Progress != nil {
			r.opt.Progress(Step{EnergyHartree: energy, Converged: true, Coordinates: r.coordsName(), Evaluations: r.s.Evaluations() - start, XBohr: x})
		}
		finish(true)
		return res, nil
	}
	if r.opt.Cartesian {
		r.toCartesian(x)
	} else if !r.build(x) {
		r.toCartesian(x)
	} else if ih := r.opt.InitialHessian; ih != nil && sameCoordinates(ih.Coordinates, r.prims) && len(ih.H) == len(r.h) {
		copy(r.h, ih.H)
	}
	var lastDX []float64
	lastDE := 0.0
	haveLast := false
	quiet := false // the geometry was reported already (a step from it was rejected)
	steps, failures := 0, 0
	for {
		prop, err := r.propose(x, g)
		if err != nil {
			finish(false)
			return res, fmt.Errorf("optimize: step %d: %w", steps+1, err)
		}
		maxG, rmsG := r.gradientStats(x, g)
		// Step criteria on the last step and on the next one (the
		// displacement to the minimum of the model); the energy criterion
		// on the last step (at the start, the predicted change).
		maxS, rmsS := maxAbs(prop.dx), rms(prop.dx)
		dE, lenS := prop.pred, 0.0
		if haveLast {
			dE, lenS = lastDE, vnorm(lastDX)
			maxS, rmsS = math.Max(maxS, maxAbs(lastDX)), math.Max(rmsS, rms(lastDX))
		}
		conv := r.crit.met(maxG, rmsG, maxS, rmsS, dE)
		if r.opt.Progress != nil && !quiet {
			st := Step{Number: steps, EnergyHartree: energy, MaxGradient: maxG, RMSGradient: rmsG,
				MaxStep: maxS, RMSStep: rmsS, StepLength: lenS, TrustRadius: r.trust, Converged: conv,
				Coordinates: r.coordsName(), Evaluations: r.s.Evaluations() - start, XBohr: x}
			if haveLast {
				st.ChangeHartree = lastDE
			}
			r.opt.Progress(st)
		}
		if conv {
			finish(true)
			res.Steps = steps
			return res, nil
		}
		if steps >= r.opt.MaxSteps {
			finish(false)
			res.Steps = steps
			return res, fmt.Errorf("optimize: %w after %d steps (largest gradient %.2e Eh/bohr)", ErrNotConverged, steps, maxG)
		}
		e1, g1, err := r.evaluate(ctx, prop.x)
		if err != nil {
			steps++
			failures++
			if ctx.Err() != nil || failures >= maxFailures || r.trust <= minTrustRadius {
				finish(false)
				res.Steps = steps
				return res, fmt.Errorf("optimize: step %d: %w", steps, err)
			}
			// The surface could not evaluate the new geometry (an SCF that
			// does not converge far from the last one): try a shorter step.
			r.trust = math.Max(minTrustRadius, 0.25*math.Min(r.trust, prop.norm))
			quiet = true
			continue
		}
		failures = 0
		steps++
		r.update(x, g, prop.x, g1)
		dE1 := e1 - energy
		rejected := dE1 > rejectRiseHartree && r.trust > minTrustRadius
		switch {
		case rejected:
			r.trust = math.Max(minTrustRadius, 0.25*math.Min(r.trust, prop.norm))
		case math.Abs(prop.pred) < 1e-10 && math.Abs(dE1) < 1e-10:
			// Both changes at the level of numerical noise.
		default:
			ratio := dE1 / prop.pred
			if ratio < 0.25 {
				r.trust = math.Max(minTrustRadius, 0.5*math.Min(r.trust, prop.norm))
			} else if ratio > 0.75 && prop.norm > 0.8*r.trust {
				r.trust = math.Min(maxTrustRadius, 2*r.trust)
			}
		}
		if rejected {
			if r.opt.Progress != nil {
				mg, rg := r.gradientStats(prop.x, g1)
				r.opt.Progress(Step{Number: steps, EnergyHartree: e1, ChangeHartree: dE1, MaxGradient: mg, RMSGradient: rg,
					StepLength: vnorm(prop.dx), TrustRadius: r.trust,
					Rejected: true, Coordinates: r.coordsName(), Evaluations: r.s.Evaluations() - start, XBohr: prop.x})
			}
			quiet = true
			continue
		}
		quiet = false
		x, energy, g = prop.x, e1, g1
		lastDX, lastDE, haveLast = prop.dx, dE1, true
		if !r.cart && brokenAt(r.prims, x) {
			r.rebuilds++
			if !r.build(x) {
				r.toCartesian(x)
			}
		}
	}
}

// sameCoordinates reports whether a and b are the same coordinates in the
// same order (kinds and atoms; linear-bend axes are rebuilt from the
// geometry and may differ).
func sameCoordinates(a, b []Coordinate) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i].Kind != b[i].Kind || a[i].Atoms != b[i].Atoms {
			return false
		}
	}
	return true
}
