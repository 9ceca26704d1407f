package freq

import (
	"context"
	"math"
	"testing"

	"poise/gradient"
	"poise/optimize"
)

func TestZZOpt(t *testing.T) {
	for _, spec := range [][]atomSpec{waterStart} {
		m := buildMolecule(t, spec)
		s := scfSurface(t, m, "hf", "sto-3g", 2)
		crit, _ := optimize.Convergence("strict")
		r, err := optimize.Relax(context.Background(), s, zOf(m), gradient.Coordinates(m), optimize.Options{Criteria: crit})
		if err != nil {
			t.Fatal(err)
		}
		gn, _ := InternalGradientNorm(r.XBohr, r.GradientHartreeBohr)
		h, _ := ComputeHessian(context.Background(), s, r.XBohr, HessianOptions{Threads: 2})
		a, _ := Analyze(System{MassesU: massesOf(m), CoordsBohr: r.XBohr, HessianAU: h.HessianAU})
		x := relax(t, s, r.XBohr, h.HessianAU)
		h2, _ := ComputeHessian(context.Background(), s, x, HessianOptions{Threads: 2})
		a2, _ := Analyze(System{MassesU: massesOf(m), CoordsBohr: x, HessianAU: h2.HessianAU})
		var pt gradient.Point
		s.Evaluate(context.Background(), x, gradient.Request{Gradient: true}, &pt)
		gn2, _ := InternalGradientNorm(x, pt.Gradient)
		_ = math.Abs
		t.Logf("optimize strict: steps %d grad norm %.1e: %.3f rigid %.3f", r.Steps, gn, wavenumbers(a), a.RigidBodyCm1)
		t.Logf("test relax:      grad norm %.1e: %.3f rigid %.3f", gn2, wavenumbers(a2), a2.RigidBodyCm1)
	}
}
