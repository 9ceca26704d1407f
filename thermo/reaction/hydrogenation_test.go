package reaction_test

import (
	"context"
	"math"
	"testing"

	"poise/energy/basis"
	"poise/energy/scf"
	"poise/energy/units"
	"poise/energy/xc"
	"poise/settle"
	"poise/thermo"
	"poise/thermo/reaction"
)

// TestHydrogenationB3LYP settles ethylene, hydrogen and ethane at
// B3LYP/6-31G* (default grid and SCF settings) from the demo structures
// and checks ΔH°(298.15 K) of C2H4 + H2 → C2H6 against −136.3 kJ/mol, from
// the gas-phase enthalpies of formation of ethane (−83.8 kJ/mol) and
// ethylene (+52.5 kJ/mol) (NIST-JANAF / CODATA-style tables; from memory),
// within 25 kJ/mol: a sanity band for the method, not a fit. It takes
// minutes on two cores (its own package keeps it off the command tests'
// time budget), so it does not run with -short.
func TestHydrogenationB3LYP(t *testing.T) {
	if testing.Short() {
		t.Skip("three B3LYP/6-31G* settles take minutes")
	}
	sys, err := reaction.Load("../../testdata/demo/hydrogenation.reaction")
	if err != nil {
		t.Fatal(err)
	}
	set, err := basis.Load("6-31g*")
	if err != nil {
		t.Fatal(err)
	}
	fn, err := xc.Lookup("b3lyp")
	if err != nil {
		t.Fatal(err)
	}
	lvl := settle.Level{Basis: set, Method: fn, SCF: scf.Options{Threads: 2}}
	opts := settle.DefaultOptions()
	species := map[string][]reaction.ConformerResult{}
	for name, mols := range sys.Molecules {
		for _, m := range mols {
			res, err := settle.Run(context.Background(), m, lvl, opts)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			if !res.Summary.Minimum() {
				t.Errorf("%s: verdict %q", name, res.Summary.Verdict)
			}
			species[name] = append(species[name], reaction.ConformerResult{
				Source: name, EnergyHartree: res.Summary.EnergyHartree, Input: res.Summary.ThermoInput()})
		}
	}
	ev, err := reaction.Evaluate(sys.Reactions, species,
		thermo.Conditions{TemperatureK: 298.15, PressurePa: units.StandardPressurePa}, thermo.Options{})
	if err != nil {
		t.Fatal(err)
	}
	r := ev.Reactions[0]
	dh := r.DeltaHHartree * units.HartreeKJPerMol
	const want = -83.8 - 52.5
	t.Logf("ΔH°(298.15 K) = %.2f kJ/mol, ΔE = %.2f, ΔZPE = %.2f, ΔG = %.2f (reference ΔH° %.1f)",
		dh, r.DeltaEHartree*units.HartreeKJPerMol, r.DeltaZPEHartree*units.HartreeKJPerMol, r.DeltaGHartree*units.HartreeKJPerMol, want)
	if math.Abs(dh-want) > 25 {
		t.Errorf("ΔH°(298.15 K) = %.1f kJ/mol, want %.1f ± 25", dh, want)
	}
}
