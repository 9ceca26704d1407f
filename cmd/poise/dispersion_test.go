package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// validationXYZ is the 16-atom D3 validation structure (published
// validation data of the simple-dftd3 library, copied into the package
// testdata of energy/dispersion).
const validationXYZ = "../../energy/dispersion/testdata/case-16-atoms.xyz"

// TestDispersionJSON checks the JSON contract of issue 12
// (dispersion_energy_hartree, per-atom arrays, gradient) on the validation
// case: −0.073515758 Eh with the olyp parameters (simple-dftd3 validation
// data), and the kJ/mol value with 1 Eh = 2625.4996394799 kJ/mol (CODATA
// 2018).
func TestDispersionJSON(t *testing.T) {
	out, code, err := runCLI(t, "dispersion", validationXYZ, "--functional", "OLYP", "--json")
	if code != exitOK {
		t.Fatalf("exit %d: %v\n%s", code, err, out)
	}
	var rep map[string]any
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	e, ok := rep["dispersion_energy_hartree"].(float64)
	if !ok {
		t.Fatalf("dispersion_energy_hartree missing: %v", rep["dispersion_energy_hartree"])
	}
	if math.Abs(e-(-0.073515758)) > 1e-7 {
		t.Errorf("dispersion energy %.10f Eh, published −0.073515758", e)
	}
	if kj := rep["dispersion_energy_kj_per_mol"].(float64); math.Abs(kj-e*2625.4996394799) > 1e-6 {
		t.Errorf("%.6f kJ/mol for %.10f Eh", kj, e)
	}
	if rep["functional"] != "olyp" {
		t.Errorf("functional %v, want olyp", rep["functional"])
	}
	for _, key := range []string{"coordination_numbers", "c6_hartree_bohr6", "symbols", "geometry_angstrom"} {
		if l, ok := rep[key].([]any); !ok || len(l) != 16 {
			t.Errorf("%s: %v is not a list of 16", key, rep[key])
		}
	}
	g := gradientOf(t, rep)
	if len(g) != 16 {
		t.Fatalf("%d gradient rows for 16 atoms", len(g))
	}
	// First row of the published gradient (case-16-atoms.json).
	want := []float64{0.0006211300118063577, 0.0015153659716303529, 0.0018741160970768328}
	for k := range want {
		if math.Abs(g[0][k]-want[k]) > 1e-7 {
			t.Errorf("atom 1 %c: %.10f, published %.10f", "xyz"[k], g[0][k], want[k])
		}
	}
}

// TestDispersionText checks the human-readable report: energy line in Eh
// and kJ/mol and one table row per atom.
func TestDispersionText(t *testing.T) {
	out, code, err := runCLI(t, "dispersion", "../../testdata/molecules/benzene.xyz", "--functional", "b3lyp5")
	if code != exitOK {
		t.Fatalf("exit %d: %v\n%s", code, err, out)
	}
	for _, want := range []string{"C6H6", "b3lyp5 damping", "dispersion energy -0.0", "kJ/mol", "coordination number", "C6 (Eh·bohr⁶)", "RMS"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	if n := strings.Count(out, "│       C │") + strings.Count(out, "│       H │"); n != 12 {
		t.Errorf("%d atom rows, want 12:\n%s", n, out)
	}
}

// TestDispersionUsageErrors: every user mistake exits with status 2 and a
// message that says what to change.
func TestDispersionUsageErrors(t *testing.T) {
	bad := writeFile(t, "bad.xyz", "2\n\nH 0 0 0\nH 0 0\n")
	cases := []struct {
		name string
		args []string
		msg  string
	}{
		{"no functional", []string{"dispersion", validationXYZ}, "give --functional"},
		{"unknown functional", []string{"dispersion", validationXYZ, "--functional", "m06-2x"}, "hf, blyp, b3lyp, b3lyp5, pbe, pbe0, olyp"},
		{"missing file", []string{"dispersion", "no-such-file.xyz", "--functional", "pbe"}, "no-such-file.xyz"},
		{"malformed file", []string{"dispersion", bad, "--functional", "pbe"}, "bad.xyz:4"},
		{"no file", []string{"dispersion", "--functional", "pbe"}, "usage"},
		{"two files", []string{"dispersion", validationXYZ, validationXYZ, "--functional", "pbe"}, "usage"},
		{"unknown flag", []string{"dispersion", validationXYZ, "--functional", "pbe", "--basis", "sto-3g"}, "unknown flag"},
	}
	for _, c := range cases {
		_, code, err := runCLI(t, c.args...)
		if code != exitUsage {
			t.Errorf("%s: exit %d (%v), want %d", c.name, code, err, exitUsage)
			continue
		}
		if err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.msg)
		}
	}
}
