package freq

import (
	"context"
	"fmt"
	"math"
	"slices"
	"sync"

	"poise/gradient"
)

// DefaultStepBohr is the displacement of the finite-difference Hessian, in
// bohr. Two errors compete: the truncation error of the central
// difference, h²/6·∂⁴E/∂x⁴, and the noise ε_g/2h of gradients converged to
// ε_g. With SCF gradients converged as SCFGradientTolerance asks, 0.0025
// bohr balances them for water at HF/STO-3G: the rigid-body roots of the
// unprojected Hessian stay within ~7 cm⁻¹ of zero (15 cm⁻¹ at 0.005 bohr,
// truncation-dominated; 15 cm⁻¹ at 0.0025 bohr with the looser default
// SCF convergence, noise-dominated), while the vibrational wavenumbers
// agree with the four-point formula to 0.05 cm⁻¹ (common practice: steps
// of 0.001–0.01 bohr).
const DefaultStepBohr = 0.0025

// SCFGradientTolerance is the SCF convergence (largest orbital-gradient
// element) that a surface should use for the displaced points: one SCF
// iteration more than the default 1e-7 with a warm start, and ten times
// less gradient noise in the differences.
const SCFGradientTolerance = 1e-8

// maxStepBohr bounds the step: beyond it the harmonic picture of a
// displacement is lost.
const maxStepBohr = 0.05

// HessianOptions control ComputeHessian.
type HessianOptions struct {
	// StepBohr is the displacement of each Cartesian coordinate (bohr);
	// 0 means DefaultStepBohr.
	StepBohr float64
	// FourPoint uses the fourth-order formula
	// (−g(+2h) + 8g(+h) − 8g(−h) + g(−2h))/12h, twice the gradients of
	// the default central difference (g(+h) − g(−h))/2h.
	FourPoint bool
	// Dipole asks for the dipole derivatives (IR intensities) from the
	// same displaced points.
	Dipole bool
	// Threads is the total thread budget (≤ 0: 1). Concurrent evaluations
	// share it: k at a time with Threads/k threads each (the first
	// Threads mod k get one more).
	Threads int
	// Concurrent is the number k of displaced points evaluated at once;
	// 0 means min(Threads, points left). Displaced points are
	// independent, so one thread per point scales best; a memory-bound
	// surface may want fewer at a time with more threads each.
	Concurrent int
	// WorkDir, if set, keeps every finished point (one JSON file each,
	// written atomically) so that an interrupted calculation resumes
	// without recomputing them.
	WorkDir string
	// Tag identifies what else the gradients depend on (level of theory,
	// SCF settings); a work directory written under another tag, or for
	// another geometry or step, is not reused.
	Tag string
	// DiscardStale empties a work directory that belongs to another
	// calculation instead of failing with ErrStaleWorkDir.
	DiscardStale bool
	// Charge and MassesU describe the surface's dipole origin for charged
	// molecules: a surface that reports the dipole about the centre of
	// mass (masses MassesU, u) of a molecule of total charge Charge has
	// its derivatives corrected by Charge·m_i/M to those about a fixed
	// origin, which do not depend on the masses. Neutral molecules need
	// neither.
	Charge  float64
	MassesU []float64
	// Progress, if set, is called (from one goroutine at a time) after
	// every finished or reloaded point.
	Progress func(Progress)
	// SymmetryKinds, one per atom, lets the Hessian use the point group
	// of the reference geometry: atoms of equal kind (the same element;
	// the CLI passes atomic numbers) may be interchanged by its
	// operations. One atom of each set of equivalent atoms is displaced,
	// and its columns of the Hessian and of the dipole derivatives give
	// those of the others by rotation; the reference geometry is first
	// made exactly symmetric (no atom moves by more than
	// SymmetryToleranceBohr, or symmetry is not used). For a charged
	// molecule with MassesU, atoms also need equal masses. nil evaluates
	// every displaced point.
	SymmetryKinds []int
	// SymmetryToleranceBohr is the largest distance by which an atom may
	// miss its image; 0 means DefaultSymmetryToleranceBohr.
	SymmetryToleranceBohr float64
	// AxisOperationsExact declares the surface exactly invariant (not
	// only to within its numerical noise) under the symmetry operations
	// that permute the coordinate axes with signs: true for surfaces
	// without an integration grid, or whose grids are oriented along the
	// coordinate axes. It lets a displaced point be the mirror image of
	// another displacement of the same atom (the −x displacement of an
	// atom on the mirror plane x = 0 is the image of its +x one). Without
	// it only whole columns are derived, which are central differences
	// of their own and so cancel any noise of the reference point.
	AxisOperationsExact bool
	// TranslationalInvariance lets the Hessian use the invariance of the
	// energy under a rigid translation, Σ_B ∂²E/∂x_A∂x_B = 0 (and of the
	// dipole about the centre of mass, or of a neutral molecule's): one
	// atom that no symmetry operation moves is not displaced, its columns
	// being minus the sum of the others'. Every molecular surface has this
	// invariance (a DFT grid moves with the atoms); the derived columns
	// carry the others' noise, summed.
	TranslationalInvariance bool
	// RotationalInvariance, with TranslationalInvariance, lets the
	// Hessian of a molecule without symmetry (one operation: none is
	// found, or SymmetryKinds is nil) also use the invariance under rigid
	// rotations: the gradient turns with the molecule, g(Rx) = R g(x), so
	// Σ_c (e_k × (r_c − r_d))·H_c = e_k × g (c over the coordinates, d the
	// atom that follows from translations, g the reference gradient; the
	// dipole about the centre of mass likewise turns: e_k × μ). Three
	// more coordinates, of atoms far from d, are then not displaced: a
	// molecule without symmetry needs 6N − 12 displaced points instead of
	// 6N − 6. Molecules with nearly collinear atoms keep all of them. A
	// DFT surface turns with the molecule to its grid's accuracy; the
	// derived columns carry the others' noise, weighted by their distance
	// from d over that of the chosen atoms.
	RotationalInvariance bool
	// Extrapolate starts every displaced point of a coordinate after its
	// first (the −h point after the +h one) from the state of the nearest
	// earlier one extrapolated to its own step (gradient.Extrapolation):
	// an SCF then begins with an error of order h² instead of h and takes
	// about 40 % fewer iterations there (aspirin B3LYP/6-31G*: 7 instead
	// of 12). The points of a coordinate then run one after the other, and
	// their starts differ, so points that are mirror images of each other
	// in a symmetric molecule (when SymmetryKinds does not derive one from
	// the other) agree only to the SCF convergence, no longer bit for bit.
	Extrapolate bool
	// Reference, if set, is the surface's evaluation at x0 (gradient, and
	// the dipole with Dipole), made with the same settings, and the
	// surface's warm start is that evaluation's: the Hessian then takes it
	// instead of evaluating the reference point again (a relaxation's last
	// point). It is ignored when symmetrizing moved an atom by more than
	// 1e-10 bohr.
	Reference *gradient.Point
}

