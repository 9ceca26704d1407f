package settle

import (
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"poise/energy/molecule"
	"poise/gradient"
)

// stopping wraps the surfaces Run builds and cancels the run's context once
// a given number of evaluations has been started (−1: never).
type stopping struct {
	counting
	mu     sync.Mutex
	n      int
	stopAt int
	cancel context.CancelFunc
}

type stoppingSurface struct {
	gradient.Surface
	s *stopping
}

func (w stoppingSurface) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	w.s.mu.Lock()
	w.s.n++
	if w.s.n == w.s.stopAt {
		w.s.cancel()
	}
	w.s.mu.Unlock()
	if err := ctx.Err(); err != nil {
		return err
	}
	return w.Surface.Evaluate(ctx, x, req, out)
}

func (s *stopping) factory(mol *molecule.Molecule, l Level) (gradient.Surface, error) {
	inner, err := s.counting.factory(mol, l)
	if err != nil {
		return nil, err
	}
	return stoppingSurface{inner, s}, nil
}

// A settle run (planar NH3 at HF/STO-3G: relaxation, Hessian, displacement,
// second relaxation, second Hessian) stopped again and again at different
// stages continues each time from its work directory and ends with the
// result of an uninterrupted run; finished relaxations and displaced points
// are not computed again.
func TestSettleResumesFromWorkDir(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations and Hessians")
	}
	mol := parse(t, planarNH3)
	lvl := hfLevel(t, "sto-3g")
	opts := DefaultOptions()
	opts.ProgramVersion = "test"
	var plain counting
	opts.NewSurface = plain.factory
	want, err := Run(context.Background(), mol, lvl, opts)
	if err != nil {
		t.Fatal(err)
	}
	total := plain.evaluations()
	if want.Summary.Cycles < 1 {
		t.Fatalf("the uninterrupted run made no displacement cycle; the test needs one")
	}

	opts.WorkDir = filepath.Join(t.TempDir(), "work")
	var lines []string
	opts.Log = func(l string) { lines = append(lines, l) }
	evals, stops := 0, 0
	var got *Result
	// Stop after 5 evaluations, then after 9 more, and so on.
	for k := 0; k < 50 && got == nil; k++ {
		ctx, cancel := context.WithCancel(context.Background())
		st := &stopping{stopAt: 5 + 4*k, cancel: cancel}
		opts.NewSurface = st.factory
		res, err := Run(ctx, mol, lvl, opts)
		cancel()
		evals += st.evaluations()
		switch {
		case err == nil:
			got = res
		case errors.Is(err, context.Canceled):
			stops++
		default:
			t.Fatal(err)
		}
	}
	if got == nil {
		t.Fatal("never finished")
	}
	if stops < 3 {
		t.Errorf("only %d interruptions; the test wants several stages hit", stops)
	}
	if got.Summary.Verdict != VerdictMinimum || got.Summary.Cycles != want.Summary.Cycles {
		t.Errorf("resumed: verdict %s after %d cycles; uninterrupted %s after %d", got.Summary.Verdict, got.Summary.Cycles, want.Summary.Verdict, want.Summary.Cycles)
	}
	// A resumed relaxation restarts its quasi-Newton update from the model
	// Hessian, so it reaches the same minimum by another path: equal
	// within the strict criteria (energies to 1e-7 Eh, wavenumbers to
	// 1 cm⁻¹).
	if d := math.Abs(got.Summary.EnergyHartree - want.Summary.EnergyHartree); d > 1e-7 {
		t.Errorf("energy %.10f after interruptions, %.10f uninterrupted", got.Summary.EnergyHartree, want.Summary.EnergyHartree)
	}
	for i, w := range want.Summary.FrequenciesCm1 {
		if d := math.Abs(got.Summary.FrequenciesCm1[i] - w); d > 1 {
			t.Errorf("mode %d: %.2f cm⁻¹ after interruptions, %.2f uninterrupted", i+1, got.Summary.FrequenciesCm1[i], w)
		}
	}
	// Each interruption costs at most the evaluation in flight, a
	// relaxation restart (a few steps) and one reference energy to restore
	// a Hessian's warm start; finished work is never redone.
	if evals > total+6*stops {
		t.Errorf("%d evaluations over %d interrupted runs, %d uninterrupted: finished work was redone", evals, stops, total)
	}
	t.Logf("%d interruptions, %d evaluations in all, %d uninterrupted", stops, evals, total)
	resumedStage := false
	for _, l := range lines {
		if strings.Contains(l, "finished by an earlier run") {
			resumedStage = true
		}
	}
	if !resumedStage {
		t.Errorf("no relaxation was taken from the work directory:\n%s", strings.Join(lines, "\n"))
	}
	if err := RemoveWork(opts.WorkDir); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(opts.WorkDir); !os.IsNotExist(err) {
		t.Errorf("work directory left after RemoveWork: %v", err)
	}
}
