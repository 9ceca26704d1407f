package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"poise/energy/units"
)

const demoDir = "../../testdata/demo"

// reactionDir writes a reaction file and copies of the demo structures
// into a temporary directory and returns the reaction file's path.
func reactionDir(t *testing.T, text string, extra map[string]string) string {
	t.Helper()
	dir := t.TempDir()
	for _, name := range []string{"ethylene.xyz", "hydrogen.xyz", "ethane.xyz"} {
		data, err := os.ReadFile(filepath.Join(demoDir, name))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, name), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for name, s := range extra {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	p := filepath.Join(dir, "x.reaction")
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// TestReactionBadInput: every mistake in a reaction file is exit status 2
// with a clear message, nothing is printed on standard output, and the
// results store is not even created.
func TestReactionBadInput(t *testing.T) {
	decl := "species ethylene ethylene.xyz\nspecies hydrogen hydrogen.xyz\nspecies ethane ethane.xyz\n"
	cases := []struct {
		name, text string
		args       []string
		want       string
	}{
		{"unbalanced", decl + "reaction ethylene + 2 hydrogen -> ethane\n", nil, "H: 8 on the left, 6 on the right"},
		{"missing file", decl + "species water water.xyz\nreaction ethylene + hydrogen -> ethane\n", nil, "water.xyz"},
		{"duplicated species", decl + "species ethane ethane.xyz\nreaction ethylene + hydrogen -> ethane\n", nil, `species "ethane" declared twice`},
		{"unknown species", decl + "reaction ethylene + hydrogen -> propane\n", nil, `unknown species "propane"`},
		{"charge imbalance", decl + "species cation ethane.xyz charge 2\nreaction ethylene + hydrogen -> cation\n", nil, "charge: 0 on the left, 2 on the right"},
		{"syntax", decl + "reaction ethylene + hydrogen => ethane\n", nil, "x.reaction:4:"},
		{"charge flag", decl + "reaction ethylene + hydrogen -> ethane\n", []string{"--charge", "1"}, "per species"},
		{"temperature", decl + "reaction ethylene + hydrogen -> ethane\n", []string{"--temperature", "-5"}, "--temperature"},
		// 6-31+G* stops at Ar: the potassium structures are refused
		// before the hydrogen molecule is computed.
		{"basis coverage", "species hydrogen hydrogen.xyz\nspecies k k.xyz\nspecies kh kh.xyz\nreaction hydrogen + 2 k -> 2 kh\n",
			[]string{"--basis", "6-31+g*"}, "k.xyz"},
	}
	extra := map[string]string{"k.xyz": "1\npotassium atom\nK 0 0 0\n", "kh.xyz": "2\npotassium hydride\nK 0 0 0\nH 0 0 2.24\n"}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := reactionDir(t, c.text, extra)
			store := filepath.Join(t.TempDir(), "store")
			args := append([]string{"reaction", p, "--method", "hf", "--basis", "6-31g", "--store", store}, c.args...)
			out, errOut, code, _ := execCLI(t, false, args...)
			if code != exitUsage {
				t.Fatalf("exit %d, want %d; stderr %s", code, exitUsage, errOut)
			}
			if !strings.Contains(errOut, c.want) {
				t.Errorf("stderr %q does not contain %q", errOut, c.want)
			}
			if out != "" {
				t.Errorf("output on a failure: %q", out)
			}
			if _, err := os.Stat(store); !os.IsNotExist(err) {
				t.Errorf("the store was touched: %v", err)
			}
		})
	}
}

func reactionJSON(t *testing.T, args ...string) map[string]any {
	t.Helper()
	out, errOut, code, err := execCLI(t, false, append(args, "--json")...)
	if code != exitOK {
		t.Fatalf("exit %d: %v\n%s", code, err, errOut)
	}
	var rep map[string]any
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	return rep
}