// Progress reports the state of a Hessian calculation.
type Progress struct {
	Done, Total   int // displaced points finished (reloaded included), and in all
	Reused        int // displaced points read from the work directory
	SCFIterations int // of the point just finished (0 when reloaded)
}

// Hessian is the result of ComputeHessian. Matrices are row-major; n = 3N.
type Hessian struct {
	CoordsBohr    []float64  // reference geometry (n)
	EnergyHartree float64    // at the reference geometry
	GradientAU    []float64  // at the reference geometry (n, Eh/bohr)
	DipoleAU      [3]float64 // at the reference geometry (e·bohr)
	// HessianAU is ∂²E/∂x_i∂x_j (n×n, Eh/bohr²), symmetrized.
	HessianAU []float64
	// AsymmetryAU is the largest |H_ij − H_ji| before symmetrization, a
	// measure of the numerical noise.
	AsymmetryAU float64
	// DipoleDerivAU is ∂μ_k/∂x_i (n×3, e), the atomic polar tensors about
	// a fixed origin; nil without HessianOptions.Dipole.
	DipoleDerivAU []float64
	StepBohr      float64
	FourPoint     bool
	// SymmetryOperations is the order of the point group used (1: none);
	// SymmetryShiftBohr is the largest distance an atom of the input
	// geometry moved to make it exactly symmetric (CoordsBohr is the
	// symmetrized geometry).
	SymmetryOperations int
	SymmetryShiftBohr  float64
	// Displacements is the number of displaced points evaluated (fewer
	// than 6N with symmetry); Computed of them
	// were evaluated by this call and Reused were read from the work
	// directory. Evaluations counts every surface evaluation of this call
	// (the reference, and when resuming a re-evaluation of its energy to
	// restore the warm start, and of saved points whose states a point
	// left to compute needs, with Extrapolate).
	Displacements, Computed, Reused, Evaluations int
	// SCFIterations are those of each displaced point evaluated, in the
	// order of the displacements (coordinate-major, steps +1, −1[, +2,
	// −2]); 0 for
	// surfaces without an SCF. ReferenceSCFIterations is that of the
	// reference point.
	SCFIterations          []int
	ReferenceSCFIterations int
	// ReferenceGapHartree is the HOMO–LUMO gap at the reference point (0
	// when the surface reports none).
	ReferenceGapHartree float64
}

