package freq

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"poise/gradient"
)

// The Hessian can also be computed piecewise, for a batch system that runs
// every displaced point as an independent job: ComputeReference evaluates
// and saves the undisplaced point, ComputeDisplacement one displaced point
// each (anywhere, in any order, from the reference's warm start), and
// ComputeHessian with the same options then finds every point saved and
// assembles the result without a single evaluation. The saved points are
// those of an ordinary run, so the piecewise result equals it.

// Displacement is one displaced point of a finite-difference Hessian:
// Cartesian coordinate Coordinate (from 0) moved by Steps times the step.
type Displacement struct {
	Coordinate int
	Steps      int
}

// Displacements lists the displaced points of a Hessian of nat atoms in the
// order ComputeHessian uses (coordinate-major; steps +1, −1[, +2, −2]). A
// single atom has none: its Hessian is zero (translations only).
func Displacements(nat int, fourPoint bool) []Displacement {
	if nat < 2 {
		return nil
	}
	o := HessianOptions{FourPoint: fourPoint}
	steps := o.stepList()
	out := make([]Displacement, 0, 3*nat*len(steps))
	for i := 0; i < 3*nat; i++ {
		for _, k := range steps {
			out = append(out, Displacement{Coordinate: i, Steps: k})
		}
	}
	return out
}

// FileName is the name of the point's file in the work directory.
func (d Displacement) FileName() string { return displacementName(d.Coordinate, d.Steps) }

// String describes the point, e.g. "atom 2 y +1 step(s)".
func (d Displacement) String() string {
	return fmt.Sprintf("atom %d %c %+d step(s)", d.Coordinate/3+1, "xyz"[d.Coordinate%3], d.Steps)
}

// setup checks the geometry and step of a Hessian and opens its work
// directory (a store that keeps nothing when opt.WorkDir is empty). It
// returns the step in use.
func setup(nat int, x0 []float64, opt *HessianOptions) (*store, float64, error) {
	if nat < 1 {
		return nil, 0, errors.New("freq: no atoms")
	}
	if len(x0) != 3*nat {
		return nil, 0, fmt.Errorf("freq: %d coordinates for %d atoms", len(x0), nat)
	}
	for i, v := range x0 {
		if !finite(v) {
			return nil, 0, fmt.Errorf("freq: coordinate %d is %v", i+1, v)
		}
	}
	step := opt.StepBohr
	if step == 0 {
		step = DefaultStepBohr
	}
	if !(step > 0) || step > maxStepBohr {
		return nil, 0, fmt.Errorf("freq: finite-difference step %g bohr outside (0, %g]", step, maxStepBohr)
	}
	man := &storeManifest{Format: storeFormat, Version: storeVersion, Tag: opt.Tag, NumAtoms: nat,
		CoordsBohr: append([]float64(nil), x0...), StepBohr: step, FourPoint: opt.FourPoint, Dipole: opt.Dipole}
	st, _, err := openStore(opt.WorkDir, man, opt.DiscardStale)
	return st, step, err
}

// pieceSetup is setup for a piecewise Hessian, which needs a work
// directory.
func pieceSetup(nat int, x0 []float64, opt *HessianOptions) (*store, float64, error) {
	if opt.WorkDir == "" {
		return nil, 0, errors.New("freq: a piecewise Hessian needs a work directory")
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
	st, step, err := pieceSetup(nat, x0, &opt)
	if err != nil {
		return false, err
	}
	if _, ok := st.load(referenceName, 3*nat, step, -1, 0); ok {
		return false, nil
	}
	_, err = computePoint(ctx, s, x0, step, Displacement{Coordinate: -1}, opt.Dipole, max(opt.Threads, 1), nil, st)
	return err == nil, err
}

// ComputeDisplacement evaluates one displaced point of s (from the
// surface's current warm start, which it keeps: the caller sets it to the
// reference's) and saves it in opt.WorkDir. A point already saved is not
// recomputed (computed is then false). Temporary files of an earlier,
// killed attempt at the same point are removed first.
func ComputeDisplacement(ctx context.Context, s gradient.Surface, x0 []float64, opt HessianOptions, d Displacement) (computed bool, err error) {
	nat := s.NumAtoms()
	st, step, err := pieceSetup(nat, x0, &opt)
	if err != nil {
		return false, err
	}
	if d.Coordinate < 0 || d.Coordinate >= 3*nat || d.Steps == 0 || abs(d.Steps) > 2 || (abs(d.Steps) == 2 && !opt.FourPoint) {
		return false, fmt.Errorf("freq: no displaced point %+v in this Hessian", d)
	}
	name := d.FileName()
	if _, ok := st.load(name, 3*nat, step, d.Coordinate, d.Steps); ok {
		return false, nil
	}
	if old, _ := filepath.Glob(filepath.Join(st.dir, ".tmp-"+name+"-*")); len(old) > 0 {
		for _, f := range old {
			os.Remove(f)
		}
	}
	_, err = computePoint(ctx, s, x0, step, d, opt.Dipole, max(opt.Threads, 1), nil, st)
	return err == nil, err
}

// SavedPoints reports which points of the Hessian described by opt (at x0,
// nat atoms) are saved in opt.WorkDir: whether the reference is, and the
// displaced points that are not (in the order of Displacements). The work
// directory must belong to this calculation.
func SavedPoints(nat int, x0 []float64, opt HessianOptions) (haveReference bool, missing []Displacement, err error) {
	st, step, err := pieceSetup(nat, x0, &opt)
	if err != nil {
		return false, nil, err
	}
	_, haveReference = st.load(referenceName, 3*nat, step, -1, 0)
	for _, d := range Displacements(nat, opt.FourPoint) {
		if _, ok := st.load(d.FileName(), 3*nat, step, d.Coordinate, d.Steps); !ok {
			missing = append(missing, d)
		}
	}
	return haveReference, missing, nil
}
