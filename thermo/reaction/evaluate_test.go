package reaction

import (
	"math"
	"testing"

	"poise/energy/units"
	"poise/thermo"
	"poise/thermo/pointgroup"
)

// atomAt builds a thermo atom at a position in ångström.
func atomAt(label string, massU, x, y, z float64) pointgroup.Atom {
	return pointgroup.Atom{Label: label, Mass: massU, Position: [3]float64{x * units.AngstromBohr, y * units.AngstromBohr, z * units.AngstromBohr}}
}

// Masses of the most abundant isotopes, u (AME2016 / IUPAC, from memory).
const (
	massH = 1.00782503
	massN = 14.00307401
)

// Experimental molecules of the ammonia synthesis N2 + 3 H2 → 2 NH3.
// Geometries and wavenumbers:
//   - H2: r_e 0.7414 Å, ω_e 4401.2 cm⁻¹ (K. P. Huber and G. Herzberg,
//     Constants of Diatomic Molecules, 1979; from memory).
//   - N2: r_e 1.0977 Å, ω_e 2358.6 cm⁻¹ (same source, from memory).
//   - NH3: r(NH) 1.012 Å, ∠HNH 106.7°; fundamentals ν1 3337, ν2 950
//     (mean of the inversion doublet), ν3 3444 (e), ν4 1627 (e) cm⁻¹
//     (T. Shimanouchi, Tables of Molecular Vibrational Frequencies,
//     NSRDS-NBS 39, 1972; from memory).
//
// The electronic energies are arbitrary (they cancel in the checks that
// use them).
func ammoniaSpecies() map[string][]ConformerResult {
	h2 := thermo.Input{Atoms: []pointgroup.Atom{atomAt("H", massH, 0, 0, 0.3707), atomAt("H", massH, 0, 0, -0.3707)},
		FrequenciesCm1: []float64{4401.2}, Multiplicity: 1}
	n2 := thermo.Input{Atoms: []pointgroup.Atom{atomAt("N", massN, 0, 0, 0.54885), atomAt("N", massN, 0, 0, -0.54885)},
		FrequenciesCm1: []float64{2358.6}, Multiplicity: 1}
	// NH3 with C3 along z: H at distance ρ from the axis, height h below N.
	r, theta := 1.012, 106.7*math.Pi/180
	hh := 2 * r * math.Sin(theta/2) // H–H distance
	rho := hh / math.Sqrt(3)
	h := math.Sqrt(r*r - rho*rho)
	var nh3 thermo.Input
	nh3.Atoms = append(nh3.Atoms, atomAt("N", massN, 0, 0, 0))
	for k := 0; k < 3; k++ {
		phi := 2 * math.Pi * float64(k) / 3
		nh3.Atoms = append(nh3.Atoms, atomAt("H", massH, rho*math.Cos(phi), rho*math.Sin(phi), -h))
	}
	nh3.FrequenciesCm1 = []float64{950, 1627, 1627, 3337, 3444, 3444}
	nh3.Multiplicity = 1
	return map[string][]ConformerResult{
		"hydrogen": {{Source: "h2", EnergyHartree: -1.17, Input: h2}},
		"nitrogen": {{Source: "n2", EnergyHartree: -109.5, Input: n2}},
		"ammonia":  {{Source: "nh3", EnergyHartree: -56.5, Input: nh3}},
	}
}

var haber = Reaction{Name: "haber",
	Reactants: []Term{{1, "nitrogen"}, {3, "hydrogen"}},
	Products:  []Term{{2, "ammonia"}}}