// computePoint evaluates the point d of s (Coordinate −1: the reference) (gradient, and the dipole with
// dipole) and saves it in st. A displaced point starts from the surface's
// warm start (moved by start, if set) and keeps it; the reference replaces
// it. With keepState the point's electronic state is returned and saved
// beside it (before it, so that a saved point whose state a later point
// of its group needs always has it). x is scratch for the displaced
// geometry (nil: allocated).
func computePoint(ctx context.Context, s gradient.Surface, x0 []float64, step float64, d Displacement, dipole bool, threads int, x []float64, st *store,
	start *gradient.Extrapolation, keepState bool) (storedPoint, []byte, error) {
	req := gradient.Request{Gradient: true, Dipole: dipole, Threads: threads, Start: start, State: keepState}
	name := referenceName
	what := "reference point"
	if d.Coordinate >= 0 {
		if x == nil {
			x = make([]float64, len(x0))
		}
		copy(x, x0)
		x[d.Coordinate] += float64(d.Steps) * step
		x0 = x
		req.KeepWarmStart = true
		name = displacementName(d.Coordinate, d.Steps)
		what = fmt.Sprintf("displaced point (atom %d %c %+g bohr)", d.Coordinate/3+1, "xyz"[d.Coordinate%3], float64(d.Steps)*step)
	}
	var pt gradient.Point
	if err := s.Evaluate(ctx, x0, req, &pt); err != nil {
		return storedPoint{}, nil, fmt.Errorf("freq: %s: %w", what, err)
	}
	p := storedPoint{Coordinate: d.Coordinate, Steps: d.Steps, StepBohr: step, EnergyHartree: pt.EnergyHartree,
		Gradient: pt.Gradient, DipoleAU: pt.DipoleAU, SCFIterations: pt.SCFIterations, GapHartree: pt.GapHartree}
	if keepState && pt.State != nil {
		if err := st.saveState(name, pt.State); err != nil {
			return storedPoint{}, nil, err
		}
	}
	return p, pt.State, st.save(name, &p)
}

// A coordinate's displaced points form a group, evaluated one after the
// other in the order of the step list (+1, −1[, +2, −2]): with
// HessianOptions.Extrapolate each point after the first starts from the
// state of the nearest earlier one extrapolated to its own step
// (gradient.Extrapolation), the −h point from the +h point's with weight
// −1. The groups, not the points, are what run
// concurrently, and every point's start depends only on the points of its
// group, so the result depends neither on the order of the groups nor on
// the thread count; a plan task is a group for the same reason.

// groups splits jobs (coordinate-major, as newLayout lists them) into
// runs of one coordinate each: index ranges [start, end).
func groups(jobs []Displacement) [][2]int {
	var out [][2]int
	for j := 0; j < len(jobs); {
		e := j + 1
		for e < len(jobs) && jobs[e].Coordinate == jobs[j].Coordinate {
			e++
		}
		out = append(out, [2]int{j, e})
		j = e
	}
	return out
}

// groupPoint is the callback of computeGroup for every point it computes.
type groupPoint func(i int, p storedPoint)

