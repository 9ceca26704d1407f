package freq

import (
	"context"
	"encoding/binary"
	"errors"
	"math"
	"os"
	"path/filepath"
	"sync"
	"testing"

	"poise/gradient"
)

// stateModel is the pair model with an electronic "state" that is the
// geometry itself: a linear function of the coordinates, so that a start
// extrapolated with the right point and weight equals the coordinates of
// the point it starts, to rounding. It records, per displaced point, how
// far its start was from its own coordinates (+Inf: no extrapolated
// start).
type stateModel struct {
	*pairModel
	mu    sync.Mutex
	warm  []float64
	miss  map[Displacement]float64
	x0    []float64
	steps float64
}

func newStateModel(step float64) (*stateModel, []float64) {
	p, x := waterModel()
	return &stateModel{pairModel: p, miss: map[Displacement]float64{}, x0: x, steps: step}, x
}

func encodeCoords(x []float64) []byte {
	b := make([]byte, 8*len(x))
	for i, v := range x {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(v))
	}
	return b
}

func decodeCoords(b []byte) []float64 {
	x := make([]float64, len(b)/8)
	for i := range x {
		x[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
	}
	return x
}

func (m *stateModel) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	m.mu.Lock()
	warm := m.warm
	m.mu.Unlock()
	miss := math.Inf(1)
	if req.Start != nil && warm != nil {
		from := decodeCoords(req.Start.From)
		miss = 0
		for i := range x {
			miss = math.Max(miss, math.Abs(warm[i]+req.Start.Weight*(from[i]-warm[i])-x[i]))
		}
	}
	if err := m.pairModel.Evaluate(ctx, x, req, out); err != nil {
		return err
	}
	if req.State {
		out.State = encodeCoords(x)
	}
	m.mu.Lock()
	defer m.mu.Unlock()
	if !req.KeepWarmStart {
		m.warm = append([]float64(nil), x...)
		return nil
	}
	for c := range x {
		if d := x[c] - m.x0[c]; d != 0 {
			m.miss[Displacement{Coordinate: c, Steps: int(math.Round(d / m.steps))}] = miss
		}
	}
	return nil
}

// Every point after the first of its coordinate starts from the right
// extrapolation (−h from +h with weight −1; ±2h from ±h with weight 2),
// the first from the warm start; without Extrapolate none does; and the
// Hessian is that of the plain calculation, bit for bit (the model's
// gradient does not depend on its start).
func TestExtrapolatedStarts(t *testing.T) {
	for _, four := range []bool{false, true} {
		plainModel, x := waterModel()
		plain, err := ComputeHessian(context.Background(), plainModel, x, HessianOptions{Dipole: true, Threads: 2, FourPoint: four})
		if err != nil {
			t.Fatal(err)
		}
		for _, extrapolate := range []bool{false, true} {
			m, _ := newStateModel(DefaultStepBohr)
			h, err := ComputeHessian(context.Background(), m, x, HessianOptions{Dipole: true, Threads: 2, FourPoint: four, Extrapolate: extrapolate})
			if err != nil {
				t.Fatal(err)
			}
			checkStarts(t, m, len(x), four, extrapolate)
			for i := range plain.HessianAU {
				if h.HessianAU[i] != plain.HessianAU[i] {
					t.Fatalf("four-point %v, extrapolate %v: Hessian differs at %d", four, extrapolate, i)
				}
			}
		}
	}
}

// checkStarts checks the start of every displaced point of m.
func checkStarts(t *testing.T, m *stateModel, n int, four, extrapolate bool) {
	t.Helper()
	steps := []int{1, -1}
	if four {
		steps = []int{1, -1, 2, -2}
	}
	for c := 0; c < n; c++ {
		for _, s := range steps {
			miss, ok := m.miss[Displacement{c, s}]
			switch {
			case !ok:
				t.Errorf("point %d %+d not evaluated", c, s)
			case s == 1 || !extrapolate:
				if !math.IsInf(miss, 1) {
					t.Errorf("extrapolate %v: point %d %+d started from an extrapolation", extrapolate, c, s)
				}
			case miss > 1e-12:
				t.Errorf("point %d %+d: extrapolated start %.2e bohr from its geometry", c, s, miss)
			}
		}
	}
}

