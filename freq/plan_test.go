package freq

import (
	"context"
	"os"
	"path/filepath"
	"testing"
)

// A Hessian computed piecewise (reference, then each displaced point as an
// independent job in reverse order, one of them twice) assembles without
// a further evaluation into exactly the Hessian of one ordinary run.
func TestPiecewiseHessian(t *testing.T) {
	for _, four := range []bool{false, true} {
		p, x := waterModel()
		full, err := ComputeHessian(context.Background(), p, x, HessianOptions{Dipole: true, Threads: 1, FourPoint: four})
		if err != nil {
			t.Fatal(err)
		}
		dir := filepath.Join(t.TempDir(), "work")
		opt := HessianOptions{Dipole: true, Threads: 1, FourPoint: four, WorkDir: dir, Tag: "model"}
		ref, _ := waterModel()
		if done, err := ComputeReference(context.Background(), ref, x, opt); err != nil || !done {
			t.Fatalf("reference: computed %v, %v", done, err)
		}
		if done, err := ComputeReference(context.Background(), ref, x, opt); err != nil || done {
			t.Fatalf("reference again: computed %v (want false), %v", done, err)
		}
		pts, err := PlanPoints(len(x)/3, x, opt)
		if err != nil {
			t.Fatal(err)
		}
		disp := pts.Displacements
		if want := len(x) * 2; four && len(disp) != 2*want || !four && len(disp) != want {
			t.Fatalf("%d displacements", len(disp))
		}
		have, missing, err := SavedPoints(len(x)/3, x, opt)
		if err != nil || !have || len(missing) != len(disp) {
			t.Fatalf("before the tasks: reference %v, %d missing (want %d), %v", have, len(missing), len(disp), err)
		}
		// A file left by a killed attempt at the last point.
		stale := filepath.Join(dir, ".tmp-"+disp[len(disp)-1].FileName()+"-123")
		if err := os.WriteFile(stale, []byte("{"), 0o644); err != nil {
			t.Fatal(err)
		}
		if len(pts.Groups) != len(x) {
			t.Fatalf("%d groups for %d coordinates", len(pts.Groups), len(x))
		}
		for k := len(pts.Groups) - 1; k >= 0; k-- {
			g := pts.Groups[k]
			job, _ := waterModel() // a fresh process per task
			if n, err := ComputeDisplacements(context.Background(), job, x, opt, g); err != nil || n != len(g) {
				t.Fatalf("%v: computed %d, %v", g, n, err)
			}
		}
		again, _ := waterModel()
		if n, err := ComputeDisplacements(context.Background(), again, x, opt, pts.Groups[1]); err != nil || n != 0 || again.Evaluations() != 0 {
			t.Fatalf("a finished task run again: computed %d, %d evaluations, %v", n, again.Evaluations(), err)
		}
		if _, err := os.Stat(stale); !os.IsNotExist(err) {
			t.Errorf("temporary file of a killed attempt not removed: %v", err)
		}
		if _, missing, _ := SavedPoints(len(x)/3, x, opt); len(missing) != 0 {
			t.Fatalf("after the tasks: %d missing", len(missing))
		}
		asm, _ := waterModel()
		h, err := ComputeHessian(context.Background(), asm, x, opt)
		if err != nil {
			t.Fatal(err)
		}
		if asm.Evaluations() != 0 || h.Reused != len(disp) {
			t.Errorf("assembling: %d evaluations (want 0), %d reused", asm.Evaluations(), h.Reused)
		}
		for i := range full.HessianAU {
			if h.HessianAU[i] != full.HessianAU[i] {
				t.Fatalf("four-point %v: piecewise Hessian differs at %d: %g vs %g", four, i, h.HessianAU[i], full.HessianAU[i])
			}
		}
		for i := range full.DipoleDerivAU {
			if h.DipoleDerivAU[i] != full.DipoleDerivAU[i] {
				t.Fatalf("four-point %v: piecewise dipole derivatives differ at %d", four, i)
			}
		}
	}
	// A point that is not part of the Hessian is refused.
	p, x := waterModel()
	opt := HessianOptions{WorkDir: t.TempDir()}
	for _, g := range [][]Displacement{{{-1, 1}}, {{len(x), 1}}, {{0, 0}}, {{0, 2}}, {{0, 3}}, {{0, 1}, {1, -1}}, {{0, 1}, {0, 1}}} {
		if _, err := ComputeDisplacements(context.Background(), p, x, opt, g); err == nil {
			t.Errorf("%+v accepted", g)
		}
	}
}