// computeGroup evaluates the points of one coordinate's group g that are
// not done (done[i] false; done may be nil), in order, with extrapolate
// chaining their starting states, and saves each; it calls finished for
// every point it computes. The states of saved points that a later point
// needs are read from st; a saved point whose state is missing (a work
// directory written before states were kept, or a later point removed
// by hand) is evaluated again for it, from the same start as before, so
// that the later point starts as in an uninterrupted run; again counts
// those evaluations. State files are removed once the group is complete.
func computeGroup(ctx context.Context, s gradient.Surface, x0 []float64, step float64, dipole bool, threads int, x []float64, st *store,
	g []Displacement, done []bool, extrapolate bool, finished groupPoint) (again int, err error) {
	states := make(map[int][]byte, len(g))
	for i, d := range g {
		last := true // no later point of the group left to compute
		for k := i + 1; k < len(g) && extrapolate; k++ {
			if done == nil || !done[k] {
				last = false
			}
		}
		saved := done != nil && done[i]
		if saved && last {
			continue
		}
		if saved {
			if b := st.loadState(d.FileName()); b != nil {
				states[d.Steps] = b
				continue
			}
		}
		var start *gradient.Extrapolation
		best := 0
		for sp, b := range states {
			if best == 0 || abs(sp-d.Steps) < abs(best-d.Steps) || (abs(sp-d.Steps) == abs(best-d.Steps) && sp > best) {
				best = sp
				start = &gradient.Extrapolation{From: b, Weight: float64(d.Steps) / float64(sp)}
			}
		}
		if saved { // evaluated again for its state only; the saved point stays
			_, state, err := computePoint(ctx, s, x0, step, d, dipole, threads, x, &store{}, start, true)
			if err != nil {
				return again, err
			}
			again++
			if state != nil {
				states[d.Steps] = state
				if err := st.saveState(d.FileName(), state); err != nil {
					return again, err
				}
			}
			continue
		}
		p, state, err := computePoint(ctx, s, x0, step, d, dipole, threads, x, st, start, !last)
		if err != nil {
			return again, err
		}
		if state != nil {
			states[d.Steps] = state
		}
		finished(i, p)
	}
	if extrapolate {
		for _, d := range g {
			st.removeState(d.FileName())
		}
	}
	return again, nil
}

func (o *HessianOptions) stepList() []int {
	if o.FourPoint {
		return []int{1, -1, 2, -2}
	}
	return []int{1, -1}
}

