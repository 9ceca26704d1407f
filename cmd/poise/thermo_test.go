package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"poise/energy/units"
)

const (
	waterXYZ   = "../../testdata/molecules/water.xyz"
	waterModes = "../../testdata/thermo/water.modes.json"
	noModes    = "../../testdata/thermo/nitric-oxide.modes.json"
)

// runThermoCmd runs poise with args; it returns standard output, standard
// error and the exit status reportError would give.
func runThermoCmd(t *testing.T, args ...string) (string, string, int, error) {
	t.Helper()
	return execCLI(t, false, args...)
}

func thermoJSON(t *testing.T, args ...string) map[string]any {
	t.Helper()
	out, _, code, err := runThermoCmd(t, append(args, "--json")...)
	if code != exitOK {
		t.Fatalf("exit %d: %v", code, err)
	}
	var rep map[string]any
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	return rep
}

func num(t *testing.T, rep map[string]any, key string) float64 {
	t.Helper()
	v, ok := rep[key].(float64)
	if !ok {
		t.Fatalf("key %q missing or not a number: %v", key, rep[key])
	}
	return v
}

// TestThermoJSON checks the keys the issue fixes and the standard entropy
// and heat capacity of water and NO against NIST-JANAF / CODATA Key Values
// (from memory): H2O S° 188.83, Cp° 33.58; NO S° 210.76 J/(mol K).
func TestThermoJSON(t *testing.T) {
	cases := []struct {
		name      string
		args      []string
		pg        string
		sigma     float64
		s, sTol   float64
		cp, cpTol float64
		hasEnergy bool
	}{
		{"water xyz", []string{"thermo", "--xyz", waterXYZ, "--frequencies", "3657, 1595, 3756"}, "C2v", 2, 188.83, 0.3, 33.58, 0.3, false},
		{"water modes", []string{"thermo", waterModes}, "C2v", 2, 188.83, 0.3, 33.58, 0.3, true},
		{"NO modes", []string{"thermo", noModes, "--electronic-levels", "0:2,119.8:2"}, "C∞v", 1, 210.76, 0.2, 0, 0, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rep := thermoJSON(t, c.args...)
			for _, k := range []string{"point_group", "symmetry_number", "zero_point_energy_hartree", "enthalpy_correction_hartree",
				"gibbs_correction_hartree", "entropy_j_per_mol_k", "heat_capacity_cp_j_per_mol_k"} {
				if _, ok := rep[k]; !ok {
					t.Errorf("key %q missing", k)
				}
			}
			if rep["point_group"] != c.pg || num(t, rep, "symmetry_number") != c.sigma {
				t.Errorf("point group %v σ %v, want %s %g", rep["point_group"], rep["symmetry_number"], c.pg, c.sigma)
			}
			if s := num(t, rep, "entropy_j_per_mol_k"); math.Abs(s-c.s) > c.sTol {
				t.Errorf("S = %.3f, want %.2f ± %.1f", s, c.s, c.sTol)
			}
			if c.cpTol > 0 {
				if cp := num(t, rep, "heat_capacity_cp_j_per_mol_k"); math.Abs(cp-c.cp) > c.cpTol {
					t.Errorf("Cp = %.3f, want %.2f ± %.1f", cp, c.cp, c.cpTol)
				}
			}
			h := num(t, rep, "enthalpy_correction_hartree")
			g := num(t, rep, "gibbs_correction_hartree")
			s := num(t, rep, "entropy_j_per_mol_k")
			// G = H − TS (per molecule in hartree).
			if d := g - (h - 298.15*s/(units.HartreeKJPerMol*1000)); math.Abs(d) > 1e-12 {
				t.Errorf("G − (H − TS) = %g Eh", d)
			}
			_, has := rep["gibbs_energy_hartree"]
			if has != c.hasEnergy {
				t.Errorf("absolute G present %v, want %v", has, c.hasEnergy)
			}
			if c.hasEnergy && math.Abs(num(t, rep, "gibbs_energy_hartree")-(-76.0+g)) > 1e-12 {
				t.Errorf("absolute G %v, want E_el + correction", rep["gibbs_energy_hartree"])
			}
		})
	}
}

