package optimize

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"poise/energy/units"
	"poise/gradient"
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

// TestLinearStart starts the linear model exactly linear, with unequal
// stretched bonds: the bends carry no gradient and must stay linear.
func TestLinearStart(t *testing.T) {
	mc := modelCases()[3]
	_, x0 := build([]zrow{{z: 8}, {z: 6, a: 0, r: 1.30}, {z: 8, a: 1, r: 1.05, b: 0, theta: 180}})
	strict, _ := Convergence("strict")
	for _, cart := range []bool{false, true} {
		res, err := Relax(context.Background(), mc.surf(), mc.z, x0, Options{Criteria: strict, Cartesian: cart})
		if err != nil {
			t.Fatalf("cartesian %v: %v", cart, err)
		}
		for i := 0; i < 3; i++ {
			for j := i + 1; j < 3; j++ {
				if d := math.Abs(tdist(res.XBohr, i, j)-tdist(mc.ref, i, j)) * units.BohrAngstrom; d > 1e-5 {
					t.Errorf("cartesian %v: distance %d–%d off by %.2e Å", cart, i+1, j+1, d)
				}
			}
		}
	}
}

// failingSurface fails the evaluations whose numbers are listed (counting
// from 1), as an SCF that does not converge would.
type failingSurface struct {
	*modelSurface
	fail  map[int]bool
	calls int
}

func (f *failingSurface) Evaluate(ctx context.Context, x []float64, req gradient.Request, out *gradient.Point) error {
	f.calls++
	if f.fail[f.calls] {
		return errors.New("model: no convergence")
	}
	return f.modelSurface.Evaluate(ctx, x, req, out)
}

// TestEvaluationFailures: a failed evaluation is retried with a shorter
// step; three in a row end the relaxation with the last good geometry.
func TestEvaluationFailures(t *testing.T) {
	mc := modelCases()[0]
	x0 := distort(mc.z, mc.ref, 0.2, 15)
	s := &failingSurface{modelSurface: mc.surf(), fail: map[int]bool{2: true, 3: true}}
	res, err := Relax(context.Background(), s, mc.z, x0, Options{})
	if err != nil || !res.Converged {
		t.Fatalf("two failures: result %+v, error %v", res, err)
	}
	s = &failingSurface{modelSurface: mc.surf(), fail: map[int]bool{2: true, 3: true, 4: true}}
	res, err = Relax(context.Background(), s, mc.z, x0, Options{})
	if err == nil || !strings.Contains(err.Error(), "no convergence") {
		t.Fatalf("three failures: error %v", err)
	}
	if res == nil || res.Converged || res.Steps != 3 {
		t.Fatalf("three failures: result %+v", res)
	}
	for i := range x0 {
		if res.XBohr[i] != x0[i] {
			t.Fatal("the result is not the last good geometry")
		}
	}
}

// TestInitialHessianCarriesOver relaxes each model surface once, then
// restarts from a new distortion with the first relaxation's updated
// Hessian: the carried Hessian describes the surface better than the
// model Hessian, so the second relaxation needs no more steps in total
// over the cases (quasi-Newton practice), and each still reaches the
// minimum.
func TestInitialHessianCarriesOver(t *testing.T) {
	report, _ := Convergence("report")
	var plain, carried int
	for _, mc := range modelCases() {
		first, err := Relax(context.Background(), mc.surf(), mc.z, distort(mc.z, mc.ref, 0.2, 15), Options{Criteria: report, MaxSteps: 200})
		if err != nil || first.Hessian == nil {
			t.Fatalf("%s: first relaxation: %v (Hessian %v)", mc.name, err, first != nil && first.Hessian != nil)
		}
		x1 := distort(mc.z, mc.ref, 0.05, 5)
		a, err := Relax(context.Background(), mc.surf(), mc.z, x1, Options{Criteria: report, MaxSteps: 200})
		if err != nil {
			t.Fatal(err)
		}
		b, err := Relax(context.Background(), mc.surf(), mc.z, x1, Options{Criteria: report, MaxSteps: 200, InitialHessian: first.Hessian})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: %d steps with the model Hessian, %d with the carried one", mc.name, a.Steps, b.Steps)
		plain += a.Steps
		carried += b.Steps
	}
	if carried > plain {
		t.Errorf("carried Hessians took %d steps in all, the model Hessian %d", carried, plain)
	}
}