// ComputeHessian computes the Hessian of s at x0 (3N coordinates, bohr) by
// finite differences of its analytic gradients, and with opt.Dipole the
// dipole derivatives from the same points.
//
// The reference point is evaluated first, normally (so that an SCF
// surface keeps its density as the warm start); then every displaced point
// with Request.KeepWarmStart, so that all start from the reference density
// and the result does not depend on their order or on the thread count.
// The rows are symmetrized, H ← (H + Hᵀ)/2.
//
// With opt.WorkDir every finished point is saved. A later call with the
// same geometry, step, formula and tag reloads them; if any displacement
// is left, the reference energy is evaluated once more to restore the
// surface's warm start. When ctx is cancelled the call returns ctx's error
// after the points in flight stop; those finished stay saved.
func ComputeHessian(ctx context.Context, s gradient.Surface, x0 []float64, opt HessianOptions) (*Hessian, error) {
	nat := s.NumAtoms()
	n := 3 * nat
	if opt.MassesU != nil && len(opt.MassesU) != nat {
		return nil, fmt.Errorf("freq: %d masses for %d atoms", len(opt.MassesU), nat)
	}
	threads := max(opt.Threads, 1)
	st, l, err := setup(nat, x0, &opt)
	if err != nil {
		return nil, err
	}
	step := l.step
	x0 = l.x
	// Temporary files of a run killed while writing a point.
	st.removeTemporaries()

	h := &Hessian{CoordsBohr: append([]float64(nil), x0...), StepBohr: step, FourPoint: opt.FourPoint,
		SymmetryOperations: len(l.sym.ops), SymmetryShiftBohr: l.sym.shiftBohr}
	evals := 0

	// The reference point.
	ref, haveRef := st.load(referenceName, n, step, -1, 0)
	if r := opt.Reference; !haveRef && r != nil && len(r.Gradient) == n && l.sym.shiftBohr <= 1e-10 {
		ref = storedPoint{Coordinate: -1, StepBohr: step, EnergyHartree: r.EnergyHartree, Gradient: append([]float64(nil), r.Gradient...),
			DipoleAU: r.DipoleAU, SCFIterations: r.SCFIterations, GapHartree: r.GapHartree}
		if err := st.save(referenceName, &ref); err != nil {
			return nil, err
		}
	} else if !haveRef {
		if ref, _, err = computePoint(ctx, s, x0, step, Displacement{Coordinate: -1}, opt.Dipole, threads, nil, st, nil, false); err != nil {
			return nil, err
		}
		evals++
	}
	h.EnergyHartree, h.GradientAU, h.DipoleAU = ref.EnergyHartree, ref.Gradient, ref.DipoleAU
	h.ReferenceSCFIterations = ref.SCFIterations
	h.ReferenceGapHartree = ref.GapHartree

	// The displaced points: reload what is saved.
	jobs := l.jobs
	h.Displacements = len(jobs)
	results := make([]storedPoint, len(jobs))
	var todo []int
	for j, d := range jobs {
		if p, ok := st.load(displacementName(d.Coordinate, d.Steps), n, step, d.Coordinate, d.Steps); ok {
			results[j] = p
			h.Reused++
			continue
		}
		todo = append(todo, j)
	}
	if opt.Progress != nil && h.Reused > 0 {
		opt.Progress(Progress{Done: h.Reused, Total: len(jobs), Reused: h.Reused})
	}
	if len(todo) > 0 && haveRef {
		// Restore the warm start the saved points were computed from.
		var pt gradient.Point
		if err := s.Evaluate(ctx, x0, gradient.Request{Threads: threads}, &pt); err != nil {
			return nil, fmt.Errorf("freq: reference point (restoring the warm start): %w", err)
		}
		evals++
	}
	n2, e2, err := runDisplacements(ctx, s, x0, step, opt, threads, jobs, todo, results, st, h.Reused)
	evals += e2
	h.Computed = n2
	h.Evaluations = evals
	if err != nil {
		return nil, err
	}
	h.SCFIterations = make([]int, len(jobs))
	for j := range jobs {
		h.SCFIterations[j] = results[j].SCFIterations
	}
	l.assemble(h, results, opt)
	return h, nil
}