func evalAt(t *testing.T, sp map[string][]ConformerResult, r Reaction, tK, pBar float64) ReactionValue {
	t.Helper()
	res, err := Evaluate([]Reaction{r}, sp, thermo.Conditions{TemperatureK: tK, PressurePa: pBar * units.StandardPressurePa}, thermo.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return res.Reactions[0]
}

// TestKirchhoff checks Kirchhoff's law ΔH(T2) − ΔH(T1) = ∫ ΔCp dT for the
// ammonia synthesis with plain RRHO, to 0.01 kJ/mol (issue 8), by
// composite Simpson quadrature with 2000 intervals.
func TestKirchhoff(t *testing.T) {
	sp := ammoniaSpecies()
	for _, span := range [][2]float64{{298.15, 500}, {298.15, 1000}, {100, 298.15}} {
		t1, t2 := span[0], span[1]
		const n = 2000
		step := (t2 - t1) / n
		sum := 0.0
		for i := 0; i <= n; i++ {
			w := 2.0
			switch {
			case i == 0 || i == n:
				w = 1
			case i%2 == 1:
				w = 4
			}
			sum += w * evalAt(t, sp, haber, t1+float64(i)*step, 1).DeltaCpJPerMolK
		}
		integralKJ := sum * step / 3 / 1000
		dH := (evalAt(t, sp, haber, t2, 1).DeltaHHartree - evalAt(t, sp, haber, t1, 1).DeltaHHartree) * units.HartreeKJPerMol
		t.Logf("%g → %g K: ΔH(T2) − ΔH(T1) = %.6f kJ/mol, ∫ΔCp dT = %.6f kJ/mol", t1, t2, dH, integralKJ)
		if math.Abs(dH-integralKJ) > 0.01 {
			t.Errorf("%g → %g K: ΔH difference %.5f kJ/mol, ∫ΔCp dT %.5f kJ/mol", t1, t2, dH, integralKJ)
		}
		// The change is not trivially zero: ΔCp of the synthesis is
		// about −45 J/(mol K) at 298 K (NIST-JANAF Cp°: NH3 35.6,
		// N2 29.1, H2 28.8; from memory), so ΔH moves by kJ/mol.
		if math.Abs(dH) < 1 {
			t.Errorf("%g → %g K: ΔH changes by only %.4f kJ/mol", t1, t2, dH)
		}
	}
	// Against tables: ΔfH°(NH3) is −45.90 kJ/mol at 298.15 K, −49.86 at
	// 500 K and −55.01 at 1000 K (NIST-JANAF Thermochemical Tables, 4th
	// ed., 1998; from memory), so ΔrH = 2 ΔfH°(NH3) changes by −7.92 kJ/mol
	// from 298.15 to 500 K and by −18.22 kJ/mol to 1000 K. RRHO with
	// fundamentals and no anharmonicity: allow 1 kJ/mol.
	for _, c := range []struct{ t2, want float64 }{{500, 2 * (-49.86 + 45.90)}, {1000, 2 * (-55.01 + 45.90)}} {
		dH := (evalAt(t, sp, haber, c.t2, 1).DeltaHHartree - evalAt(t, sp, haber, 298.15, 1).DeltaHHartree) * units.HartreeKJPerMol
		if math.Abs(dH-c.want) > 1 {
			t.Errorf("ΔH(%g K) − ΔH(298.15 K) = %.2f kJ/mol, tables %.2f", c.t2, dH, c.want)
		}
	}
	// ΔCp at 298.15 K against the tabulated heat capacities above
	// (2·35.6 − 29.1 − 3·28.8 = −44.3 J/(mol K)); the model's H2 is the
	// classical rotor, so allow 2 J/(mol K).
	if d := evalAt(t, sp, haber, 298.15, 1).DeltaCpJPerMolK; math.Abs(d-(-44.3)) > 2 {
		t.Errorf("ΔCp(298.15 K) = %.2f J/(mol K), want −44.3 ± 2", d)
	}
}

// TestQuantities checks ΔE, ΔZPE, the pressure dependence of ΔG for an
// ideal gas (Δn RT ln(p/p°), exact) and K = exp(−ΔG°/RT) at p°.
func TestQuantities(t *testing.T) {
	sp := ammoniaSpecies()
	v1 := evalAt(t, sp, haber, 298.15, 1)
	if want := 2*(-56.5) - (-109.5) - 3*(-1.17); math.Abs(v1.DeltaEHartree-want) > 1e-12 {
		t.Errorf("ΔE = %.12f, want %.12f", v1.DeltaEHartree, want)
	}
	// ΔZPE from the wavenumbers: ½hc Σν per molecule.
	zpe := func(nu ...float64) float64 {
		s := 0.0
		for _, x := range nu {
			s += x
		}
		return s / 2 / units.HartreeWavenumber
	}
	wantZPE := 2*zpe(950, 1627, 1627, 3337, 3444, 3444) - zpe(2358.6) - 3*zpe(4401.2)
	if math.Abs(v1.DeltaZPEHartree-wantZPE) > 1e-12 {
		t.Errorf("ΔZPE = %.10f, want %.10f", v1.DeltaZPEHartree, wantZPE)
	}
	v10 := evalAt(t, sp, haber, 298.15, 10)
	rt := units.GasConstant * 298.15 / 1000 // kJ/mol
	dn := -2.0
	shift := (v10.DeltaGHartree - v1.DeltaGHartree) * units.HartreeKJPerMol
	if want := dn * rt * math.Log(10); math.Abs(shift-want) > 1e-9 {
		t.Errorf("ΔG(10 bar) − ΔG(1 bar) = %.10f kJ/mol, want Δn RT ln 10 = %.10f", shift, want)
	}
	if math.Abs(v10.DeltaHHartree-v1.DeltaHHartree) > 1e-12 { // rounding only
		t.Error("ΔH depends on pressure")
	}
	if math.Abs(v10.Log10K-v1.Log10K) > 1e-9 {
		t.Errorf("K depends on the pressure asked: log10 K %g vs %g", v10.Log10K, v1.Log10K)
	}
	lnK := -v1.DeltaGHartree * units.HartreeKJPerMol / rt
	if math.Abs(v1.Log10K*math.Ln10-lnK) > 1e-9 {
		t.Errorf("ln K = %g, want −ΔG°/RT = %g", v1.Log10K*math.Ln10, lnK)
	}
	if math.Abs(math.Log(v1.K())-lnK) > 1e-9 {
		t.Errorf("K() = %g, want exp(%g)", v1.K(), lnK)
	}
}

// TestMixtureIdentical: two identical conformers give G_mix = G − RT ln 2
// exactly (statistical mechanics of a doubly degenerate minimum), and
// populations ½.
func TestMixtureIdentical(t *testing.T) {
	sp := ammoniaSpecies()
	one := evalAt(t, sp, haber, 298.15, 1)
	a := sp["ammonia"][0]
	b := a
	b.Source = "nh3 copy"
	sp["ammonia"] = []ConformerResult{a, b}
	res, err := Evaluate([]Reaction{haber}, sp, thermo.DefaultConditions(), thermo.Options{})
	if err != nil {
		t.Fatal(err)
	}
	s, _ := res.Lookup("ammonia")
	g := s.Best().GibbsHartree
	rt := units.Boltzmann * 298.15 / units.HartreeJoule
	if d := s.GibbsMixHartree - (g - rt*math.Ln2); math.Abs(d) > 1e-12 {
		t.Errorf("G_mix − (G − RT ln 2) = %g hartree", d)
	}
	for i, c := range s.Conformers {
		if math.Abs(c.Population-0.5) > 1e-15 {
			t.Errorf("population %d = %g", i, c.Population)
		}
	}
	two := res.Reactions[0]
	if two.DeltaGHartree != one.DeltaGHartree {
		t.Error("ΔG changed with a duplicate conformer; it should use the lowest-G one")
	}
	if d := two.DeltaGMixHartree - (one.DeltaGHartree - 2*rt*math.Ln2); math.Abs(d) > 1e-12 {
		t.Errorf("ΔG_mix off by %g hartree", d)
	}
}

func TestMixtureGibbs(t *testing.T) {
	const kt = 0.001
	cases := []struct {
		g    []float64
		want float64
	}{
		{[]float64{-1}, -1},
		{[]float64{-1, -1, -1}, -1 - kt*math.Log(3)},
		// Far-apart energies: the high one adds exp(−1000), nothing.
		{[]float64{-100, -99}, -100},
		// Values that would overflow exp without the shift.
		{[]float64{-1000, -1000 + kt*math.Ln2}, -1000 - kt*math.Log(1.5)},
	}
	for _, c := range cases {
		got, pop := MixtureGibbs(c.g, kt)
		if math.Abs(got-c.want) > 1e-12 {
			t.Errorf("%v: %.15g, want %.15g", c.g, got, c.want)
		}
		s := 0.0
		for _, p := range pop {
			s += p
		}
		if math.Abs(s-1) > 1e-14 {
			t.Errorf("%v: populations sum to %g", c.g, s)
		}
	}
}

// TestLowestConformer: the species is represented by the conformer of
// lowest G, not of lowest E, and ΔE follows it.
func TestLowestConformer(t *testing.T) {
	sp := ammoniaSpecies()
	lowE := sp["ammonia"][0]
	lowG := lowE
	// 1 mhartree higher electronic energy but much softer modes, so a
	// lower ZPE and a higher entropy: lower G (checked below).
	lowG.EnergyHartree += 0.001
	lowG.Input.FrequenciesCm1 = []float64{100, 150, 150, 3337, 3444, 3444}
	lowG.Source = "soft"
	sp["ammonia"] = []ConformerResult{lowE, lowG}
	res, err := Evaluate([]Reaction{haber}, sp, thermo.DefaultConditions(), thermo.Options{})
	if err != nil {
		t.Fatal(err)
	}
	s, _ := res.Lookup("ammonia")
	if s.Conformers[1].GibbsHartree >= s.Conformers[0].GibbsHartree {
		t.Fatalf("test set-up: G %v", s.Conformers)
	}
	if s.Lowest != 1 || s.Best().Source != "soft" {
		t.Errorf("lowest = %d", s.Lowest)
	}
	if want := 2*(-56.499) - (-109.5) - 3*(-1.17); math.Abs(res.Reactions[0].DeltaEHartree-want) > 1e-12 {
		t.Errorf("ΔE = %.12f, want %.12f (of the lowest-G conformer)", res.Reactions[0].DeltaEHartree, want)
	}
}

func TestEvaluateErrors(t *testing.T) {
	sp := ammoniaSpecies()
	delete(sp, "ammonia")
	if _, err := Evaluate([]Reaction{haber}, sp, thermo.DefaultConditions(), thermo.Options{}); err == nil {
		t.Error("missing species accepted")
	}
	if _, err := Evaluate(nil, sp, thermo.DefaultConditions(), thermo.Options{}); err == nil {
		t.Error("no reactions accepted")
	}
	sp = ammoniaSpecies()
	if _, err := Evaluate([]Reaction{haber}, sp, thermo.Conditions{TemperatureK: -1, PressurePa: 1e5}, thermo.Options{}); err == nil {
		t.Error("negative temperature accepted")
	}
}