func TestThermoText(t *testing.T) {
	out, _, code, err := runThermoCmd(t, "thermo", "--xyz", waterXYZ, "--frequencies", "3657,1595,3756", "--energy", "-76.4", "--temperatures", "200:1000:100")
	if code != exitOK {
		t.Fatalf("exit %d: %v", code, err)
	}
	for _, want := range []string{"H2O", "point group C2v", "σ = 2", "asymmetric top", "rotational constants", "GHz",
		"contributions at 298.15 K", "translation", "vibration", "T (K)", "S trans", "H (Eh)", "G (Eh)", "1000", "zero-point energy"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	if strings.Contains(strings.ToLower(out), "sum of") {
		t.Error("the report uses 'sum of' lines")
	}
}

func TestThermoScanAndPlot(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "water.svg")
	rep := thermoJSON(t, "thermo", "--xyz", waterXYZ, "--frequencies", "3657,1595,3756", "--temperatures", "200:1000:100", "--plot", svg)
	scan, ok := rep["scan"].([]any)
	if !ok || len(scan) != 9 {
		t.Fatalf("scan has %d rows, want 9", len(scan))
	}
	// S rises with T.
	prev := 0.0
	for _, row := range scan {
		s := row.(map[string]any)["entropy_j_per_mol_k"].(float64)
		if s <= prev {
			t.Fatalf("entropy not increasing: %v after %v", s, prev)
		}
		prev = s
	}
	b, err := os.ReadFile(svg)
	if err != nil || !bytes.Contains(b, []byte("<svg")) {
		t.Fatalf("no SVG written: %v", err)
	}
	png := filepath.Join(dir, "water.png")
	if _, _, code, err := runThermoCmd(t, "thermo", waterModes, "--temperatures", "300,400,500", "--plot", png); code != exitOK {
		t.Fatalf("png: %v", err)
	}
	if b, err := os.ReadFile(png); err != nil || !bytes.HasPrefix(b, []byte("\x89PNG")) {
		t.Fatalf("no PNG written: %v", err)
	}
}

// TestThermoStandardStates: G(1 M) − G(1 atm) = 1.89 kcal/mol at 298.15 K
// (common practice, from memory).
func TestThermoStandardStates(t *testing.T) {
	atm := thermoJSON(t, "thermo", waterModes, "--standard-state", "1atm")
	molar := thermoJSON(t, "thermo", waterModes, "--standard-state", "1M")
	d := (num(t, molar, "gibbs_correction_hartree") - num(t, atm, "gibbs_correction_hartree")) * units.HartreeKcalPerMol
	if math.Abs(d-1.89) > 0.01 {
		t.Errorf("G(1 M) − G(1 atm) = %.4f kcal/mol, want 1.89", d)
	}
	if molar["standard_state"] != "1M" || atm["standard_state"] != "1atm" {
		t.Errorf("standard states %v %v", molar["standard_state"], atm["standard_state"])
	}
}