// assemble fills the Hessian and the dipole derivatives of h from the
// evaluated points: finite differences for the coordinates of
// representative atoms, rotated blocks for the atoms equivalent to them.
func (l *layout) assemble(h *Hessian, results []storedPoint, opt HessianOptions) {
	nat := len(l.rep)
	n := 3 * nat
	step := l.step
	ns := len(l.steps)
	// raw[c·n + j] = ∂g_j/∂x_c; dip[3c + m] = ∂μ_m/∂x_c.
	raw := make([]float64, n*n)
	dip := make([]float64, 3*n)
	scratch := make([][]float64, ns)
	for t := range scratch {
		scratch[t] = make([]float64, n)
	}
	grads := make([][]float64, ns)
	dips := make([][3]float64, ns)
	for a := 0; a < nat && nat > 1; a++ {
		if l.rep[a].job != a || a == l.fromTranslation {
			continue
		}
		for c := 3 * a; c < 3*a+3; c++ {
			if slices.Contains(l.fromRotation, c) {
				continue
			}
			for t := 0; t < ns; t++ {
				grads[t], dips[t] = l.point(results, c, t, scratch[t])
			}
			// Steps +1, −1[, +2, −2].
			row, drow := raw[c*n:(c+1)*n], dip[3*c:3*c+3]
			if !opt.FourPoint {
				for k := range row {
					row[k] = (grads[0][k] - grads[1][k]) / (2 * step)
				}
				for m := range drow {
					drow[m] = (dips[0][m] - dips[1][m]) / (2 * step)
				}
				continue
			}
			for k := range row {
				row[k] = (8*(grads[0][k]-grads[1][k]) - (grads[2][k] - grads[3][k])) / (12 * step)
			}
			for m := range drow {
				drow[m] = (8*(dips[0][m]-dips[1][m]) - (dips[2][m] - dips[3][m])) / (12 * step)
			}
		}
	}
	// Atoms equivalent to a representative a by the operation (R, π),
	// then the atom that follows from translational invariance.
	// b = π(a): H_{π(i) b} = R H_{i a} Rᵀ, and the same for the dipole
	// derivatives.
	for b := 0; b < nat && nat > 1; b++ {
		src := l.rep[b]
		if src.job == b || b == l.fromTranslation {
			continue
		}
		a, o := src.job, &l.sym.ops[src.op]
		r := &o.r
		for i := 0; i < nat; i++ {
			pi := o.perm[i]
			var blk [3][3]float64 // blk[l][k] = H_{i a}[l][k] = raw[(3a+k)·n + 3i+l]
			for k := 0; k < 3; k++ {
				for m := 0; m < 3; m++ {
					blk[m][k] = raw[(3*a+k)*n+3*i+m]
				}
			}
			rot := rotateBlock(r, &blk)
			for k := 0; k < 3; k++ {
				for m := 0; m < 3; m++ {
					raw[(3*b+k)*n+3*pi+m] = rot[m][k]
				}
			}
		}
		var blk [3][3]float64 // blk[m][k] = ∂μ_m/∂x_{a,k}
		for k := 0; k < 3; k++ {
			for m := 0; m < 3; m++ {
				blk[m][k] = dip[3*(3*a+k)+m]
			}
		}
		rot := rotateBlock(r, &blk)
		for k := 0; k < 3; k++ {
			for m := 0; m < 3; m++ {
				dip[3*(3*b+k)+m] = rot[m][k]
			}
		}
	}
	if l.fromRotation != nil {
		l.rotationRows(raw, dip, h.GradientAU, h.DipoleAU)
	}
	if d := l.fromTranslation; d >= 0 {
		for k := 0; k < 3; k++ {
			row, drow := raw[(3*d+k)*n:(3*d+k+1)*n], dip[3*(3*d+k):3*(3*d+k)+3]
			clear(row)
			clear(drow)
			for b := 0; b < nat; b++ {
				if b == d {
					continue
				}
				c := 3*b + k
				for j := range row {
					row[j] -= raw[c*n+j]
				}
				for m := range drow {
					drow[m] -= dip[3*c+m]
				}
			}
		}
	}
	h.HessianAU = make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			h.AsymmetryAU = math.Max(h.AsymmetryAU, math.Abs(raw[i*n+j]-raw[j*n+i]))
			h.HessianAU[i*n+j] = 0.5 * (raw[i*n+j] + raw[j*n+i])
		}
	}
	if !opt.Dipole {
		return
	}
	h.DipoleDerivAU = dip
	if opt.Charge != 0 && opt.MassesU != nil {
		total := 0.0
		for _, m := range opt.MassesU {
			total += m
		}
		for i := 0; i < n; i++ {
			h.DipoleDerivAU[3*i+i%3] += opt.Charge * opt.MassesU[i/3] / total
		}
	}
}

// rotationRows fills the rows of raw (∂g_j/∂x_c in row c) and dip
// (∂μ_m/∂x_c at 3c + m) of the coordinates l.fromRotation from the others,
// except those of the translation atom d, which follow afterwards: the
// rigid rotation about r_d and axis e_k gives, for every column j,
// Σ_c v_k[c] raw[c][j] = (e_k × g)_j with v_k[c] = (e_k × (r_b − r_d))_β
// (c = 3b + β; zero for b = d), and Σ_c v_k[c] dip[c][m] = (e_k × μ)_m for
// the dipole μ about the centre of mass (which a rotation about any point
// turns). grad and mu are the reference gradient and dipole.
func (l *layout) rotationRows(raw, dip []float64, grad []float64, mu [3]float64) {
	n := len(l.x)
	d := l.fromTranslation
	v := make([][3]float64, n) // v[c][k] = v_k[c]
	for c := range v {
		v[c] = rotationLever(l.x, d, c)
	}
	known := func(c int) bool { return c/3 != d && !slices.Contains(l.fromRotation, c) }
	// solve sets the derived rows' element at column j (stride: the row
	// length) of out from the right-hand sides rhs.
	solve := func(out []float64, stride, j int, rhs [3]float64) {
		for m, c := range l.fromRotation {
			s := 0.0
			for k := 0; k < 3; k++ {
				s += l.rotInv[m][k] * rhs[k]
			}
			out[c*stride+j] = s
		}
	}
	for j := 0; j < n; j++ {
		var g [3]float64
		copy(g[:], grad[3*(j/3):3*(j/3)+3])
		var rhs [3]float64
		for k := 0; k < 3; k++ {
			rhs[k] = crossUnit(k, g)[j%3]
		}
		for c := 0; c < n; c++ {
			if !known(c) {
				continue
			}
			r := raw[c*n+j]
			for k := 0; k < 3; k++ {
				rhs[k] -= v[c][k] * r
			}
		}
		solve(raw, n, j, rhs)
	}
	for m := 0; m < 3; m++ {
		var rhs [3]float64
		for k := 0; k < 3; k++ {
			rhs[k] = crossUnit(k, mu)[m]
		}
		for c := 0; c < n; c++ {
			if !known(c) {
				continue
			}
			r := dip[3*c+m]
			for k := 0; k < 3; k++ {
				rhs[k] -= v[c][k] * r
			}
		}
		solve(dip, 3, m, rhs)
	}
}