// An interrupted Hessian resumes with the same extrapolated starts: the
// state of a saved +h point whose −h point is left is kept beside it, and
// removed once the coordinate is done. A piecewise run (one process per
// coordinate, a killed one taken up again) starts the same way.
func TestExtrapolatedResume(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "work")
	m, x := newStateModel(DefaultStepBohr)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	const stopAt = 4 // the reference, coordinate 0 (±h) and coordinate 1's +h
	m.after = func(n int64) {
		if n == stopAt {
			cancel()
		}
	}
	opt := HessianOptions{Dipole: true, Threads: 1, WorkDir: dir, Tag: "model", Extrapolate: true}
	if _, err := ComputeHessian(ctx, m, x, opt); !errors.Is(err, context.Canceled) {
		t.Fatalf("interrupted run: error %v, want context.Canceled", err)
	}
	states, _ := filepath.Glob(filepath.Join(dir, "*"+stateSuffix))
	if len(states) != 1 || filepath.Base(states[0]) != stateName(displacementName(1, 1)) {
		t.Fatalf("state files after the interruption: %v, want coordinate 1's +h only", states)
	}
	m2, _ := newStateModel(DefaultStepBohr)
	h, err := ComputeHessian(context.Background(), m2, x, opt)
	if err != nil {
		t.Fatal(err)
	}
	if h.Reused != stopAt-1 {
		t.Errorf("resumed: %d points reused, want %d", h.Reused, stopAt-1)
	}
	if miss, ok := m2.miss[Displacement{1, -1}]; !ok || miss > 1e-12 {
		t.Errorf("resumed −h point of coordinate 1: evaluated %v, start %.2e bohr off", ok, miss)
	}
	if states, _ := filepath.Glob(filepath.Join(dir, "*"+stateSuffix)); len(states) != 0 {
		t.Errorf("state files left after the Hessian: %v", states)
	}
	// A −h point removed by hand: its +h point is evaluated again for the
	// state it starts from (the reference once more for the warm start),
	// and the Hessian is the same.
	if err := os.Remove(filepath.Join(dir, displacementName(3, -1))); err != nil {
		t.Fatal(err)
	}
	m3, _ := newStateModel(DefaultStepBohr)
	h3, err := ComputeHessian(context.Background(), m3, x, opt)
	if err != nil {
		t.Fatal(err)
	}
	if h3.Computed != 1 || h3.Evaluations != 3 || m3.Evaluations() != 3 {
		t.Errorf("one −h point removed: %d computed (want 1), %d evaluations (want 3: reference, +h again, −h)", h3.Computed, h3.Evaluations)
	}
	if miss, ok := m3.miss[Displacement{3, -1}]; !ok || miss > 1e-12 {
		t.Errorf("recomputed −h point of coordinate 3: evaluated %v, start %.2e bohr off", ok, miss)
	}
	for i := range h.HessianAU {
		if h3.HessianAU[i] != h.HessianAU[i] {
			t.Fatalf("Hessian after recomputing a point differs at %d", i)
		}
	}

	// Piecewise: every coordinate in its own process; the one of
	// coordinate 2 is killed after its +h point and run again.
	pdir := filepath.Join(t.TempDir(), "plan")
	popt := HessianOptions{Dipole: true, WorkDir: pdir, Tag: "model", Extrapolate: true}
	ref, _ := newStateModel(DefaultStepBohr)
	if _, err := ComputeReference(context.Background(), ref, x, popt); err != nil {
		t.Fatal(err)
	}
	pts, err := PlanPoints(len(x)/3, x, popt)
	if err != nil {
		t.Fatal(err)
	}
	for _, g := range pts.Groups {
		job, _ := newStateModel(DefaultStepBohr)
		job.warm = append([]float64(nil), x...) // the reference's warm start, as a plan restores it
		if g[0].Coordinate == 2 {
			kctx, kill := context.WithCancel(context.Background())
			job.after = func(int64) { kill() } // killed once its +h point is done
			if n, err := ComputeDisplacements(kctx, job, x, popt, g); !errors.Is(err, context.Canceled) || n != 1 {
				t.Fatalf("killed coordinate 2: %d computed, %v", n, err)
			}
			kill()
			if _, err := os.Stat(filepath.Join(pdir, stateName(g[0].FileName()))); err != nil {
				t.Errorf("killed task: the state of its +h point is not kept: %v", err)
			}
			job, _ = newStateModel(DefaultStepBohr)
			job.warm = append([]float64(nil), x...)
		}
		if _, err := ComputeDisplacements(context.Background(), job, x, popt, g); err != nil {
			t.Fatal(err)
		}
		for _, d := range g[1:] {
			if miss, ok := job.miss[d]; ok && miss > 1e-12 {
				t.Errorf("piecewise %v: start %.2e bohr off", d, miss)
			}
		}
		if g[0].Coordinate == 2 {
			if miss, ok := job.miss[g[1]]; !ok || miss > 1e-12 {
				t.Errorf("taken-up coordinate 2: −h evaluated %v, start %.2e bohr off", ok, miss)
			}
		}
	}
	if states, _ := filepath.Glob(filepath.Join(pdir, "*"+stateSuffix)); len(states) != 0 {
		t.Errorf("state files left after the pieces: %v", states)
	}
	whole, err := ComputeHessian(context.Background(), ref, x, popt)
	if err != nil {
		t.Fatal(err)
	}
	for i := range h.HessianAU {
		if whole.HessianAU[i] != h.HessianAU[i] {
			t.Fatalf("piecewise Hessian differs at %d", i)
		}
	}
}