// TestReactionCLI runs the demo reaction at HF/STO-3G (cheap): the JSON
// keys, the caution, the store reuse on a second run, and the conformer
// mixture of two identical ethane structures, whose mixture free energy
// is G − RT ln 2 exactly (two equal terms in −RT ln Σ exp(−G_i/RT)).
func TestReactionCLI(t *testing.T) {
	if testing.Short() {
		t.Skip("settles three molecules at HF/STO-3G")
	}
	ethane, err := os.ReadFile(filepath.Join(demoDir, "ethane.xyz"))
	if err != nil {
		t.Fatal(err)
	}
	p := reactionDir(t, "species ethylene ethylene.xyz\nspecies hydrogen hydrogen.xyz\n"+
		"species ethane ethane.xyz ethane-copy.xyz  # the same structure twice\n"+
		"reaction hydrogenation: ethylene + hydrogen -> ethane\n", map[string]string{"ethane-copy.xyz": string(ethane)})
	store := filepath.Join(t.TempDir(), "store")
	outDir := filepath.Join(t.TempDir(), "out")
	args := []string{"reaction", p, "--method", "hf", "--basis", "sto-3g", "--store", store, "--threads", "2"}
	rep := reactionJSON(t, append(args, "--out", outDir)...)
	if c, _ := rep["caution"].(string); !strings.Contains(c, "calorimetry") || !strings.Contains(c, "licensed practice") {
		t.Errorf("caution %q", c)
	}
	rxns := rep["reactions"].([]any)
	r := rxns[0].(map[string]any)
	if r["equation"] != "ethylene + hydrogen -> ethane" || r["name"] != "hydrogenation" {
		t.Errorf("reaction %v", r)
	}
	for _, k := range []string{"delta_e", "delta_zpe", "delta_h", "delta_g", "delta_g_mixture"} {
		kj, _ := r[k+"_kj_per_mol"].(float64)
		kcal, _ := r[k+"_kcal_per_mol"].(float64)
		if kj == 0 || math.Abs(kj/units.CalorieJoule-kcal) > 1e-9*math.Abs(kj) {
			t.Errorf("%s: %g kJ/mol, %g kcal/mol", k, kj, kcal)
		}
	}
	rt := units.GasConstant * 298.15 / 1000
	g, gm := r["delta_g_kj_per_mol"].(float64), r["delta_g_mixture_kj_per_mol"].(float64)
	if d := gm - (g - rt*math.Ln2); math.Abs(d) > 1e-6 {
		t.Errorf("ΔG_mix − (ΔG − RT ln 2) = %g kJ/mol", d)
	}
	lk := r["log10_equilibrium_constant"].(float64)
	if want := -r["delta_g_standard_kj_per_mol"].(float64) / rt / math.Ln10; math.Abs(lk-want) > 1e-9 {
		t.Errorf("log10 K %g, want %g", lk, want)
	}
	for _, f := range []string{"reaction.json", "ethane/summary.json", "ethane-2/summary.json", "hydrogen/hydrogen.modes.json"} {
		if _, err := os.Stat(filepath.Join(outDir, f)); err != nil {
			t.Errorf("--out: %v", err)
		}
	}
	// Second run: everything from the store, the same numbers.
	rep2 := reactionJSON(t, args...)
	for _, s := range rep2["species"].([]any) {
		for _, c := range s.(map[string]any)["conformers"].([]any) {
			if c.(map[string]any)["reused_from_store"] != true {
				t.Errorf("%v not reused", c)
			}
		}
	}
	if h2 := rep2["reactions"].([]any)[0].(map[string]any)["delta_h_kj_per_mol"]; h2 != r["delta_h_kj_per_mol"] {
		t.Errorf("second run ΔH %v, first %v", h2, r["delta_h_kj_per_mol"])
	}
	// Text output ends with the caution.
	out, _, code, err := execCLI(t, false, args...)
	if code != exitOK {
		t.Fatal(err)
	}
	if !strings.Contains(out, "ΔH (298.15 K)") || !strings.Contains(strings.TrimSpace(out[strings.LastIndex(out, "\n\n"):]), "caution: These are model estimates") {
		t.Errorf("text output:\n%s", out)
	}
}
