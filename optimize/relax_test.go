package optimize

import (
	"context"
	"errors"
	"math"
	"testing"

	"poise/energy/units"
)

// TestModelMinima relaxes every model surface from a start distorted by
// ±20 % in bonds and ±15° in angles at the strict level and compares all
// interatomic distances with the known minimum: within 1e-5 Å. The
// Cartesian fallback (forced here) must reach the same minimum; its BFGS
// Hessian describes soft torsions less well, and the strict criteria leave
// it up to a few 1e-5 Å off along them, so it is held to 1e-4 Å.
func TestModelMinima(t *testing.T) {
	strict, _ := Convergence("strict")
	for _, mc := range modelCases() {
		for _, cart := range []bool{false, true} {
			name := mc.name
			if cart {
				name += "/cartesian"
			}
			t.Run(name, func(t *testing.T) {
				s := mc.surf()
				x0 := distort(mc.z, mc.ref, 0.2, 15)
				res, err := Relax(context.Background(), s, mc.z, x0, Options{Criteria: strict, MaxSteps: 200, Cartesian: cart})
				if err != nil {
					t.Fatalf("relax: %v", err)
				}
				worst := 0.0
				for i := 0; i < len(mc.z); i++ {
					for j := i + 1; j < len(mc.z); j++ {
						d := math.Abs(tdist(res.XBohr, i, j)-tdist(mc.ref, i, j)) * units.BohrAngstrom
						worst = math.Max(worst, d)
					}
				}
				t.Logf("%d steps, %d evaluations, energy %.3e, largest gradient %.1e, worst distance error %.1e Å, coordinates %s, rebuilds %d",
					res.Steps, res.Evaluations, res.EnergyHartree, res.MaxGradient, worst, res.Coordinates, res.Rebuilds)
				tol := 1e-5
				if cart {
					tol = 1e-4
				}
				if worst > tol {
					t.Errorf("largest interatomic distance error %.2e Å, want ≤ %g", worst, tol)
				}
			})
		}
	}
}

// TestStepLimit checks that a relaxation stopped by the step limit says so
// and returns its last geometry.
func TestStepLimit(t *testing.T) {
	mc := modelCases()[4]
	s := mc.surf()
	x0 := distort(mc.z, mc.ref, 0.2, 15)
	res, err := Relax(context.Background(), s, mc.z, x0, Options{MaxSteps: 2})
	if !errors.Is(err, ErrNotConverged) {
		t.Fatalf("error %v, want ErrNotConverged", err)
	}
	if res == nil || res.Converged || res.Steps != 2 || res.Evaluations != 3 {
		t.Fatalf("result %+v", res)
	}
}

// TestCancel checks that a cancelled context stops the relaxation.
func TestCancel(t *testing.T) {
	mc := modelCases()[4]
	ctx, cancel := context.WithCancel(context.Background())
	n := 0
	_, err := Relax(ctx, mc.surf(), mc.z, distort(mc.z, mc.ref, 0.2, 15), Options{Progress: func(Step) {
		n++
		if n == 2 {
			cancel()
		}
	}})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want context.Canceled", err)
	}
}