// On an SCF surface the extrapolated starts change the Hessian only
// within the noise of the SCF convergence (SCFGradientTolerance) and save
// iterations at the −h points. B3LYP/STO-3G formaldehyde off its minimum
// (no symmetry used, every point computed): the Hessians agree within the
// noise of gradients converged to SCFGradientTolerance, ε/h = 1e-8/0.0025
// = 4e-6 Eh/bohr², and the wavenumbers to 0.05 cm⁻¹, the agreement with
// the four-point formula that DefaultStepBohr was chosen for.
func TestExtrapolatedSCF(t *testing.T) {
	if testing.Short() {
		t.Skip("three SCF Hessians")
	}
	m := buildMolecule(t, []atomSpec{{"C", 0, 0, -0.53}, {"O", 0.02, 0, 0.68}, {"H", 0, 0.95, -1.12}, {"H", 0.03, -0.93, -1.10}})
	x := gradient.Coordinates(m)
	hessian := func(extrapolate bool) *Hessian {
		s := scfSurface(t, m, "b3lyp", "sto-3g", 2)
		h, err := ComputeHessian(context.Background(), s, x, HessianOptions{Threads: 2, Dipole: true, Extrapolate: extrapolate})
		if err != nil {
			t.Fatal(err)
		}
		return h
	}
	plain, fast := hessian(false), hessian(true)
	worst := 0.0
	for i := range plain.HessianAU {
		worst = math.Max(worst, math.Abs(fast.HessianAU[i]-plain.HessianAU[i]))
	}
	its := func(h *Hessian) (p, m int) {
		for j, n := range h.SCFIterations {
			if j%2 == 0 {
				p += n
			} else {
				m += n
			}
		}
		return p, m
	}
	pp, pm := its(plain)
	fp, fm := its(fast)
	t.Logf("max |ΔH| %.2e Eh/bohr²; SCF iterations +h/−h: %d/%d from the reference, %d/%d extrapolated", worst, pp, pm, fp, fm)
	if worst > 4e-6 {
		t.Errorf("extrapolated starts change the Hessian by %.2e Eh/bohr², want ≤ 4e-6", worst)
	}
	if fp != pp || fm >= pm {
		t.Errorf("SCF iterations +h/−h: %d/%d extrapolated, %d/%d from the reference: want the same +h and fewer −h", fp, fm, pp, pm)
	}
	sys := System{Z: zOf(m), MassesU: massesOf(m), CoordsBohr: x}
	var w [2][]float64
	for k, h := range []*Hessian{plain, fast} {
		sys.HessianAU = h.HessianAU
		a, err := Analyze(sys)
		if err != nil {
			t.Fatal(err)
		}
		w[k] = wavenumbers(a)
	}
	for i := range w[0] {
		if d := math.Abs(w[1][i] - w[0][i]); d > 0.05 {
			t.Errorf("mode %d: %.3f cm⁻¹ extrapolated, %.3f from the reference", i+1, w[1][i], w[0][i])
		}
	}
}