// rotateBlock returns R B Rᵀ.
func rotateBlock(r *[3][3]float64, b *[3][3]float64) [3][3]float64 {
	var t, out [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			for k := 0; k < 3; k++ {
				t[i][j] += r[i][k] * b[k][j]
			}
		}
	}
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			for k := 0; k < 3; k++ {
				out[i][j] += t[i][k] * r[j][k]
			}
		}
	}
	return out
}

// runDisplacements evaluates the displaced points listed in todo, a group
// of one coordinate at a time on each of k goroutines, and saves each as
// it finishes. It returns the number of points computed and of the
// surface's evaluations (more when saved points are evaluated again for
// their states).
func runDisplacements(ctx context.Context, s gradient.Surface, x0 []float64, step float64, opt HessianOptions,
	threads int, jobs []Displacement, todo []int, results []storedPoint, st *store, reused int) (computed, evaluations int, err error) {
	if len(todo) == 0 {
		return 0, 0, nil
	}
	pending := make([]bool, len(jobs))
	for _, j := range todo {
		pending[j] = true
	}
	var work [][2]int // the groups with a point to compute
	for _, g := range groups(jobs) {
		for j := g[0]; j < g[1]; j++ {
			if pending[j] {
				work = append(work, g)
				break
			}
		}
	}
	k := opt.Concurrent
	if k <= 0 {
		k = threads
	}
	k = min(k, len(work), threads)
	cctx, cancel := context.WithCancel(ctx)
	defer cancel()
	var (
		mu   sync.Mutex
		next int
		done = reused
		// evaluated counts the evaluations besides the computed points
		// (saved points evaluated again for their states).
		evaluated int
		firstErr  error
		wg        sync.WaitGroup
	)
	fail := func(err error) {
		mu.Lock()
		if firstErr == nil {
			firstErr = err
		}
		mu.Unlock()
		cancel()
	}
	for w := 0; w < k; w++ {
		share := threads / k
		if w < threads%k {
			share++
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			x := make([]float64, len(x0))
			for cctx.Err() == nil {
				mu.Lock()
				t := next
				next++
				mu.Unlock()
				if t >= len(work) {
					return
				}
				g := work[t]
				have := make([]bool, g[1]-g[0])
				for i := range have {
					have[i] = !pending[g[0]+i]
				}
				again, err := computeGroup(cctx, s, x0, step, opt.Dipole, share, x, st, jobs[g[0]:g[1]], have, opt.Extrapolate, func(i int, p storedPoint) {
					mu.Lock()
					results[g[0]+i] = p
					done++
					computed++
					if opt.Progress != nil {
						opt.Progress(Progress{Done: done, Total: len(jobs), Reused: reused, SCFIterations: p.SCFIterations})
					}
					mu.Unlock()
				})
				mu.Lock()
				evaluated += again
				mu.Unlock()
				if err != nil {
					if cctx.Err() == nil {
						fail(err)
					}
					return
				}
			}
		}()
	}
	wg.Wait()
	if firstErr != nil {
		return computed, computed + evaluated, firstErr
	}
	if err := ctx.Err(); err != nil {
		return computed, computed + evaluated, fmt.Errorf("freq: Hessian interrupted after %d of %d displaced points: %w", done, len(jobs), err)
	}
	return computed, computed + evaluated, nil
}
