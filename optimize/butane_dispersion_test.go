package optimize_test

import (
	"context"
	"testing"

	"poise/energy/basis"
	"poise/energy/dispersion"
	"poise/energy/molecule"
	"poise/energy/units"
	"poise/energy/xc"
	"poise/gradient"
	"poise/optimize"
)

// TestButaneConformersWithDispersion relaxes n-butane gauche and anti at
// HF/3-21G with and without the D3(BJ) correction. Dispersion favours the
// more compact gauche conformer, so the gauche − anti energy difference
// must shrink with the correction (the project's dispersion check; the
// direction is common practice, e.g. Grimme et al., J. Chem. Phys. 132,
// 154104 (2010)).
func TestButaneConformersWithDispersion(t *testing.T) {
	if testing.Short() {
		t.Skip("four relaxations")
	}
	set, err := basis.Load("3-21g")
	if err != nil {
		t.Fatal(err)
	}
	hf, _ := xc.Lookup("hf")
	d3, err := dispersion.ParamsFor("hf")
	if err != nil {
		t.Fatal(err)
	}
	crit, _ := optimize.Convergence("report")
	relax := func(file string, disp *dispersion.Params) float64 {
		m, err := molecule.ReadXYZFile("../testdata/molecules/" + file)
		if err != nil {
			t.Fatal(err)
		}
		if err := m.SetSpin(0, 0); err != nil {
			t.Fatal(err)
		}
		s, err := gradient.NewSCFSurface(m, gradient.Config{Basis: set, Method: hf, Dispersion: disp})
		if err != nil {
			t.Fatal(err)
		}
		z := make([]int, len(m.Atoms))
		for i, a := range m.Atoms {
			z[i] = a.Z
		}
		res, err := optimize.Relax(context.Background(), s, z, gradient.Coordinates(m), optimize.Options{Criteria: crit, MaxSteps: 60})
		if err != nil {
			t.Fatalf("%s: %v", file, err)
		}
		if !res.Converged {
			t.Fatalf("%s: not converged", file)
		}
		return res.EnergyHartree
	}
	plain := relax("butane-gauche.xyz", nil) - relax("butane-anti.xyz", nil)
	corrected := relax("butane-gauche.xyz", &d3) - relax("butane-anti.xyz", &d3)
	t.Logf("gauche − anti: %.3f kJ/mol without, %.3f kJ/mol with D3(BJ)", plain*units.HartreeKJPerMol, corrected*units.HartreeKJPerMol)
	if !(corrected < plain) {
		t.Errorf("gauche − anti %.6f Eh with D3(BJ), %.6f without: the correction should favour gauche", corrected, plain)
	}
}