func TestThermoLowModesFlag(t *testing.T) {
	// A soft mode at 20 cm⁻¹ (CO2 with a fictitious bend): the quasi-harmonic
	// entropy is lower than the harmonic one.
	dir := t.TempDir()
	xyz := filepath.Join(dir, "co2.xyz")
	if err := os.WriteFile(xyz, []byte("3\nCO2\nC 0 0 0\nO 0 0 1.16\nO 0 0 -1.16\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	args := []string{"thermo", "--xyz", xyz, "--frequencies", "20,20,1333,2349"}
	harm := thermoJSON(t, args...)
	both := thermoJSON(t, append(args, "--low-modes")...)
	ent := thermoJSON(t, append(args, "--low-modes=entropy")...)
	if lm, ok := both["low_modes"].(map[string]any); !ok || lm["entropy"] != true || lm["enthalpy"] != true {
		t.Fatalf("--low-modes alone: %v", both["low_modes"])
	}
	if !(num(t, both, "entropy_j_per_mol_k") < num(t, harm, "entropy_j_per_mol_k")) {
		t.Error("quasi-harmonic entropy not below the harmonic one for a 20 cm⁻¹ mode")
	}
	if num(t, ent, "enthalpy_correction_hartree") != num(t, harm, "enthalpy_correction_hartree") {
		t.Error("--low-modes=entropy changed the enthalpy")
	}
	if num(t, ent, "entropy_j_per_mol_k") != num(t, both, "entropy_j_per_mol_k") {
		t.Error("entropy differs between entropy and both")
	}
}

func TestThermoImaginaryWarning(t *testing.T) {
	out, errOut, code, err := runThermoCmd(t, "thermo", "--xyz", waterXYZ, "--frequencies", "-300,3657,3756", "--json")
	if code != exitOK {
		t.Fatalf("exit %d: %v", code, err)
	}
	if !strings.Contains(errOut, "imaginary") || !strings.Contains(out, "-300") {
		t.Errorf("no warning about the imaginary mode: %q", errOut)
	}
}

func TestThermoUsageErrors(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.json")
	os.WriteFile(bad, []byte(`{"symbols": ["O", "H"], "geometry_angstrom": [[0,0,0]]}`), 0o644)
	unknown := filepath.Join(dir, "unknown.json")
	os.WriteFile(unknown, []byte(`{"symbols": ["Xx"], "geometry_angstrom": [[0,0,0]], "frequencies_cm1": []}`), 0o644)
	w := []string{"--xyz", waterXYZ, "--frequencies", "3657,1595,3756"}
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"no input", []string{"thermo"}, "--xyz"},
		{"both inputs", append([]string{"thermo", waterModes}, w...), "not both"},
		{"xyz without frequencies", []string{"thermo", "--xyz", waterXYZ}, "--frequencies"},
		{"frequencies with modes file", []string{"thermo", waterModes, "--frequencies", "1,2,3"}, "--xyz"},
		{"too few frequencies", []string{"thermo", "--xyz", waterXYZ, "--frequencies", "3657,1595"}, "3 vibrational wavenumbers"},
		{"not a number", []string{"thermo", "--xyz", waterXYZ, "--frequencies", "3657,abc,3756"}, `"abc"`},
		{"bad levels", append([]string{"thermo", "--electronic-levels", "0:2,119.8"}, w...), "WAVENUMBER:DEGENERACY"},
		{"bad state", append([]string{"thermo", "--standard-state", "2M"}, w...), "1bar, 1atm or 1M"},
		{"pressure and atm", append([]string{"thermo", "--standard-state", "1atm", "--pressure", "2"}, w...), "--pressure"},
		{"negative temperature", append([]string{"thermo", "--temperature", "-5"}, w...), "positive temperature"},
		{"bad scan", append([]string{"thermo", "--temperatures", "1000:200:100"}, w...), "FROM ≤ TO"},
		{"plot without scan", append([]string{"thermo", "--plot", filepath.Join(dir, "x.svg")}, w...), "--temperatures"},
		{"plot format", append([]string{"thermo", "--temperatures", "200:300:50", "--plot", filepath.Join(dir, "x.gif")}, w...), ".svg or .png"},
		{"low modes", append([]string{"thermo", "--low-modes=maybe"}, w...), "both, entropy"},
		{"multiplicity", append([]string{"thermo", "--multiplicity", "0"}, w...), "2S+1"},
		{"bad modes file", []string{"thermo", bad}, "geometry_angstrom"},
		{"unknown element", []string{"thermo", unknown}, `"Xx"`},
		{"missing file", []string{"thermo", filepath.Join(dir, "none.json")}, "none.json"},
		{"missing xyz", []string{"thermo", "--xyz", filepath.Join(dir, "none.xyz"), "--frequencies", "1"}, "none.xyz"},
		{"two files", []string{"thermo", waterModes, noModes}, "arg"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, _, code, err := runThermoCmd(t, c.args...)
			if code != exitUsage {
				t.Fatalf("exit %d, want %d (%v)", code, exitUsage, err)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %q does not mention %q", err, c.want)
			}
		})
	}
}
