package freq

import (
	"context"
	"testing"

	"poise/energy/basis"
	"poise/energy/scf"
	"poise/energy/xc"
	"poise/gradient"
)

func TestZZRigid(t *testing.T) {
	m := buildMolecule(t, waterStart)
	_, _, x := relaxedModes(t, m, "b3lyp", "6-31g*", "hf", "3-21g")
	set, _ := basis.Load("6-31g*")
	fn, _ := xc.Lookup("b3lyp")
	for _, gt := range []float64{1e-7} {
		for _, c := range []struct{ step float64; four bool }{{0.0025, false}, {0.002, false}, {0.001, false}, {0.005, true}} {
			s, _ := gradient.NewSCFSurface(m, gradient.Config{Basis: set, Method: fn, SCF: scf.Options{Threads: 2, GradientTolerance: gt}})
			h, err := ComputeHessian(context.Background(), s, x, HessianOptions{Threads: 2, StepBohr: c.step, FourPoint: c.four})
			if err != nil {
				t.Fatal(err)
			}
			a, _ := Analyze(System{MassesU: massesOf(m), CoordsBohr: x, HessianAU: h.HessianAU})
			t.Logf("gtol %g step %g four %v: %.3f  rigid %.3f asym %.1e", gt, c.step, c.four, wavenumbers(a), a.RigidBodyCm1, h.AsymmetryAU)
		}
	}
}
