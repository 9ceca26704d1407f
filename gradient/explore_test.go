package gradient

import (
	"context"
	"fmt"
	"math"
	"testing"
	"time"

	"poise/energy/basis"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/energy/xc"
)

func TestExplore(t *testing.T) {
	for _, c := range []struct{ atoms [][4]any; method, basis string; mult int; tol float64 }{
		{[][4]any{{"O", 0.0, 0.0, 0.1173}, {"H", 0.05, 0.75695, -0.4692}, {"H", 0.0, -0.7, -0.5}}, "hf", "sto-3g", 1, 1e-6},
		{[][4]any{{"O", 0.0, 0.0, 0.1173}, {"H", 0.05, 0.75695, -0.4692}, {"H", 0.0, -0.7, -0.5}}, "hf", "6-31g*", 1, 1e-6},
		{[][4]any{{"O", 0.0, 0.0, 0.0}, {"H", 0.1, 0.05, 0.97}}, "hf", "3-21g", 2, 1e-6},
		{[][4]any{{"O", 0.0, 0.0, 0.1173}, {"H", 0.05, 0.75695, -0.4692}, {"H", 0.0, -0.7, -0.5}}, "b3lyp", "3-21g", 1, 1e-5},
		{[][4]any{{"O", 0.0, 0.0, 0.0}, {"H", 0.1, 0.05, 0.97}}, "b3lyp", "cc-pvdz", 2, 1e-5},
	} {
		m := &molecule.Molecule{}
		for _, a := range c.atoms {
			z, _ := molecule.ElementBySymbol(a[0].(string))
			m.Atoms = append(m.Atoms, molecule.Atom{Z: z, Symbol: a[0].(string), Mass: molecule.MostAbundantMass(z),
				Position: [3]float64{a[1].(float64) * units.AngstromBohr, a[2].(float64) * units.AngstromBohr, a[3].(float64) * units.AngstromBohr}})
		}
		if err := m.SetSpin(0, c.mult); err != nil { t.Fatal(err) }
		set, _ := basis.Load(c.basis)
		fn, _ := xc.Lookup(c.method)
		for _, gt := range []float64{1e-7, 1e-9} {
		s, err := NewSCFSurface(m, Config{Basis: set, Method: fn, SCF: scf.Options{Threads: 2, GradientTolerance: gt}})
		if err != nil { t.Fatal(err) }
		x := Coordinates(m)
		var p Point
		t0 := time.Now()
		if err := s.Evaluate(context.Background(), x, Request{Gradient: true}, &p); err != nil { t.Fatal(err) }
		t1 := time.Now()
		g := make([]float64, len(x))
		if err := Numeric(context.Background(), s, x, 0, 2, g); err != nil { t.Fatal(err) }
		t2 := time.Now()
		maxd := 0.0
		var sum [3]float64
		for i := range g { maxd = math.Max(maxd, math.Abs(g[i]-p.Gradient[i])); sum[i%3] += p.Gradient[i] }
		fmt.Printf("%s/%s mult %d gtol %g: max|an-num| %.2e  sum %.1e %.1e %.1e  analytic %v numeric %v  evals %d\n", c.method, c.basis, c.mult, gt, maxd, sum[0], sum[1], sum[2], t1.Sub(t0), t2.Sub(t1), s.Evaluations())
		}
	}
}
