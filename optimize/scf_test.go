package optimize

import (
	"context"
	"math"
	"testing"

	"poise/energy/basis"
	"poise/energy/molecule"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/energy/xc"
	"poise/gradient"
)

// scfSurface is the SCF surface of the molecule z at x (bohr) at a level
// of theory, on two threads.
func scfSurface(t testing.TB, z []int, x []float64, method, basisName string) *gradient.SCFSurface {
	t.Helper()
	mol := &molecule.Molecule{}
	for i, zi := range z {
		mol.Atoms = append(mol.Atoms, molecule.Atom{Z: zi, Symbol: molecule.Symbol(zi), Mass: molecule.MostAbundantMass(zi),
			Position: [3]float64{x[3*i], x[3*i+1], x[3*i+2]}})
	}
	if err := mol.SetSpin(0, 0); err != nil {
		t.Fatal(err)
	}
	set, err := basis.Load(basisName)
	if err != nil {
		t.Fatal(err)
	}
	fn, err := xc.Lookup(method)
	if err != nil {
		t.Fatal(err)
	}
	s, err := gradient.NewSCFSurface(mol, gradient.Config{Basis: set, Method: fn, SCF: scf.Options{Threads: 2}})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// TestWaterPublishedMinima relaxes water at three levels of theory and
// compares with published minima (to 0.002 Å and 0.3°).
func TestWaterPublishedMinima(t *testing.T) {
	if testing.Short() {
		t.Skip("SCF relaxations")
	}
	// Experimental gas-phase structure as the start: r 0.9572 Å, 104.52°.
	z, x0 := build([]zrow{{z: 8}, {z: 1, a: 0, r: 0.9572}, {z: 1, a: 0, r: 0.9572, b: 1, theta: 104.52}})
	strict, _ := Convergence("strict")
	for _, c := range []struct {
		method, basis string
		rOH, angle    float64
	}{
		// From memory: standard ab initio reference tables (HF/STO-3G
		// water, e.g. Hehre, Radom, Schleyer, Pople, Ab Initio Molecular
		// Orbital Theory, 1986) and CCCBDB-style listings.
		{"hf", "sto-3g", 0.989, 100.0},
		{"hf", "6-31g*", 0.947, 105.5},
		{"b3lyp", "6-31g*", 0.969, 103.6},
	} {
		t.Run(c.method+"/"+c.basis, func(t *testing.T) {
			s := scfSurface(t, z, x0, c.method, c.basis)
			res, err := Relax(context.Background(), s, z, x0, Options{Criteria: strict})
			if err != nil {
				t.Fatal(err)
			}
			r1 := tdist(res.XBohr, 0, 1) * units.BohrAngstrom
			r2 := tdist(res.XBohr, 0, 2) * units.BohrAngstrom
			a := tangle(res.XBohr, 1, 0, 2) * 180 / math.Pi
			t.Logf("r(OH) %.4f %.4f Å, angle %.2f°, energy %.8f, %d steps, %d evaluations", r1, r2, a, res.EnergyHartree, res.Steps, res.Evaluations)
			if math.Abs(r1-c.rOH) > 0.002 || math.Abs(r2-c.rOH) > 0.002 {
				t.Errorf("r(OH) %.4f, %.4f Å, published %.3f", r1, r2, c.rOH)
			}
			if math.Abs(a-c.angle) > 0.3 {
				t.Errorf("angle %.2f°, published %.1f°", a, c.angle)
			}
		})
	}
}
