package optimize

import (
	"context"
	"math"
	"testing"
	"time"

	"poise/energy/units"
	"poise/gradient"
)

// TestRobustnessSet relaxes twelve molecules at HF/STO-3G (linear, rings,
// floppy chains) from starts distorted by ±20 % in bonds and ±15° in
// angles, at the "report" level. Each must converge; the gradient at the
// result, evaluated afresh, must meet the criterion; published minima are
// compared where listed. gonum's general-purpose BFGS (Cartesian
// coordinates, its default line search) relaxes the same starts on the same
// surfaces until the largest gradient component is below the same
// threshold — poise must need at most half its evaluations on average,
// over these molecules and the model surfaces (poise with all five
// criteria, gonum with the gradient criterion alone).
func TestRobustnessSet(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations")
	}
	crit, _ := Convergence("report")
	var ratios []float64
	totalP, totalG := 0, 0
	compare := func(name string, nPoise int, s gradient.Surface, x0 []float64) {
		ng, _, err := gonumBFGS(s, x0, crit.MaxGradient, 3000)
		if err != nil {
			t.Errorf("%s: gonum BFGS: %v", name, err)
			return
		}
		ratios = append(ratios, float64(nPoise)/float64(ng))
		totalP += nPoise
		totalG += ng
		t.Logf("%-22s poise %3d  gonum BFGS %3d  ratio %.2f", name, nPoise, ng, float64(nPoise)/float64(ng))
	}
	for _, mc := range modelCases() {
		x0 := distort(mc.z, mc.ref, 0.2, 15)
		res, err := Relax(context.Background(), mc.surf(), mc.z, x0, Options{Criteria: crit})
		if err != nil {
			t.Fatalf("model %s: %v", mc.name, err)
		}
		compare("model "+mc.name, res.Evaluations, mc.surf(), x0)
	}
	for _, m := range robustnessSet() {
		x0 := distort(m.z, m.x, 0.2, 15)
		s := scfSurface(t, m.z, x0, "hf", "sto-3g")
		t0 := time.Now()
		res, err := Relax(context.Background(), s, m.z, x0, Options{Criteria: crit})
		if err != nil {
			t.Errorf("%s: %v", m.name, err)
			continue
		}
		wall := time.Since(t0)
		var p gradient.Point
		if err := s.Evaluate(context.Background(), res.XBohr, gradient.Request{Gradient: true}, &p); err != nil {
			t.Fatal(err)
		}
		if g := maxAbs(p.Gradient); g > crit.MaxGradient {
			t.Errorf("%s: largest gradient at the result %.2e Eh/bohr", m.name, g)
		}
		for _, c := range m.checks {
			if len(c.atoms) == 2 {
				r := tdist(res.XBohr, c.atoms[0], c.atoms[1]) * units.BohrAngstrom
				if math.Abs(r-c.value) > 0.002 {
					t.Errorf("%s: r(%d–%d) %.4f Å, published %.3f", m.name, c.atoms[0]+1, c.atoms[1]+1, r, c.value)
				}
			} else {
				a := tangle(res.XBohr, c.atoms[0], c.atoms[1], c.atoms[2]) * 180 / math.Pi
				if math.Abs(a-c.value) > 0.3 {
					t.Errorf("%s: angle %d–%d–%d %.2f°, published %.1f°", m.name, c.atoms[0]+1, c.atoms[1]+1, c.atoms[2]+1, a, c.value)
				}
			}
		}
		t.Logf("%-22s %2d steps, %2d evaluations, %s, rebuilds %d, energy %.8f, wall %v", m.name, res.Steps, res.Evaluations, res.Coordinates, res.Rebuilds, res.EnergyHartree, wall.Round(time.Millisecond))
		compare(m.name, res.Evaluations, scfSurface(t, m.z, x0, "hf", "sto-3g"), x0)
	}
	mean := 0.0
	for _, r := range ratios {
		mean += r
	}
	mean /= float64(len(ratios))
	t.Logf("mean ratio %.2f over %d cases; total evaluations %d (poise) and %d (gonum BFGS)", mean, len(ratios), totalP, totalG)
	if mean > 0.5 {
		t.Errorf("poise needs %.2f of gonum BFGS's evaluations on average, want at most 0.5", mean)
	}
}
